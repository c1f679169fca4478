#!/bin/sh
# Runs each decoder fuzz target in turn for FUZZTIME (default 60s), one
# worker each (FUZZPARALLEL, default 1) so that the machine stays usable.
# A crash stops the script; the failing input is saved under
# dsp/testdata/fuzz/<target>/ and becomes a regression test. Minimizing a
# new input is capped at 10 s so that large seeds do not eat the run.
set -eu
cd "$(dirname "$0")/.."
FUZZTIME=${FUZZTIME:-60s}
FUZZPARALLEL=${FUZZPARALLEL:-1}
for target in FuzzDecodeWAV FuzzDecodeFLAC FuzzDecodeMP3 FuzzDecode; do
	echo "== $target for $FUZZTIME"
	go test ./dsp/ -run '^$' -fuzz "^${target}\$" -fuzztime "$FUZZTIME" -parallel "$FUZZPARALLEL" -fuzzminimizetime 10s
done
