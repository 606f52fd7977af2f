#!/usr/bin/env bash
# big.sh measures the report page of a large synthetic study — 12 settings ×
# 100,000 points, three runs each, 25 labels — in Debian's headless
# chromium: the size of index.html against the stated budget (16 MiB,
# checked by TestBigPage), the time from navigation until every map is drawn
# (data-maps-ready), the script's own parse, decode and draw times, and one
# redraw of every map; then it drives the page like check.sh (hover, linked
# selection). A golden check by hand, not a timed unit test: the numbers
# depend on the machine and its load, so run it on a quiet machine and
# quote the median of the runs with the load average.
#
#   internal/scripts/browser/big.sh [OUT_DIR] [RUNS]
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
out="${1:-$(mktemp -d)}"
runs="${2:-3}"
mkdir -p "$out"
(cd "$root" && PLUMB_BIG_PAGE="$out" go test -count=1 -run TestBigPage -v ./cmd/plumb/internal/report/ | grep -E 'index.html|PASS|FAIL')
page="$out/report/index.html"
echo "page: $(stat -c %s "$page") bytes"
for i in $(seq "$runs"); do
	echo "run $i, load average $(cut -d' ' -f1-3 /proc/loadavg):"
	node --experimental-websocket "$here/drive.mjs" "$page" "$out/shots" |
		node -e 'let s="";process.stdin.on("data",d=>s+=d).on("end",()=>{const v=JSON.parse(s);console.log(JSON.stringify({timeToInteractiveMs:v.timeToInteractiveMs,...v.script,selected:v.selection.selected}))})'
done
echo "screenshots: $out/shots"
