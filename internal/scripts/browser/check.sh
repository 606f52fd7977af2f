#!/usr/bin/env bash
# check.sh renders a plumb report in Debian's headless chromium and fails on
# console errors, outside requests, missing figures or a table that does not
# sort; it leaves screenshots in OUT_DIR (report-top.png, report-full.png).
#
#   internal/scripts/browser/check.sh [REPORT_DIR] [OUT_DIR]
#
# With no REPORT_DIR it builds plumb, runs `plumb demo` into a temporary
# directory and checks that report. It first runs a self-test on a page with
# a deliberate error to show the check can fail. Chromium comes from
# Debian's package (apt-get install chromium, as root, when missing); no
# browser is ever downloaded.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
if ! command -v chromium >/dev/null 2>&1; then
	if [ "$(id -u)" = 0 ]; then
		apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
	else
		echo "check.sh: chromium missing; install Debian's chromium package" >&2
		exit 2
	fi
fi
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
report="${1:-}"
out="${2:-$work/shots}"
if [ -z "$report" ]; then
	(cd "$root" && go build -o "$work/plumb" ./cmd/plumb)
	"$work/plumb" demo --quiet --out "$work/demo" >/dev/null
	report="$work/demo/study/report"
fi
# Self-test: a page with a deliberate error must be caught.
printf '<!DOCTYPE html><html><head><link rel="icon" href="data:,"></head><body><script>console.error("deliberate");</script></body></html>' >"$work/bad.html"
if ! node --experimental-websocket "$here/check.mjs" "$work/bad.html" "$work/selftest" --expect-errors >"$work/selftest.log" 2>&1; then
	cat "$work/selftest.log" >&2
	echo "check.sh: self-test failed: the check did not catch a deliberate console error" >&2
	exit 1
fi
node --experimental-websocket "$here/check.mjs" "$report/index.html" "$out"
echo "screenshots: $out/report-top.png $out/report-full.png"
