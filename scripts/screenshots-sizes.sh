#!/usr/bin/env bash
# The layout screenshots: the four-storey demo and a generated 30-storey
# building, each at 1024x700 and 1920x1080, into docs/.
#
# Usage: scripts/screenshots-sizes.sh
set -euo pipefail
cd "$(dirname "$0")/.."
# FLOWRISE_BIN: use this binary instead of building the release one.
bin="${FLOWRISE_BIN:-${CARGO_TARGET_DIR:-target}/release/flowrise}"
[ -n "${FLOWRISE_BIN:-}" ] || cargo build --release -p flowrise
tall="$(mktemp -d)/thirty-storeys.ron"
"$bin" generate --floors 30 --per-floor 10 -o "$tall"
export FLOWRISE_BIN="$bin"
for size in 1024x700 1920x1080; do
    scripts/screenshot.sh demo-projects/apartment-block-heat-pump.ron "docs/screenshot-four-storeys-$size.png" "$size"
    scripts/screenshot.sh "$tall" "docs/screenshot-thirty-storeys-$size.png" "$size"
done
