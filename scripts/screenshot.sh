#!/usr/bin/env bash
# Take docs/screenshot.png: the release build of flowrise on the apartment
# demo in a real window under Xvfb (software OpenGL via Mesa llvmpipe).
#
# Usage: scripts/screenshot.sh [PROJECT.ron] [OUT.png]
# Needs: xvfb, xauth, imagemagick (installed with apt-get when missing).
set -euo pipefail
cd "$(dirname "$0")/.."
project="${1:-demo-projects/apartment-block-heat-pump.ron}"
out="${2:-docs/screenshot.png}"
wait_s="${SCREENSHOT_WAIT_S:-6}"

if ! command -v xvfb-run >/dev/null || ! command -v import >/dev/null; then
    apt-get update
    apt-get install -y xvfb xauth imagemagick
fi
cargo build --release -p flowrise
mkdir -p "$(dirname "$out")"
# A throwaway config dir so stored preferences do not change the picture.
export XDG_CONFIG_HOME="$(mktemp -d)" XDG_DATA_HOME="$(mktemp -d)" XDG_RUNTIME_DIR="$(mktemp -d)"
xvfb-run -a -s "-screen 0 1440x900x24 -nolisten tcp" bash -c "
    target/release/flowrise '$project' & pid=\$!
    sleep '$wait_s'
    import -window root '$out'
    kill \$pid
    wait \$pid 2>/dev/null || true
"
echo "wrote $out"
