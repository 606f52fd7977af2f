#!/usr/bin/env bash
# sweep_bench.sh — a 60-run sweep on a 5 000-point dataset, three ways:
#   1. plumb sweep (neighbours once, P once per perplexity, runs in parallel)
#   2. 60 separate `plumb embed` runs (same settings; everything recomputed per run)
#   3. 60 scikit-learn TSNE runs (Debian's python3-sklearn 1.2.1, Barnes-Hut, n_jobs = all cores)
# Grid: perplexity 10,30,50 × learning rate auto,1000 × exaggeration 4,12 × seeds 1-5,
# init random, 1000 iterations (250 exaggerated), Barnes-Hut at each tool's default θ
# (plumb 0.8, scikit-learn 0.5: the same repulsion accuracy; see the README's conventions).
# The data: a seeded mixture of 10 Gaussian clusters in 50 dimensions (numpy, seed 20261202).
#
# Long: scikit-learn needs about a minute per run here. SKLEARN_RUNS=K (default 60) runs only K
# of the 60 settings×seeds, spread evenly over the grid, and extrapolates linearly to 60 (printed as such);
# EMBED_RUNS=K does the same for the separate plumb embed runs. SKIP_SCORE=1 passes --no-score.
# Output: a Markdown table on stdout; logs in $OUT (default a temporary directory).
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
PY=/usr/bin/python3
N=${N:-5000}
SKLEARN_RUNS=${SKLEARN_RUNS:-60}
EMBED_RUNS=${EMBED_RUNS:-60}
OUT=${OUT:-$(mktemp -d)}
mkdir -p "$OUT"
cores=$(nproc)

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

(cd "$root" && go build -o "$OUT/plumb" ./cmd/plumb)
P="$OUT/plumb"
perps="10 30 50"; lrs="auto 1000"; exags="4 12"; seeds="1 2 3 4 5"

now() { date +%s.%N; }
elapsed() { "$PY" -c "print(f'{$2 - $1:.1f}')"; }

load_start=$(cut -d' ' -f1-3 /proc/loadavg)
# 1. plumb sweep
rm -rf "$OUT/study"
score_flag=""; [ "${SKIP_SCORE:-}" = 1 ] && score_flag="--no-score"
t0=$(now)
"$P" sweep --input "$OUT/data.csv" --id-column id --label-column label --out "$OUT/study" \
  --perplexity 10,30,50 --learning-rate auto,1000 --exaggeration 4,12 --seeds 5 --init random \
  --gradient barnes-hut $score_flag 2> "$OUT/sweep.log"
t1=$(now)
sweep_s=$(elapsed "$t0" "$t1")
runs_dur=$(grep -o 'already finished, in [0-9hmsµ.]*' "$OUT/sweep.log" | awk '{print $NF}')
runs_s=$("$PY" -c "
import re,sys
d=sys.argv[1]; t=0.0
for v,u in re.findall(r'([0-9.]+)(h|ms|µs|m|s)', d): t+=float(v)*{'h':3600,'m':60,'s':1,'ms':1e-3,'µs':1e-6}[u]
print(f'{t:.1f}')" "$runs_dur")
"$P" show "$OUT/study" --json > "$OUT/show.json"
kl_sweep=$("$PY" -c "import json;d=json.load(open('$OUT/show.json'));import statistics as s;print(f\"{s.median([x['kl_median'] for x in d['settings']]):.4f}\")")

sampled() { local j; for ((j = 0; j < $2; j++)); do [ $(( (11 * j) % 60 )) -eq "$1" ] && return 0; done; return 1; }

# 2. separate plumb embed runs
i=0; t0=$(now)
for p in $perps; do for lr in $lrs; do for ex in $exags; do for s in $seeds; do
  # K of the 60 runs: indices 11·j mod 60 (11 is coprime with the grid's strides 20, 10, 5), so the
  # sample mixes perplexities, learning rates, exaggerations and seeds.
  if sampled "$i" "$EMBED_RUNS"; then
    "$P" embed --input "$OUT/data.csv" --id-column id --label-column label --perplexity $p --learning-rate $lr \
      --exaggeration $ex --seed $s --init random --gradient barnes-hut --quiet --out "$OUT/embed_$i.parquet"
  fi
  i=$((i+1))
done; done; done; done
t1=$(now)
embed_s=$(elapsed "$t0" "$t1")
embed_60=$("$PY" -c "print(f'{$embed_s * 60 / $EMBED_RUNS:.1f}')")

# 3. scikit-learn
"$PY" - "$OUT/data.csv" "$SKLEARN_RUNS" > "$OUT/sklearn.txt" <<'PYEOF'
import sys, time, itertools, numpy as np, sklearn
from sklearn.manifold import TSNE
x = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1, usecols=range(2, 52))
k = int(sys.argv[2])
grid = list(itertools.product([10, 30, 50], ["auto", 1000.0], [4.0, 12.0], [1, 2, 3, 4, 5]))
grid = [grid[(11 * j) % 60] for j in range(k)]  # as for plumb embed: mixes every parameter
t0 = time.time(); kls = []
for perp, lr, ex, seed in grid:
    # scikit-learn 1.2.1 keeps the factor 4 in the gradient (_t_sne.py: grad *= c, c = 4), as plumb
    # does, so learning rates carry over unchanged; "auto" is max(n/early_exaggeration/4, 50) in both.
    lr_sk = lr
    t = TSNE(perplexity=perp, learning_rate=lr_sk, early_exaggeration=ex, init="random", random_state=seed,
             method="barnes_hut", angle=0.5, n_iter=1000, n_jobs=-1)
    t.fit(x); kls.append(t.kl_divergence_)
print(f"{time.time() - t0:.1f} {np.median(kls):.4f} {sklearn.__version__}")
PYEOF
read sk_s sk_kl sk_ver < "$OUT/sklearn.txt"
sk_60=$("$PY" -c "print(f'{$sk_s * 60 / $SKLEARN_RUNS:.1f}')")

ratio() { "$PY" -c "print(f'{$1 / $2:.1f}')"; }
cat <<MD
60-run sweep, n=$N × 50 features, Barnes-Hut (default θ: plumb 0.8, scikit-learn 0.5), 1000 iterations, $cores cores ($(date -u +%Y-%m-%d)); load average at start $load_start, at end $(cut -d' ' -f1-3 /proc/loadavg)

| way | runs measured | wall time (s) | time for 60 runs (s) | vs plumb sweep | median KL |
| --- | --- | --- | --- | --- | --- |
| plumb sweep (incl. scoring${score_flag:+: skipped}) | 60 | $sweep_s | $sweep_s | 1.0× | $kl_sweep |
| plumb sweep, runs only | 60 | $runs_s | $runs_s | | |
| plumb embed × 60 (each: neighbours + P + run, all cores) | $EMBED_RUNS | $embed_s | $embed_60$([ "$EMBED_RUNS" != 60 ] && echo " (extrapolated)") | $(ratio "$embed_60" "$sweep_s")× | |
| scikit-learn $sk_ver TSNE × 60 | $SKLEARN_RUNS | $sk_s | $sk_60$([ "$SKLEARN_RUNS" != 60 ] && echo " (extrapolated)") | $(ratio "$sk_60" "$sweep_s")× | $sk_kl |
MD
echo "logs: $OUT" >&2
