#!/usr/bin/env bash
# Builds plumb, runs a small sweep on testdata/iris.csv and checks the study
# with DuckDB (check.mjs). Usage: internal/scripts/duckdb/run.sh [STUDY_DIR]
# With STUDY_DIR, checks that study instead of making one.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
tmp="$(mktemp -d)"
trap 'rm -rf "$tmp"' EXIT
if [ ! -d "$here/node_modules/@duckdb/node-api" ]; then
  (cd "$here" && npm ci --no-audit --no-fund --silent)
fi
(cd "$root" && go build -o "$tmp/plumb" ./cmd/plumb)
study="${1:-}"
if [ -z "$study" ]; then
  study="$tmp/study"
  "$tmp/plumb" sweep --quiet --input "$root/testdata/iris.csv" --id-column id --label-column species \
    --out "$study" --perplexity 5,15 --init pca,random --seeds 3 --iters 200 --exaggeration-iters 50
fi
PLUMB="$tmp/plumb" node "$here/check.mjs" "$study"
PLUMB="$tmp/plumb" node "$here/readme.mjs" "$root/README.md" "$study"
