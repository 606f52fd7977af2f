#!/usr/bin/env bash
# engine_bench.sh — one t-SNE run, plumb vs scikit-learn 1.2.1, back to back on the same data.
#
#   internal/scripts/bench/engine_bench.sh [--rows digits,20k,100k] [--with-1m]
#                                          [--sklearn-max N] [--recall-max N] [--threads N] [--out DIR]
#
# Settings on both sides: perplexity 30, PCA init, early exaggeration 12 for 250 iterations,
# 1000 iterations, learning rate auto = max(N/(4·12), 50) (constant 4 in the gradient on both
# sides), plumb --gradient auto --neighbors auto (default θ 0.8), scikit-learn method barnes_hut (θ = 0.5),
# both on --threads threads (default: all cores).
# Columns: n, wall seconds (/usr/bin/time, whole process incl. reading the CSV), ratio
# sklearn/plumb, each side's final KL (its own estimate, see README), trustworthiness (k = 5,
# sklearn.manifold.trustworthiness on a fixed subsample of at most 5000 points, same indices for
# both layouts), peak RSS (/usr/bin/time -v), and for rows whose neighbours are approximate the
# recall of tsne.ApproxNeighbors against brute force on 1000 sampled points.
# Needs: go, /usr/bin/python3 with python3-sklearn (Debian), /usr/bin/time.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
PY=/usr/bin/python3
rows="digits,20k,100k"
with1m=0
skmax=20000
recallmax=200000
threads=$(nproc)
OUT=""
while [ $# -gt 0 ]; do
	case "$1" in
	--rows) rows="$2"; shift 2 ;;
	--with-1m) with1m=1; shift ;;
	--sklearn-max) skmax="$2"; shift 2 ;;
	--threads) threads="$2"; shift 2 ;;
	--recall-max) recallmax="$2"; shift 2 ;;
	--out) OUT="$2"; shift 2 ;;
	-h|--help) sed -n '2,17p' "$0"; exit 0 ;;
	*) echo "engine_bench.sh: unknown option $1" >&2; exit 2 ;;
	esac
done
[ "$with1m" = 1 ] && rows="$rows,1m"
OUT=${OUT:-$(mktemp -d)}
mkdir -p "$OUT"
echo "engine_bench: logs and layouts in $OUT" >&2

(cd "$root" && go build -o "$OUT/plumb" ./cmd/plumb && go build -o "$OUT/recall" ./internal/scripts/bench/recall)

# field FILE KEY: a value from /usr/bin/time -v output.
wall() { awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$1"; }
rss() { awk -F': ' '/Maximum resident set size/ {printf "%.2f", $2/1048576}' "$1"; }
kl() { "$PY" -c 'import json,sys; print("%.4f" % json.load(open(sys.argv[1]))["kl"])' "$1"; }

table="$OUT/table.md"
printf '| data | n | plumb s | sklearn s | ratio | plumb KL | sklearn KL | plumb trust | sklearn trust | plumb RSS GiB | sklearn RSS GiB | approx recall |\n' >"$table"
printf '|---|---|---|---|---|---|---|---|---|---|---|---|\n' >>"$table"

IFS=, read -ra list <<<"$rows"
for row in "${list[@]}"; do
	case "$row" in
	digits) data="$root/testdata/digits.csv"; label=digit; n=1797 ;;
	*k|*m)
		case "$row" in *k) n=$(( ${row%k} * 1000 )) ;; *m) n=$(( ${row%m} * 1000000 )) ;; esac
		data="$OUT/gmm_$row.csv"; label=cluster
		[ -f "$data" ] || "$PY" "$here/gmm_data.py" "$n" "$data" --seed 1 ;;
	*) echo "engine_bench.sh: unknown row $row" >&2; exit 2 ;;
	esac
	echo "engine_bench: $row (n=$n): plumb" >&2
	/usr/bin/time -v -o "$OUT/$row.plumb.time" "$OUT/plumb" embed --input "$data" --id-column id \
		--label-column "$label" --perplexity 30 --init pca --exaggeration 12 --exaggeration-iters 250 \
		--iters 1000 --learning-rate auto --seed 1 --gradient auto --neighbors auto \
		--threads "$threads" --quiet --out "$OUT/$row.plumb.csv" 2>"$OUT/$row.plumb.log"
	pw=$(wall "$OUT/$row.plumb.time"); pr=$(rss "$OUT/$row.plumb.time"); pk=$(kl "$OUT/$row.plumb.csv.json")
	layouts=("$OUT/$row.plumb.csv")
	sw="–"; sr="–"; sk="–"; ratio="–"; st="–"
	if [ "$n" -le "$skmax" ]; then
		echo "engine_bench: $row (n=$n): scikit-learn" >&2
		/usr/bin/time -v -o "$OUT/$row.sk.time" "$PY" "$here/sklearn_tsne.py" "$data" "$label" \
			"$OUT/$row.sk.csv" --threads "$threads" 2>"$OUT/$row.sk.log"
		sw=$(wall "$OUT/$row.sk.time" | awk "{printf \"%.1f\", \$1}"); sr=$(rss "$OUT/$row.sk.time"); sk=$(kl "$OUT/$row.sk.csv.json")
		ratio=$(awk -v a="$sw" -v b="$pw" 'BEGIN{printf "%.1f", a/b}')
		layouts+=("$OUT/$row.sk.csv")
	fi
	echo "engine_bench: $row (n=$n): trustworthiness" >&2
	mapfile -t tw < <("$PY" "$here/evaluate.py" "$data" "$label" "${layouts[@]}")
	pt=${tw[0]}
	[ ${#tw[@]} -gt 1 ] && st=${tw[1]}
	rec="exact"
	if [ "$n" -ge "${APPROX_AUTO_MIN_N:-50000}" ] && [ "$n" -gt "$recallmax" ]; then
		rec="not measured"
	elif [ "$n" -ge "${APPROX_AUTO_MIN_N:-50000}" ]; then
		echo "engine_bench: $row (n=$n): neighbour recall" >&2
		rec=$("$OUT/recall" -input "$data" -label-column "$label" -k 90 -queries 1000 \
			-threads "$threads" | awk '{print $2}')
	fi
	printf '| %s | %d | %.1f | %s | %s | %s | %s | %s | %s | %s | %s | %s |\n' "$row" "$n" "$pw" "$sw" \
		"$ratio" "$pk" "$sk" "$pt" "$st" "$pr" "$sr" "$rec" >>"$table"
	cat "$table" >&2
done
cat "$table"
