#!/usr/bin/env python3
"""Work-normalised efficiency of `simulate --condition-cascades` against plain Monte Carlo.

    python3 benches/rare_event_efficiency.py [--quick]

Efficiency = (variance x CPU time of plain Monte Carlo) / (variance x CPU time of the
conditioned run), each per history, both whole processes on one thread, measured here one
after the other. The plain variance is the binomial p(1 - p)/N at the best available p (the
exact damage-memory answer where there is no repair, else the conditioned estimate), so a
plain run with few losses does not make the ratio noisy; the plain run's own estimate is
printed beside it. Cases (all the demo scenario with one change, invented data):

  no-repair x0.1   no repair, flux scale factor 0.1   (exact answer about 1.9e-6)
  no-repair x0.4   no repair, flux scale factor 0.4   (exact answer about 1.3e-4)
  demo             the demo as shipped, with repair  (about 4.7e-4; no exact answer)

The machine may be shared: CPU (user + system) time is used, and the load is printed.
"""
import json
import os
import subprocess
import sys
import tempfile

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BIN = os.environ.get("TETHER_RISK", os.path.join(ROOT, "target", "release", "tether-risk"))


def run(args):
    """Runs the binary; returns (parsed JSON on stdout, CPU seconds)."""
    before = os.times()
    out = subprocess.run([BIN] + args, check=True, capture_output=True, text=True).stdout
    after = os.times()
    cpu = (after.children_user - before.children_user) + (after.children_system - before.children_system)
    return json.loads(out), cpu


def main():
    quick = "--quick" in sys.argv
    if not os.path.exists(BIN):
        subprocess.run(["cargo", "build", "--release"], cwd=ROOT, check=True)
    work = tempfile.mkdtemp()
    demo_path = os.path.join(work, "demo.json")
    subprocess.run([BIN, "init", demo_path], check=True, capture_output=True)
    demo = json.load(open(demo_path))
    cases = []
    for label, flux, plain_n, cond_n in [
        ("no-repair x0.1", 0.1, 10_000_000, 1_000_000),
        ("no-repair x0.4", 0.4, 1_000_000, 200_000),
    ]:
        sc = json.loads(json.dumps(demo))
        sc.pop("repair")
        sc["environment"]["flux_scale_factor"] = flux
        cases.append((label, sc, plain_n, cond_n, True))
    cases.append(("demo", demo, 1_000_000, 200_000, False))
    if quick:
        cases = [(l, s, p // 10, c // 10, e) for (l, s, p, c, e) in cases]
    print(f"load: {os.getloadavg()}")
    print(f"{'case':<16} {'p':>10} {'plain p (N)':>22} {'cond. p +- SE':>24} {'ESS':>8} "
          f"{'share':>6} {'plain s/hist':>12} {'cond. s/hist':>12} {'efficiency':>10}")
    for label, sc, plain_n, cond_n, exact in cases:
        path = os.path.join(work, label.replace(" ", "_") + ".json")
        json.dump(sc, open(path, "w"))
        p_ref = None
        if exact:
            est, _ = run(["estimate", path, "--format", "json"])
            p_ref = est["damage_memory"]["loss_probability"]
        common = ["--threads", "1", "--seed", "1", "--force", "--format", "json"]
        plain, t_plain = run(["simulate", path, "--histories", str(plain_n),
                              "--out", os.path.join(work, "plain")] + common)
        cond, t_cond = run(["simulate", path, "--condition-cascades", "--histories", str(cond_n),
                            "--out", os.path.join(work, "cond")] + common)
        lp = cond["loss_probability"]
        p = p_ref if p_ref is not None else lp["estimate"]
        var_plain = p * (1 - p)  # per history
        var_cond = lp["standard_error"] ** 2 * cond_n  # per history
        eff = (var_plain * t_plain / plain_n) / (var_cond * t_cond / cond_n)
        pp = plain["loss_probability"]["estimate"]
        print(f"{label:<16} {p:>10.4g} {pp:>10.4g} ({plain_n:>9}) "
              f"{lp['estimate']:>11.4g} +- {lp['standard_error']:<9.2g} "
              f"{lp['effective_sample_size']:>8.0f} {100 * lp['largest_weight_share']:>5.2f}% "
              f"{t_plain / plain_n:>12.3g} {t_cond / cond_n:>12.3g} {eff:>9.0f}x")
    print(f"load: {os.getloadavg()}")


if __name__ == "__main__":
    main()
