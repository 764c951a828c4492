#!/usr/bin/env bash
# Renders an HTML report (e.g. from `lampwright qc ... --report FILE.html`) to a PNG with Debian's
# chromium in headless mode, to check by eye that it renders. Chromium is not a build dependency:
# install it yourself (apt-get install chromium) if you want this check.
# Usage: tools/screenshot_report.sh REPORT.html [OUT.png] [WIDTHxHEIGHT]
set -euo pipefail

if [ $# -lt 1 ] || [ "$1" = "-h" ] || [ "$1" = "--help" ]; then
    echo "usage: $0 REPORT.html [OUT.png] [WIDTHxHEIGHT (default 1280x2000)]" >&2
    exit 2
fi
report=$1
out=${2:-${report%.html}.png}
size=${3:-1280x2000}
if [ ! -f "$report" ]; then
    echo "$0: no such file: $report" >&2
    exit 1
fi
browser=""
for b in chromium chromium-browser; do
    if command -v "$b" >/dev/null 2>&1; then browser=$b; break; fi
done
if [ -z "$browser" ]; then
    echo "$0: chromium is not installed (apt-get install chromium); no screenshot taken" >&2
    exit 3
fi

abs_report=$(cd "$(dirname "$report")" && pwd)/$(basename "$report")
case "$out" in /*) abs_out=$out ;; *) abs_out=$(pwd)/$out ;; esac
url="file://${abs_report// /%20}"
rm -f "$abs_out"
profile=$(mktemp -d)
trap 'rm -rf "$profile"' EXIT

# No network: the report is self-contained; the flags keep chromium from calling home too.
"$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --user-data-dir="$profile" --screenshot="$abs_out" --window-size="${size/x/,}" \
    "$url" >/dev/null 2>&1 || true

if [ ! -s "$abs_out" ]; then
    echo "$0: chromium made no screenshot of $report" >&2
    exit 1
fi
echo "wrote $abs_out"
