#!/usr/bin/env bash
# estimate_check.sh — compares `plumb sweep --dry-run`'s time estimate with the CPU time
# (user+sys from /usr/bin/time -v) of the same one-run sweep, run single-threaded
# (--jobs 1 --threads 1, GOMAXPROCS=1). On a shared, loaded machine CPU time of a
# single-threaded run is what its wall time would be on an idle one, which is what the
# estimate targets.
#
# Cases (n, gradient): exact at 500 and 1,000 points; Barnes-Hut at 2,000, 5,000 and 20,000;
# FFT interpolation at 5,000 and 20,000. Perplexity 30, PCA start, 1,000 iterations (250
# exaggerated), learning rate auto, no scoring. The data: a seeded mixture of 10 Gaussian
# clusters in 50 dimensions (numpy, seed 20261205; Debian's python3-numpy).
#
# Usage: internal/scripts/bench/estimate_check.sh            # all cases (about 3 CPU-minutes)
#        CASES="500:exact 2000:barnes-hut" internal/scripts/bench/estimate_check.sh
# Output: a Markdown table on stdout (estimate, measured CPU s, ratio); logs in $OUT.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
PY=/usr/bin/python3
OUT=${OUT:-$(mktemp -d)}
CASES=${CASES:-"500:exact 1000:exact 2000:barnes-hut 5000:barnes-hut 20000:barnes-hut 5000:fft 20000:fft"}
mkdir -p "$OUT"
(cd "$root" && go build -o "$OUT/plumb" ./cmd/plumb)
P="$OUT/plumb"

echo "| n | gradient | estimate s | CPU s (user+sys) | estimate / CPU |"
echo "|---|---|---|---|---|"
for c in $CASES; do
  n=${c%%:*}; g=${c#*:}
  data="$OUT/data-$n.csv"
  [ -f "$data" ] || "$PY" - "$data" "$n" <<'PYEOF'
import sys, numpy as np
path, n = sys.argv[1], int(sys.argv[2])
rng = np.random.default_rng(20261205)
centres = rng.normal(0, 4, size=(10, 50))
lab = rng.integers(0, 10, size=n)
x = centres[lab] + rng.normal(0, 1, size=(n, 50))
with open(path, "w") as f:
    f.write("id,label," + ",".join(f"f{j}" for j in range(50)) + "\n")
    for i in range(n):
        f.write(f"p{i},c{lab[i]}," + ",".join(f"{v:.6f}" for v in x[i]) + "\n")
PYEOF
  study="$OUT/study-$n-$g"
  rm -rf "$study"
  args=(sweep --input "$data" --id-column id --label-column label --out "$study"
        --perplexity 30 --seeds 1 --init pca --gradient "$g" --jobs 1 --threads 1 --no-score --quiet)
  est=$("$P" "${args[@]}" --dry-run | sed -n 's/^estimate: .*(\([0-9.]*\) s;.*/\1/p')
  GOMAXPROCS=1 /usr/bin/time -v "$P" "${args[@]}" 2> "$OUT/time-$n-$g.log" >/dev/null
  cpu=$(awk -F': ' '/User time/{u=$2} /System time/{s=$2} END{printf "%.1f", u+s}' "$OUT/time-$n-$g.log")
  ratio=-; [ -n "$est" ] && ratio=$("$PY" -c "print(f'{$est/$cpu:.2f}')")
  est=${est:--}
  echo "| $n | $g | $est | $cpu | $ratio |"
done
echo
echo "load average at the end: $(cut -d' ' -f1-3 /proc/loadavg); logs in $OUT"
