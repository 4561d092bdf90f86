#!/usr/bin/env python3
"""Vectorised NumPy Monte Carlo of the same physics as two tether-risk cases, written the way
a user who scripts it themselves would (not a dependency of the crate; run by
benches/compare_numpy.sh, which times it as a whole process).

Case a (no repair, equal sharing, fraction-of-width cut rule, physical environment):
    The per-bay rates come from `tether-risk profile FILE --format json`, so both sides use
    identical physics: bay j of N ribbons is struck by particles able to sever a ribbon
    (diameter >= fraction x width) at `damaging_strike_rate_per_year` (all ribbons of the
    bay), i.e. lambda_j = rate_j / N per segment. Under the fraction rule a strike below the
    threshold removes nothing and one above it cuts the segment whatever its load, so the
    segments of a bay are cut independently; the bay is lost when k_j segments are cut, k_j
    being the first ribbon count whose `critical_hole_width_mm` is 0 (equal sharing: the
    remaining ribbons are overloaded). Without repair only the final state matters.
    Two vectorisations:
      dense  - draw Binomial(N, 1 - exp(-lambda_j T)) cuts for every (history, bay);
               cost per history ~ number of bays;
      sparse - draw the number of cuts per history (Poisson, total rate x T), assign each cut
               to a segment by its rate (searchsorted on the cumulative rates), drop repeated
               hits of one segment, count distinct cut segments per (history, bay);
               cost per history ~ number of cuts (the analogue of the on-demand sampler).
    Exact answer for comparison: P = 1 - prod_j P(Binomial(N, p_j) < k_j).

Case b (one bay, 5 ribbons, 1-of-5, constant cut rate per segment, exponential repair with
one crew): a vectorised continuous-time Markov chain over all histories at once (one step =
one event of every history still running). Exact answer: the absorption probability from
the chain's generator (matrix exponential by scaling and squaring).

Output: one JSON object on stdout (loss probability, Clopper-Pearson-free normal and Wilson
intervals, exact value, events, wall time inside the script).
"""

import argparse
import json
import math
import sys
import time

import numpy as np

SECONDS_PER_YEAR = 365.25 * 86400.0


def wilson(k, n, z=1.959963984540054):
    p = k / n
    d = 1 + z * z / n
    c = (p + z * z / (2 * n)) / d
    h = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / d
    return max(0.0, c - h), min(1.0, c + h)


def bays_from_profile(path):
    with open(path) as f:
        prof = json.load(f)
    rates, ks, ns = [], [], []
    for b in prof["bays"]:
        crit = b["critical_hole_width_mm"]
        n = len(crit)
        k = next((i for i, c in enumerate(crit) if c <= 0.0), n)
        rates.append(b["damaging_strike_rate_per_year"])
        ks.append(k)
        ns.append(n)
    return np.array(rates), np.array(ks), np.array(ns)


def case_a_exact(rates, ks, ns, years):
    log_surv = 0.0
    for r, k, n in zip(rates, ks, ns):
        p = -math.expm1(-r / n * years)
        s = sum(math.comb(int(n), i) * p**i * (1 - p) ** (n - i) for i in range(int(k)))
        log_surv += math.log(s)
    return -math.expm1(log_surv)


def case_a_dense(rates, ks, ns, years, histories, rng, chunk=2000):
    p = -np.expm1(-rates / ns * years)
    losses = 0
    draws = 0
    done = 0
    while done < histories:
        m = min(chunk, histories - done)
        cuts = rng.binomial(ns, p, size=(m, len(rates)))
        losses += int(np.count_nonzero((cuts >= ks).any(axis=1)))
        draws += cuts.size
        done += m
    return losses, draws


