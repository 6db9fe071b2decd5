#!/usr/bin/env bash
# Check the window against a real desktop file-dialog portal (the path the
# automatic tests cannot take: they run without one). Starts Xvfb, a D-Bus
# session, xdg-desktop-portal with its GTK backend, and the release build on
# the flat demo; opens File → Save as…, takes a picture of the desktop's
# dialog, types a path into it and checks that the project was written there.
#
# Usage: scripts/portal-dialog-check.sh [OUT_DIR]   (pictures: OUT_DIR/portal-*.png)
# Needs: xvfb, xdotool, imagemagick, dbus, xdg-desktop-portal,
# xdg-desktop-portal-gtk (installed with apt-get when missing).
# The menu coordinates assume the default layout at 1280×800.
set -euo pipefail
cd "$(dirname "$0")/.."
out="${1:-/tmp/flowrise-portal}"
mkdir -p "$out"
need=()
for p in Xvfb:xvfb xdotool:xdotool import:imagemagick dbus-run-session:dbus; do
    command -v "${p%%:*}" >/dev/null || need+=("${p#*:}")
done
[ -x /usr/libexec/xdg-desktop-portal ] || need+=(xdg-desktop-portal)
[ -x /usr/libexec/xdg-desktop-portal-gtk ] || need+=(xdg-desktop-portal-gtk)
if [ ${#need[@]} -gt 0 ]; then
    apt-get update
    DEBIAN_FRONTEND=noninteractive apt-get install -y "${need[@]}"
fi
bin="${FLOWRISE_BIN:-${CARGO_TARGET_DIR:-target}/release/flowrise}"
[ -n "${FLOWRISE_BIN:-}" ] || cargo build --release -p flowrise

work="$(mktemp -d)"
export XDG_CONFIG_HOME="$work/config" XDG_DATA_HOME="$work/data" XDG_RUNTIME_DIR="$work/run"
mkdir -p "$XDG_CONFIG_HOME/xdg-desktop-portal" "$XDG_DATA_HOME" "$XDG_RUNTIME_DIR"
chmod 700 "$XDG_RUNTIME_DIR"
printf '[preferred]\ndefault=gtk\n' >"$XDG_CONFIG_HOME/xdg-desktop-portal/portals.conf"
export XDG_CURRENT_DESKTOP=GNOME FLOWRISE_WINDOW_SIZE=1280x800 FLOWRISE_RECOVERY_DIR="$work/recovery"
cp demo-projects/flat-six-radiators.ron "$work/flat.ron"
target="$work/saved-through-the-portal.ron"

display=":$((70 + RANDOM % 20))"
Xvfb "$display" -screen 0 1280x800x24 -nolisten tcp &
xvfb=$!
trap 'kill $xvfb 2>/dev/null || true' EXIT
sleep 2
export DISPLAY="$display" OUT="$out" BIN="$bin" TARGET="$target" FLAT="$work/flat.ron"
dbus-run-session -- bash -c '
    /usr/libexec/xdg-desktop-portal-gtk -r >"$OUT/portal-gtk.log" 2>&1 &
    /usr/libexec/xdg-desktop-portal -r >"$OUT/portal.log" 2>&1 &
    sleep 3
    "$BIN" "$FLAT" >"$OUT/app.log" 2>&1 &
    app=$!
    sleep 8
    xdotool mousemove 232 12 click 1; sleep 1          # File
    xdotool mousemove 250 140 click 1; sleep 5         # Save as…
    w=$(xdotool search --onlyvisible --name "Save the project" | head -1 || true)
    import -window root "$OUT/portal-dialog.png"
    if [ -n "$w" ]; then
        xdotool mousemove 500 26 click 1; sleep 0.3    # the name field
        xdotool key ctrl+a; xdotool type --delay 20 "$TARGET"; sleep 0.5
        xdotool key Return; sleep 3
    fi
    import -window root "$OUT/portal-after.png"
    kill $app
'
if [ -s "$target" ] && grep -q 'format: "flowrise-project"' "$target"; then
    echo "ok: the desktop portal's dialog saved $target (pictures in $out)"
else
    echo "FAILED: nothing saved through the portal (pictures and logs in $out)" >&2
    exit 1
fi
