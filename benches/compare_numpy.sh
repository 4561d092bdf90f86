#!/usr/bin/env bash
# Time tether-risk against the vectorised NumPy Monte Carlo of benches/numpy_reference.py, both
# as whole processes, one thread, equal histories, and check that their loss probabilities
# agree within intervals (and with the exact value the NumPy script computes).
#
#   bash benches/compare_numpy.sh [HISTORIES_A] [HISTORIES_B]
#
# Case a: the demo with repair off, equal sharing, fraction-of-width cut rule (1/4 of the
# width), physical environment. The per-bay rates NumPy uses are exported by
# `tether-risk profile --format json` from the same scenario file.
# Case b: one bay of 5 ribbons, 1-of-5, constant cut rate 0.01/day per segment, exponential
# repair 0.05/day with one crew, 10 years (synthetic-rates mode).
#
# Times: wall (elapsed) and CPU (user + system) from /usr/bin/time; on a shared machine the
# CPU time is the fairer figure. Per-event cost = CPU time / events (cuts for case a, the
# tool's events for case b as NumPy counts them: cuts and repairs).
set -euo pipefail
cd "$(dirname "$0")/.."
HA=${1:-2000000}
HB=${2:-200000}
BIN=${TETHER_RISK:-target/release/tether-risk}
WORK=${WORK_DIR:-$(mktemp -d)}
PY=${PYTHON:-python3}
[ -x "$BIN" ] || cargo build --release
if ! "$PY" -c 'import numpy' 2>/dev/null; then
  echo "installing numpy with pip (benchmark only; not a dependency of the crate)" >&2
  "$PY" -m pip install --quiet numpy
fi
command -v /usr/bin/time >/dev/null || { echo "needs /usr/bin/time (GNU time)" >&2; exit 1; }
export OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1

"$PY" - "$WORK" <<'EOF'
import json, sys
work = sys.argv[1]
demo = json.loads(open("src/scenario/demo.json").read())
a = json.loads(json.dumps(demo))
a["name"] = "numpy-ref-a"
a.pop("repair", None)
a["tether"]["load_sharing"] = "equal"
a["damage"] = {"law": "fraction_of_width", "fraction": 0.25}
json.dump(a, open(f"{work}/a.json", "w"), indent=1)
b = json.loads(json.dumps(demo))
b["name"] = "numpy-ref-b"
t = b["tether"]
t.update({"top_altitude_km": 60000.0, "cross_link_spacing_km": 60000.0, "ribbon_count": 5,
          "taper": "none", "anchor_preload_n": 10.0, "traffic_load_n": 0.0,
          "material": {"name": "carbon fibre", "ultimate_strength_gpa": 7.0,
                       "density_g_per_cm3": 1.79}})
b["repair"] = None
b["run"]["mission_years"] = 10.0
b["synthetic_rates"] = {"cut_rate_per_segment_per_day": 0.01,
                        "repair_rate_per_crew_per_day": 0.05,
                        "crews_per_bay": 1, "required_ribbons": 1}
json.dump(b, open(f"{work}/b.json", "w"), indent=1)
EOF
"$BIN" profile "$WORK/a.json" --format json > "$WORK/a_profile.json"

# run NAME OUTFILE CMD... : times CMD, stdout to OUTFILE, "wall cpu maxrss_kb" to OUTFILE.time
timed() {
  local out=$1; shift
  /usr/bin/time -f "%e %U %S %M" -o "$out.time" "$@" > "$out"
}
echo "load before: $(uptime)"
timed "$WORK/tool_a.json" "$BIN" simulate "$WORK/a.json" --histories "$HA" --threads 1 \
  --out "$WORK/run_a" --force --format json
timed "$WORK/np_a_sparse.json" "$PY" benches/numpy_reference.py a-sparse \
  --profile "$WORK/a_profile.json" --years 15 --histories "$HA"
HAD=$(( HA / 10 ))
timed "$WORK/np_a_dense.json" "$PY" benches/numpy_reference.py a-dense \
  --profile "$WORK/a_profile.json" --years 15 --histories "$HAD"
timed "$WORK/tool_a_dense_n.json" "$BIN" simulate "$WORK/a.json" --histories "$HAD" --threads 1 \
  --out "$WORK/run_a2" --force --format json
timed "$WORK/tool_b.json" "$BIN" simulate "$WORK/b.json" --histories "$HB" --threads 1 \
  --out "$WORK/run_b" --force --format json
timed "$WORK/np_b.json" "$PY" benches/numpy_reference.py b --years 10 --histories "$HB"
echo "load after: $(uptime)"

"$PY" - "$WORK" <<'EOF'
import json, sys
w = sys.argv[1]
def t(name):
    e, u, s, m = open(f"{w}/{name}.time").read().split()[-4:]
    return float(e), float(u) + float(s), int(m)
def tool(name):
    j = json.load(open(f"{w}/{name}"))
    lp = j["loss_probability"]
    return j, lp
rows = []
for label, tname, nname in [("a (sparse NumPy)", "tool_a.json", "np_a_sparse.json"),
                            ("a (dense NumPy)", "tool_a_dense_n.json", "np_a_dense.json"),
                            ("b (1-of-5, repair)", "tool_b.json", "np_b.json")]:
    j, lp = tool(tname)
    n = json.load(open(f"{w}/{nname}"))
    tw, tc, tm = t(tname)
    nw, nc, nm = t(nname)
    h = n["histories"]
    events = n["events"]
    overlap = lp["ci_low"] <= n["wilson_95"][1] and n["wilson_95"][0] <= lp["ci_high"]
    print(f"case {label}: {h} histories each")
    print(f"  tether-risk  P(loss) = {lp['estimate']:.5g}  [{lp['ci_low']:.5g}, {lp['ci_high']:.5g}] (Clopper-Pearson)"
          f"  wall {tw:.2f} s  cpu {tc:.2f} s  peak RSS {tm/1024:.0f} MiB")
    print(f"  NumPy        P(loss) = {n['loss_probability']:.5g}  [{n['wilson_95'][0]:.5g}, {n['wilson_95'][1]:.5g}] (Wilson)"
          f"  wall {nw:.2f} s  cpu {nc:.2f} s  peak RSS {nm/1024:.0f} MiB")
    print(f"  exact        P(loss) = {n['exact']:.5g}   intervals overlap: {'yes' if overlap else 'NO'}")
    print(f"  speed-up (NumPy / tool): wall {nw/tw:.2f}x  cpu {nc/tc:.2f}x")
    print(f"  per event ({events/h:.3g} {n['event_unit']} per history in NumPy):"
          f" tool {1e9*tc/events:.0f} ns, NumPy {1e9*nc/events:.0f} ns (whole-process CPU / events)")
EOF
