#!/usr/bin/env bash
# browser-test.sh: render the report of a small synthetic experiment in
# headless Chromium and check that it displays completely and offline.
#
#   .ci/browser-test.sh [WORKDIR]
#
# Installs Debian's chromium with apt-get when it is missing (skips, exit 0,
# with a message saying so, when apt cannot reach a mirror). Builds hoplore,
# writes synthetic result tables and their report with
#   go test ./report -run TestWriteDemoReport -args -out DIR
# rewrites the report through the command line (hoplore report DIR), then
# checks in the page as the browser built it (--dump-dom) that every chart
# and table is present and every image decoded (the page's own script sets
# data-images="ok" on <body>), and in the HTML source that the page loads
# nothing from outside itself. Exits non-zero on any failure.
set -euo pipefail

cd "$(dirname "$0")/.."
work="${1:-$(mktemp -d)}"
mkdir -p "$work"
fail() { echo "browser-test: FAIL: $*" >&2; exit 1; }
note() { echo "browser-test: $*"; }

browser=""
for b in chromium chromium-browser; do
	if command -v "$b" >/dev/null 2>&1; then browser="$b"; break; fi
done
if [ -z "$browser" ]; then
	note "chromium not found; installing Debian's chromium with apt-get"
	sudo=""
	if [ "$(id -u)" != 0 ]; then sudo="sudo -n"; fi
	if ! { $sudo apt-get install -y -q chromium >"$work/apt.log" 2>&1 ||
		{ $sudo apt-get update -q >>"$work/apt.log" 2>&1 && $sudo apt-get install -y -q chromium >>"$work/apt.log" 2>&1; }; }; then
		echo "browser-test: SKIP: chromium is not installed and apt-get could not install it (see $work/apt.log)"
		exit 0
	fi
	browser=chromium
fi
note "browser: $($browser --version 2>/dev/null || echo "$browser")"

note "building hoplore"
go build -o "$work/hoplore" ./cmd/hoplore

dir="$work/experiment"
rm -rf "$dir"
note "writing synthetic result tables and their report into $dir"
go test ./report -count=1 -run '^TestWriteDemoReport$' -args -out "$dir" >"$work/go-test.log" 2>&1 ||
	{ cat "$work/go-test.log" >&2; fail "go test TestWriteDemoReport"; }
# The command line on a real result folder (report refuses folders without
# the marker and table manifest that a run writes, as the synthetic one is).
cli="$work/cli"
note "a real sweep and its report through the command line: hoplore run testdata/tiny.yaml, hoplore report"
"$work/hoplore" run testdata/tiny.yaml --out "$cli" --quiet || fail "hoplore run exited with $?"
"$work/hoplore" report "$cli" || fail "hoplore report exited with $?"
[ -s "$cli/report/index.html" ] || fail "$cli/report/index.html missing or empty"

page="$dir/report/index.html"
[ -s "$page" ] || fail "$page missing or empty"

# 1. nothing outside the page: no URLs, no file references, no stylesheets
if grep -Eiq 'https?:' "$page"; then
	grep -Eio '.{0,40}https?:.{0,40}' "$page" | head -3 >&2
	fail "the page names an http(s) URL"
fi
if grep -Eio '\ssrc="[^"]*"' "$page" | grep -Eiv 'src="data:' | grep -q .; then
	fail "the page loads a file: $(grep -Eio '\ssrc="[^"]*"' "$page" | grep -Eiv 'src="data:' | head -1)"
fi
if grep -Eio '\shref="[^"]*"' "$page" | grep -Ev 'href="#' | grep -q .; then
	fail "the page links outside itself: $(grep -Eio '\shref="[^"]*"' "$page" | grep -Ev 'href="#' | head -1)"
fi
if grep -Eiq '<link[ >]|@import|url\((["'"'"']?)[^d"'"'"')]' "$page"; then
	fail "the page refers to a stylesheet or url() outside itself"
fi

# 2. render it
profile="$(mktemp -d)"
flags=(--headless --no-sandbox --disable-gpu --disable-background-networking --disable-component-update
	--disable-sync --no-first-run --disable-default-apps --user-data-dir="$profile"
	--virtual-time-budget=5000 --window-size=1280,2400)
note "rendering $page"
timeout 120 "$browser" "${flags[@]}" --dump-dom "file://$page" >"$work/dom.html" 2>"$work/chromium.log" ||
	{ tail -20 "$work/chromium.log" >&2; fail "chromium --dump-dom failed"; }
timeout 120 "$browser" "${flags[@]}" --screenshot="$work/report.png" "file://$page" >>"$work/chromium.log" 2>&1 ||
	{ tail -20 "$work/chromium.log" >&2; fail "chromium --screenshot failed"; }
timeout 120 "$browser" "${flags[@]}" --blink-settings=preferredColorScheme=0 --screenshot="$work/report-dark.png" "file://$page" >>"$work/chromium.log" 2>&1 ||
	note "dark-scheme screenshot failed (not checked)"
rm -rf "$profile"

dom="$work/dom.html"
[ -s "$dom" ] || fail "empty DOM dump"
grep -q 'data-images="ok"' "$dom" ||
	fail "not every image decoded: $(grep -o 'data-images[-a-z]*="[^"]*"' "$dom" | tr '\n' ' ')"

# 3. every chart written beside the page is in the page, decoded
charts=0
for svg in "$dir"/report/*.svg; do
	id="$(basename "$svg" .svg)"
	[ -s "$dir/report/$id.png" ] || fail "chart $id has no PNG beside the page"
	grep -q "<figure class=\"chart\" id=\"$id\"" "$dom" || fail "chart $id missing from the page"
	grep -Eq "<img [^>]*id=\"img-$id\"[^>]*data-decoded=\"yes\"|<img [^>]*data-decoded=\"yes\"[^>]*id=\"img-$id\"" "$dom" ||
		fail "chart $id: image not decoded"
	charts=$((charts + 1))
done
for id in delivery-mean delivery-p95 loss links util-time; do
	[ -s "$dir/report/$id.svg" ] || fail "expected chart $id not written"
done
ls "$dir"/report/event-*.svg >/dev/null 2>&1 || fail "no failure-event chart written"
total="$(grep -o 'data-images-total="[0-9]*"' "$dom" | grep -o '[0-9]*')"
[ "$total" = "$charts" ] || fail "page has $total images, $charts charts were written"
for t in glance table-delivery-mean table-delivery-p95 table-loss; do
	grep -q "data-table=\"$t\"" "$dom" || fail "table $t missing"
done
grep -q 'class="best"' "$dom" || fail "no best agent highlighted in the tables"
grep -q 'id="recovery"' "$dom" || fail "recovery section missing"

# 4. the screenshot is an image of some size
[ "$(stat -c %s "$work/report.png")" -gt 20000 ] || fail "screenshot $work/report.png is (nearly) empty"

note "OK: $charts charts and 4 tables rendered and decoded, nothing loaded from outside; screenshot $work/report.png"
