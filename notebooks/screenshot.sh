#!/bin/sh
# screenshot.sh — run a demo notebook headless, write its HTML report and
# take a picture of the report with headless Chromium, so the report's look
# can be checked by eye.
#
#   notebooks/screenshot.sh [NOTEBOOK.ipynb] [OUT.png]
#
# Defaults: notebooks/bead_soak.ipynb and /tmp/massline-shots/NAME.png.
# Run from the root of the repository. Needs Go and /usr/bin/chromium
# (or set CHROMIUM). The executed notebook and the report go to the same
# directory as the picture.
set -eu

nb=${1:-notebooks/bead_soak.ipynb}
name=$(basename "$nb" .ipynb)
png=${2:-/tmp/massline-shots/$name.png}
out=$(dirname "$png")
chromium=${CHROMIUM:-/usr/bin/chromium}

mkdir -p "$out"
go run ./cmd/massline run "$nb" --out "$out" --html

html=$(cd "$out" && pwd)/$name.html
profile=$(mktemp -d)
trap 'rm -rf "$profile"' EXIT INT TERM

"$chromium" --headless --no-sandbox --disable-gpu --disable-background-networking \
	--disable-component-update --disable-sync --no-first-run \
	--user-data-dir="$profile" --hide-scrollbars \
	--screenshot="$png" --window-size=1000,2400 "file://$html" 2>/dev/null

echo "report:     $html"
echo "screenshot: $png"
