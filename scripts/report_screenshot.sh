#!/usr/bin/env bash
# The README's picture of the design-review page: renders the bundled greenhouse-valve report and
# takes a screenshot of its first screen in headless Chromium (docs/report_first_screen.png).
# Run after ./run.sh build.
set -euo pipefail
cd "$(dirname "$0")/.."
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
build/bin/coilkick report models/scenarios/greenhouse_valve.toml --output "$out/review.html" --samples 50 --quiet
chromium --headless --no-sandbox --disable-gpu --hide-scrollbars --window-size=1100,1300 \
  --screenshot="$PWD/docs/report_first_screen.png" "file://$out/review.html" 2>/dev/null
echo "scripts/report_screenshot.sh: docs/report_first_screen.png"
