#!/bin/sh
# Screenshots of each view of the window, for the README.
#
#   scripts/screenshots.sh [FILE]
#
# Builds whirlfit, starts it under Xvfb (software OpenGL) on FILE (the
# built-in demo when omitted) and writes PNGs into docs/screenshots/:
# spectrogram.png, step-rpm.png, rpm.png, markers.png, interval.png, compare.png,
# dark.png and first-run.png. The app drives itself through the views when
# WHIRLFIT_SCREENSHOTS names a folder, then quits. Preferences go to a
# throw-away folder so that your own settings are not touched.
# Installs what it needs when missing (xvfb, ffmpeg, the cgo and X11/GL
# headers for Fyne) through scripts/setup.sh.
set -eu
cd "$(dirname "$0")/.."
bash scripts/setup.sh --screenshots
out="$PWD/docs/screenshots"
mkdir -p "$out"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
go build -o "$tmp/whirlfit" ./app
file=""
if [ $# -gt 0 ]; then
	file=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
fi
export XDG_CONFIG_HOME="$tmp/config" HOME="$tmp/home" LIBGL_ALWAYS_SOFTWARE=1 WHIRLFIT_SCREENSHOTS="$out"
mkdir -p "$HOME"
if [ -n "$file" ]; then
	xvfb-run -a -s "-screen 0 1280x800x24" "$tmp/whirlfit" open "$file"
else
	xvfb-run -a -s "-screen 0 1280x800x24" "$tmp/whirlfit"
fi
ls -l "$out"
