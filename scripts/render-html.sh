#!/usr/bin/env bash
# Renders an HTML report with headless Chromium to a PNG and fails when the
# page logs console errors, so layout regressions can be looked at and
# broken pages caught.
#
# Usage: scripts/render-html.sh [path/to/report.html] [out.png]
#   Without a path, builds the demo report with `telltale demo --report <tmp>`.
#   The PNG goes to $2, or next to the report as report.png.
#
# Console check: Chromium is run with --enable-logging=stderr --v=0, which
# writes every console message of the page to stderr as
# `...:CONSOLE(line)] "message"`, and uncaught exceptions as "Uncaught ...".
# A failed load logs `net::ERR_...`. Any such line fails the run (the report
# has no scripts and loads nothing, so none is expected). Checked here by
# rendering a page whose script calls console.error and an undefined
# function: both lines appear as `INFO:CONSOLE:1] "..."`.
# The page must also not refer to any address (http/https, src=, <link>):
# it is checked before rendering.
set -euo pipefail

repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"

if ! command -v chromium >/dev/null 2>&1; then
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium
fi

if [[ $# -ge 1 ]]; then
    report="$(realpath "$1")"
else
    out_dir="$(mktemp -d)"
    (cd "$repo_root" && cargo run --release -- demo --report "$out_dir")
    report="$out_dir/report.html"
fi
[[ -f "$report" ]] || { echo "no report at $report" >&2; exit 2; }
png="$(realpath -m "${2:-${report%.html}.png}")"

if grep -Eiq 'https?://|src=|<link|<script' "$report"; then
    echo "FAIL: $report refers to an outside resource or carries a script" >&2
    grep -Eion '.{0,30}(https?://|src=|<link|<script).{0,30}' "$report" >&2 || true
    exit 1
fi

profile="$(mktemp -d)"
log="$(mktemp)"
trap 'rm -rf "$profile" "$log"' EXIT

chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --hide-scrollbars --user-data-dir="$profile" \
    --enable-logging=stderr --v=0 \
    --window-size=1280,4000 --screenshot="$png" "file://$report" 2>"$log" >/dev/null

console_pattern='CONSOLE|Uncaught|net::ERR_'
if grep -Eq "$console_pattern" "$log"; then
    echo "FAIL: the page logged console messages or failed loads:" >&2
    grep -E "$console_pattern" "$log" >&2
    exit 1
fi
[[ -s "$png" ]] || { echo "FAIL: no screenshot written" >&2; cat "$log" >&2; exit 1; }
echo "rendered $report -> $png"
