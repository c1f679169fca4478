#!/usr/bin/env bash
# Sets up a fresh machine (missing system packages for cgo and Fyne), builds
# whirlfit and opens the window on the embedded demo recording. Arguments are
# passed on: `bash scripts/run.sh analyse rec.wav` runs a subcommand instead.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
export PATH=$PATH:/usr/local/go/bin
# Fyne cannot parse the locale names C and POSIX and says so on every start.
case "${LC_ALL:-${LANG:-}}" in C|C.*|POSIX|"") export LANG=en_US.UTF-8; unset LC_ALL ;; esac
mkdir -p bin
go build -o bin/whirlfit ./app
exec ./bin/whirlfit "$@"
