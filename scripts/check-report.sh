#!/usr/bin/env bash
# Render a report's index.html in headless Chromium and save a screenshot,
# to check that the page renders offline. The page must be self-contained:
# this script fails if it names any network address, and Chromium runs
# with its networking features off.
#
# Usage: scripts/check-report.sh [REPORT_DIR]
#   REPORT_DIR  a folder written by `wearout ... --report-dir`; without it, a
#               small fresh report of the embedded demo is written first to
#               target/report-check/demo (200 search, 400 validation trials).
# The screenshot goes to target/report-check/<folder name>.png (window
# size from WINDOW_SIZE, default 1200,3000). Look at it.
#
# Needs Debian's `chromium` package (apt-get install chromium); installs
# nothing. Exits 1 when Chromium is missing, the page names a network
# address, or the screenshot is missing or blank.
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v chromium >/dev/null 2>&1; then
    echo "check-report: chromium not found (Debian: apt-get install chromium)" >&2
    exit 1
fi
mkdir -p target/report-check
if [ $# -ge 1 ]; then
    dir="$1"
else
    dir="target/report-check/demo"
    cargo run --release --quiet -- frontier --trials 200 --validate-trials 400 \
        --report-dir "$dir" >/dev/null
fi
index="$dir/index.html"
if [ ! -f "$index" ]; then
    echo "check-report: $index not found; write one with: cargo run --release -- frontier --report" >&2
    exit 1
fi
if grep -Eiq 'https?:|ftp:|//[a-z0-9.-]+\.[a-z]{2,}|www\.' "$index"; then
    echo "check-report: $index names a network address:" >&2
    grep -Eion 'https?:[^" <]*|ftp:[^" <]*|www\.[^" <]*' "$index" | head -5 >&2
    exit 1
fi
out="$(pwd)/target/report-check/$(basename "$dir").png"
rm -f "$out"
profile="$(mktemp -d)"
trap 'rm -rf "$profile"' EXIT
abs_index="$(cd "$(dirname "$index")" && pwd)/$(basename "$index")"
# Chromium may exit non-zero on shutdown noise; the screenshot decides.
timeout 120 chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --user-data-dir="$profile" --hide-scrollbars \
    --screenshot="$out" --window-size="${WINDOW_SIZE:-1200,3000}" \
    "file://$abs_index" >/dev/null 2>&1 || true
# A blank page compresses to a few kilobytes; a rendered report is far more.
size=$(stat -c %s "$out" 2>/dev/null || echo 0)
if [ "$size" -lt 50000 ]; then
    echo "check-report: no screenshot, or a blank one ($size bytes), of $index" >&2
    exit 1
fi
echo "check-report: $index rendered; screenshot: $out"
