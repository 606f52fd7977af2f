#!/bin/bash
# Makes the studies TestFalseAlarmRate (cmd/plumb/internal/gate) measures:
# one setting (perplexity 30, random initialisation, defaults otherwise) with
# many seeds on iris and digits (testdata/, from scikit-learn's copies), and
# deliberate changes: early exaggeration 4 instead of 12, fewer iterations,
# and data with the features of some rows of two classes swapped (ids kept).
# Usage: bash internal/scripts/gatecal/run.sh OUTDIR   (about 20 CPU-minutes)
set -euo pipefail
out=${1:?usage: run.sh OUTDIR}
root=$(cd "$(dirname "$0")/../../.." && pwd)
mkdir -p "$out"
go build -o "$out/plumb" "$root/cmd/plumb"
P="$out/plumb"
swap() { # swap(in, out, label column, class a, class b, count)
  awk -F, -v OFS=, -v lc="$3" -v a="$4" -v b="$5" -v n="$6" '
    NR==1 { for (j=1;j<=NF;j++) if ($j==lc) L=j; for (j=1;j<=NF;j++) if ($j=="id") I=j; print; next }
    { row[NR]=$0; if ($L==a && na<n) A[++na]=NR; if ($L==b && nb<n) B[++nb]=NR }
    END {
      for (t=1;t<=na && t<=nb;t++) {
        split(row[A[t]], x, ","); split(row[B[t]], y, ",")
        for (j in x) if (j!=L && j!=I) { s=x[j]; x[j]=y[j]; y[j]=s }
        ra=""; rb=""; for (j=1;j<=length(x);j++) { ra=ra (j>1?",":"") x[j]; rb=rb (j>1?",":"") y[j] }
        row[A[t]]=ra; row[B[t]]=rb
      }
      for (r=2;r<=NR;r++) print row[r]
    }' "$1" > "$2"
}
swap "$root/testdata/iris.csv" "$out/iris-swap.csv" species setosa virginica 10
swap "$root/testdata/digits.csv" "$out/digits-swap.csv" digit 1 7 50
common="--perplexity 30 --init random --no-score --quiet"
I="--input $root/testdata/iris.csv --id-column id --label-column species"
D="--input $root/testdata/digits.csv --id-column id --label-column digit"
$P sweep $I --out "$out/iris-base" $common --seeds 1-1200
$P sweep $I --out "$out/iris-ex4" $common --seeds 1001-1100 --exaggeration 4
$P sweep $I --out "$out/iris-ex1" $common --seeds 1001-1100 --exaggeration 1
$P sweep $I --out "$out/iris-it300" $common --seeds 1001-1100 --iters 300
$P sweep $I --out "$out/iris-it500" $common --seeds 1001-1100 --iters 500
$P sweep --input "$out/iris-swap.csv" --id-column id --label-column species --out "$out/iris-swap" $common --seeds 1001-1100
$P sweep $D --out "$out/digits-base" $common --seeds 1-600
$P sweep $D --out "$out/digits-ex4" $common --seeds 1001-1060 --exaggeration 4
$P sweep $D --out "$out/digits-it500" $common --seeds 1001-1060 --iters 500
$P sweep --input "$out/digits-swap.csv" --id-column id --label-column digit --out "$out/digits-swap" $common --seeds 1001-1060
