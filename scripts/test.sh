#!/usr/bin/env bash
# Sets up a fresh machine and runs every gate: gofmt, go vet, staticcheck,
# the race detector on the headless packages, and all tests.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh --test
export PATH=$PATH:/usr/local/go/bin
# Fyne cannot parse the locale names C and POSIX and says so on every start.
case "${LC_ALL:-${LANG:-}}" in C|C.*|POSIX|"") export LANG=en_US.UTF-8; unset LC_ALL ;; esac
STATICCHECK=honnef.co/go/tools/cmd/staticcheck@v0.8.2

echo "== gofmt"
unformatted=$(gofmt -l $(find . -name '*.go' -not -path './.git/*'))
if [[ -n "$unformatted" ]]; then
  echo "gofmt would change:"; echo "$unformatted"; exit 1
fi
echo "== go vet"
go vet ./...
echo "== staticcheck"
go run "$STATICCHECK" ./...
# The end-to-end sweep (analysis/evaluate) renders and analyses whole
# recordings; it runs without the race detector, which would slow it tenfold
# and finds nothing there that the package tests under -race do not reach.
core=$(go list ./dsp/... ./analysis/... | grep -v '/analysis/evaluate$')
echo "== go test -race (dsp, analysis)"
go test -race -count=1 -timeout 40m $core
echo "== go test (end-to-end sweep, app, ui, assets)"
go test -count=1 -timeout 30m ./analysis/evaluate ./app/... ./ui/... ./assets/...
