#!/usr/bin/env bash
# Sets up a fresh machine and runs every gate: gofmt, go vet, staticcheck,
# the race detector on the headless packages, and all tests.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh --test
export PATH=$PATH:/usr/local/go/bin
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
echo "== go test -race (dsp, analysis)"
go test -race -count=1 -timeout 30m ./dsp/... ./analysis/...
echo "== go test (app, ui, assets)"
go test -count=1 -timeout 30m ./app/... ./ui/... ./assets/...
