#!/usr/bin/env bash
# Take docs/screenshot.png: the release build of flowrise on the apartment
# demo in a real window under Xvfb (software OpenGL via Mesa llvmpipe).
#
# Usage: scripts/screenshot.sh [PROJECT.ron] [OUT.png] [WIDTHxHEIGHT]
# Needs: xvfb, xauth, imagemagick (installed with apt-get when missing).
set -euo pipefail
cd "$(dirname "$0")/.."
project="${1:-demo-projects/apartment-block-heat-pump.ron}"
out="${2:-docs/screenshot.png}"
size="${3:-1440x900}"
wait_s="${SCREENSHOT_WAIT_S:-6}"

if ! command -v xvfb-run >/dev/null || ! command -v import >/dev/null; then
    apt-get update
    apt-get install -y xvfb xauth imagemagick
fi
# FLOWRISE_BIN: use this binary instead of building the release one.
bin="${FLOWRISE_BIN:-${CARGO_TARGET_DIR:-target}/release/flowrise}"
[ -n "${FLOWRISE_BIN:-}" ] || cargo build --release -p flowrise
mkdir -p "$(dirname "$out")"
# A throwaway config dir so stored preferences do not change the picture.
export XDG_CONFIG_HOME="$(mktemp -d)" XDG_DATA_HOME="$(mktemp -d)" XDG_RUNTIME_DIR="$(mktemp -d)"
export FLOWRISE_WINDOW_SIZE="$size" FLOWRISE_RECOVERY_DIR="$(mktemp -d)"
xvfb-run -a -s "-screen 0 ${size}x24 -nolisten tcp" bash -c "
    '$bin' '$project' & pid=\$!
    sleep '$wait_s'
    # The pointer off the window's tooltips, when xdotool is there.
    command -v xdotool >/dev/null && xdotool mousemove 1 1 && sleep 1
    import -window root '$out'
    kill \$pid
    wait \$pid 2>/dev/null || true
"
echo "wrote $out"
