#!/usr/bin/env bash
# check.sh renders a plumb report in Debian's headless chromium and fails on
# console errors, outside requests, missing figures or a table that does not
# sort (check.mjs), then drives its interactive maps (drive.mjs): hover a
# known point and read its tooltip, drag a rectangle in one map and require
# the same point ids highlighted in every map, filter the settings table.
# It leaves screenshots in OUT_DIR (report-top.png, report-full.png,
# maps-*.png, figures.png).
#
#   internal/scripts/browser/check.sh [REPORT_DIR] [OUT_DIR]
#
# With no REPORT_DIR it builds plumb, runs `plumb demo` into a temporary
# directory and checks that report; it also sweeps a small table whose ids,
# labels and label column are hostile markup (`</script><img …>`,
# `"><svg onload=…>`) and requires them to show as text with no handler,
# dialog or request. Self-tests show the checks can fail: a page with a
# deliberate console error, and the demo page with one map made to drop one
# highlighted point. Chromium comes from Debian's package (apt-get install
# chromium, as root, when missing); no browser is ever downloaded.
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
	# A table whose ids, labels and label column are hostile markup.
	node -e '
		const evil = ["</script><img src=x onerror=alert(1)>", "\"><svg onload=alert(1)>"];
		const q = (s) => "\"" + s.replace(/"/g, "\"\"") + "\"";
		const rows = [["id", "kind</script><script>alert(2)</script>", "a", "b", "c", "d"].map(q).join(",")];
		let x = 1;
		const rnd = () => { x = (x * 1103515245 + 12345) % 2147483648; return x / 2147483648 - 0.5; };
		for (let i = 0; i < 90; i++) {
			const g = i % 2;
			rows.push([q(evil[i % 2] + "-" + i), q(evil[g]), 4 * g + rnd(), -4 * g + rnd(), rnd(), rnd()].join(","));
		}
		process.stdout.write(rows.join("\n") + "\n");
	' >"$work/hostile.csv"
	"$work/plumb" sweep --quiet --input "$work/hostile.csv" --id-column id --label-column 'kind</script><script>alert(2)</script>' \
		--perplexity 5,10 --seeds 2 --init random --iters 300 --out "$work/hostile" >/dev/null
	"$work/plumb" report "$work/hostile" >/dev/null
	hostile="$work/hostile/report"
	if grep -l -e '<img' -e '<svg onload' "$hostile"/figures/*.svg; then
		echo "check.sh: hostile markup appears unescaped in an SVG file" >&2
		exit 1
	fi
fi
# Self-test: a page with a deliberate error must be caught.
printf '<!DOCTYPE html><html><head><link rel="icon" href="data:,"></head><body><script>console.error("deliberate");</script></body></html>' >"$work/bad.html"
if ! node --experimental-websocket "$here/check.mjs" "$work/bad.html" "$work/selftest" --expect-errors >"$work/selftest.log" 2>&1; then
	cat "$work/selftest.log" >&2
	echo "check.sh: self-test failed: the check did not catch a deliberate console error" >&2
	exit 1
fi
node --experimental-websocket "$here/check.mjs" "$report/index.html" "$out"
# Self-test: a map that drops one highlighted point must be caught.
if node --experimental-websocket "$here/drive.mjs" "$report/index.html" "$work/selftest-drive" --break-highlight >"$work/selftest-drive.log" 2>&1 \
	|| ! grep -q 'selection: map .* highlights' "$work/selftest-drive.log"; then
	cat "$work/selftest-drive.log" >&2
	echo "check.sh: self-test failed: the drive did not catch a map with a wrong highlight" >&2
	exit 1
fi
node --experimental-websocket "$here/drive.mjs" "$report/index.html" "$out"
if [ -n "${hostile:-}" ]; then
	node --experimental-websocket "$here/drive.mjs" "$hostile/index.html" "$out/hostile" --hostile
fi
echo "screenshots: $out/report-top.png $out/report-full.png $out/maps-*.png $out/figures.png"
