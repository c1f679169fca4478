#!/usr/bin/env bash
# Installs what whirlfit needs to build on a fresh Debian or Ubuntu machine:
# a C compiler and the OpenGL/X11 headers that Fyne's cgo driver links
# against. Only packages that are missing are installed. With --test it also
# installs the tools the test suite and benchmarks use (sox for the outside
# encoder check); with --screenshots what scripts/screenshots.sh needs (Xvfb
# and ffmpeg's X11 capture).
set -euo pipefail
want=(gcc pkg-config libgl1-mesa-dev libx11-dev libxcursor-dev libxrandr-dev
      libxinerama-dev libxi-dev libxxf86vm-dev libxkbcommon-dev)
case "${1:-}" in
  --test) want+=(sox) ;;
  --screenshots) want+=(xvfb xauth ffmpeg) ;;
esac
missing=()
for p in "${want[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if ((${#missing[@]})); then
  echo "whirlfit setup: installing ${missing[*]}" >&2
  SUDO=""
  if [[ $(id -u) -ne 0 ]]; then SUDO=sudo; fi
  export DEBIAN_FRONTEND=noninteractive
  $SUDO apt-get update -qq
  $SUDO apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
fi
if ! command -v go >/dev/null 2>&1; then
  if [[ -x /usr/local/go/bin/go ]]; then export PATH=$PATH:/usr/local/go/bin; else
    echo "whirlfit setup: Go 1.26 or newer is needed (https://go.dev/doc/install)" >&2; exit 1; fi
fi