def case_a_sparse(rates, ks, ns, years, histories, rng, chunk=200_000):
    n = int(ns[0])
    assert (ns == n).all(), "sparse case assumes one ribbon count"
    seg_rate = np.repeat(rates / n, n)  # segment s = bay * n + ribbon
    cum = np.cumsum(seg_rate)
    total = cum[-1]
    cum /= total
    nseg = len(seg_rate)
    losses = 0
    events = 0
    done = 0
    while done < histories:
        m = min(chunk, histories - done)
        per_history = rng.poisson(total * years, size=m)
        c = int(per_history.sum())
        events += c
        owner = np.repeat(np.arange(m, dtype=np.int64), per_history)
        seg = np.searchsorted(cum, rng.random(c), side="right")
        seg = np.minimum(seg, nseg - 1)
        # distinct cut segments per history, then cut count per (history, bay)
        key = np.unique(owner * nseg + seg)
        hb = (key // nseg) * len(rates) + (key % nseg) // n
        bay_keys, counts = np.unique(hb, return_counts=True)
        lost_bays = bay_keys[counts >= ks[bay_keys % len(rates)]]
        losses += int(len(np.unique(lost_bays // len(rates))))
        done += m
    return losses, events


def case_b_exact(n, lam, mu, crews, required, t):
    # States 0..n cut; absorbing when fewer than `required` intact (cut > n - required).
    fail = n - required + 1
    q = np.zeros((fail + 1, fail + 1))
    for k in range(fail):
        up = (n - k) * lam
        down = mu * min(crews, k)
        q[k, k + 1] = up
        if k > 0:
            q[k, k - 1] = down
        q[k, k] = -(up + down)
    a = q * t
    s = max(0, int(math.ceil(math.log2(max(1e-300, np.abs(a).sum(axis=1).max())))) + 4)
    a = a / 2**s
    e = np.eye(fail + 1)
    term = np.eye(fail + 1)
    for i in range(1, 30):
        term = term @ a / i
        e = e + term
    for _ in range(s):
        e = e @ e
    return float(e[0, fail])


def case_b_mc(n, lam, mu, crews, required, t, histories, rng):
    fail = n - required + 1
    k = np.zeros(histories, dtype=np.int64)
    now = np.zeros(histories)
    alive = np.arange(histories)
    events = 0
    lost = 0
    while alive.size:
        kk = k[alive]
        up = (n - kk) * lam
        down = mu * np.minimum(crews, kk)
        rate = up + down
        now[alive] += rng.exponential(1.0, alive.size) / rate
        running = now[alive] <= t
        alive = alive[running]
        up, rate = up[running], rate[running]
        events += alive.size
        step = np.where(rng.random(alive.size) * rate < up, 1, -1)
        k[alive] += step
        dead = k[alive] >= fail
        lost += int(np.count_nonzero(dead))
        alive = alive[~dead]
    return lost, events


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("case", choices=["a-dense", "a-sparse", "b"])
    ap.add_argument("--profile", help="tether-risk profile --format json output (case a)")
    ap.add_argument("--years", type=float, default=15.0)
    ap.add_argument("--histories", type=int, required=True)
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument("--ribbons", type=int, default=5)
    ap.add_argument("--cut-rate-per-day", type=float, default=0.01)
    ap.add_argument("--repair-rate-per-day", type=float, default=0.05)
    ap.add_argument("--crews", type=int, default=1)
    ap.add_argument("--required", type=int, default=1)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    t0 = time.perf_counter()
    if a.case.startswith("a"):
        if not a.profile:
            sys.exit("case a needs --profile FILE")
        rates, ks, ns = bays_from_profile(a.profile)
        t_build = time.perf_counter()
        if a.case == "a-dense":
            losses, events = case_a_dense(rates, ks, ns, a.years, a.histories, rng)
            unit = "binomial draws (history x bay)"
        else:
            losses, events = case_a_sparse(rates, ks, ns, a.years, a.histories, rng)
            unit = "cuts"
        t_run = time.perf_counter()
        exact = case_a_exact(rates, ks, ns, a.years)
    else:
        t_build = time.perf_counter()
        days = a.years * 365.25
        losses, events = case_b_mc(
            a.ribbons, a.cut_rate_per_day, a.repair_rate_per_day, a.crews, a.required,
            days, a.histories, rng,
        )
        unit = "state changes (cuts and repairs)"
        t_run = time.perf_counter()
        exact = case_b_exact(
            a.ribbons, a.cut_rate_per_day, a.repair_rate_per_day, a.crews, a.required, days
        )
    lo, hi = wilson(losses, a.histories)
    print(json.dumps({
        "case": a.case,
        "histories": a.histories,
        "losses": losses,
        "loss_probability": losses / a.histories,
        "wilson_95": [lo, hi],
        "exact": exact,
        "events": events,
        "event_unit": unit,
        "setup_s": t_build - t0,
        "run_s": t_run - t_build,
        "ns_per_event": 1e9 * (t_run - t_build) / max(1, events),
        "numpy": np.__version__,
    }))


if __name__ == "__main__":
    main()
