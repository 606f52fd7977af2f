#!/usr/bin/env bash
# clusters_bench.sh — what the map-cluster readings cost beside the sweep's scoring, on the
# 60-run, 5 000-point study of sweep_bench.sh (same data, same grid):
#   1. plumb sweep --no-score (the 60 runs);
#   2. plumb score on the study, CPU time (user + sys) from /usr/bin/time -v;
#   3. clusterstudy: MapClusters on every run, then per setting CoAssignment,
#      ClusterStability and LabelStability, CPU time from getrusage (layout reading not timed).
# Output: a Markdown table on stdout; logs in $OUT (default a temporary directory).
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
PY=/usr/bin/python3
N=${N:-5000}
OUT=${OUT:-$(mktemp -d)}
mkdir -p "$OUT"

"$PY" - "$OUT/data.csv" "$N" <<'PYEOF'
import sys, numpy as np
path, n = sys.argv[1], int(sys.argv[2])
rng = np.random.default_rng(20261202)
centres = rng.normal(0, 4, size=(10, 50))
lab = rng.integers(0, 10, size=n)
x = centres[lab] + rng.normal(0, 1, size=(n, 50))
with open(path, "w") as f:
    f.write("id,label," + ",".join(f"f{j}" for j in range(50)) + "\n")
    for i in range(n):
        f.write(f"p{i},c{lab[i]}," + ",".join(f"{v:.6f}" for v in x[i]) + "\n")
PYEOF

(cd "$root" && go build -o "$OUT/plumb" ./cmd/plumb && go build -o "$OUT/clusterstudy" ./internal/scripts/bench/clusterstudy)
P="$OUT/plumb"
rm -rf "$OUT/study"
"$P" sweep --input "$OUT/data.csv" --id-column id --label-column label --out "$OUT/study" \
  --perplexity 10,30,50 --learning-rate auto,1000 --exaggeration 4,12 --seeds 5 --init random \
  --gradient barnes-hut --no-score 2> "$OUT/sweep.log"
load_start=$(cut -d' ' -f1-3 /proc/loadavg)
/usr/bin/time -v "$P" score "$OUT/study" > "$OUT/score.out" 2> "$OUT/score.time"
"$OUT/clusterstudy" "$OUT/study" > "$OUT/clusters.txt"
cpu_of() { awk -F': ' '/User time/{u=$2} /System time/{s=$2} END{printf "%.2f", u+s}' "$1"; }
wall_of() { awk -F': ' '/Elapsed \(wall clock\)/{print $2}' "$1"; }
score_cpu=$(cpu_of "$OUT/score.time")
cl_cpu=$(awk '/^total:/{print $3}' "$OUT/clusters.txt")
cl_only=$(awk '/^clustering:/{print $3}' "$OUT/clusters.txt")
cat <<MD
60-run study, n=$N × 50 features ($(nproc) cores, $(date -u +%Y-%m-%d)); load average at start $load_start, at end $(cut -d' ' -f1-3 /proc/loadavg)

| step | CPU s (user+sys) | wall |
| --- | --- | --- |
| plumb score (every score table) | $score_cpu | $(wall_of "$OUT/score.time") |
| MapClusters × 60 | $cl_only | |
| MapClusters × 60 + co-assignment, cluster and label stability per setting | $cl_cpu | |

Clusters / share of scoring CPU: $("$PY" -c "print(f'{$cl_cpu / $score_cpu:.3f}')")
$(head -1 "$OUT/clusters.txt")
MD
echo "logs: $OUT" >&2
