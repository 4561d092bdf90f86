#!/usr/bin/env bash
# Whole-process figures of the on-demand engine on the demo (issue 11 goals):
#   - peak RSS from 1e4 to 1e7 histories (goal: flat), /usr/bin/time;
#   - parallel efficiency on 2 threads, T(1 thread) / (2 T(2 threads)) (goal >= 90 %);
#   - the 6-ribbon, 25 km cross-link variant of the demo at 20,000 histories (goal < 10 s).
#
#   bash benches/scaling.sh [MAX_HISTORIES] [THREAD_HISTORIES]
#
# The machine may be shared: the load (uptime) is printed before and after each block; CPU
# time (user + system) is printed beside the wall time.
set -euo pipefail
cd "$(dirname "$0")/.."
MAX=${1:-10000000}
# 4e6 histories (about 12 s on one thread): at 1e6 the serial start-up (model, tables,
# report; about 0.3 s) is a tenth of the run and the whole-process efficiency reads 0.84-0.88.
TH=${2:-4000000}
BIN=${TETHER_RISK:-target/release/tether-risk}
WORK=${WORK_DIR:-$(mktemp -d)}
[ -x "$BIN" ] || cargo build --release
t() { # label, command...: prints wall, cpu, peak RSS
  local label=$1; shift
  /usr/bin/time -f "%e %U %S %M" -o "$WORK/t" "$@" > /dev/null 2> "$WORK/err" || { cat "$WORK/err"; exit 1; }
  read -r e u s m < <(tail -1 "$WORK/t")
  printf "%-44s wall %7.2f s  cpu %7.2f s  peak RSS %6.1f MiB\n" "$label" "$e" "$(echo "$u + $s" | bc)" "$(echo "scale=1; $m / 1024" | bc)"
}
echo "== peak memory (demo, on-demand, 2 threads) -- load: $(uptime)"
n=10000
while [ "$n" -le "$MAX" ]; do
  t "simulate demo --histories $n" "$BIN" simulate demo --histories "$n" --threads 2 --out "$WORK/rss" --force --format json
  n=$(( n * 10 ))
done
echo "== parallel efficiency (demo, $TH histories) -- load: $(uptime)"
t "threads 1" "$BIN" simulate demo --histories "$TH" --threads 1 --out "$WORK/t1" --force --format json
w1=$(tail -1 "$WORK/t" | cut -d' ' -f1)
t "threads 2" "$BIN" simulate demo --histories "$TH" --threads 2 --out "$WORK/t2" --force --format json
w2=$(tail -1 "$WORK/t" | cut -d' ' -f1)
echo "efficiency T1 / (2 T2) = $(echo "scale=3; $w1 / (2 * $w2)" | bc)  (load after: $(uptime))"
cmp <(python3 -c "import json,sys;d=json.load(open('$WORK/t1/summary.json'));print(d['tally'])") \
    <(python3 -c "import json,sys;d=json.load(open('$WORK/t2/summary.json'));print(d['tally'])") \
  && echo "tallies at 1 and 2 threads: identical"
echo "== 6 ribbons x 25 km cross-links, 20000 histories -- load: $(uptime)"
python3 - "$WORK" <<'EOF'
import json, sys
d = json.load(open("src/scenario/demo.json"))
d["name"] = "demo-6x25"
d["tether"]["ribbon_count"] = 6
d["tether"]["cross_link_spacing_km"] = 25.0
json.dump(d, open(f"{sys.argv[1]}/six25.json", "w"), indent=1)
EOF
t "6 ribbons x 25 km, on-demand, 2 threads" "$BIN" simulate "$WORK/six25.json" --histories 20000 --threads 2 --out "$WORK/six25" --force --format json
t "6 ribbons x 25 km, on-demand, 1 thread" "$BIN" simulate "$WORK/six25.json" --histories 20000 --threads 1 --out "$WORK/six25b" --force --format json
echo "load after: $(uptime)"
