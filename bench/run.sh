#!/bin/sh
# bench/run.sh: time the magnitude STFT of 60 s of 48 kHz mono with
# whirlfit's dsp package (2 workers and 1), FFTW (float32, one r2c plan,
# FFTW_MEASURE, single thread) and scipy.signal.stft (Debian python3-scipy,
# float32 and float64 input), in one run, 5 interleaved rounds; print the
# medians and the ratios. Each Go round is the mean of 3 benchmark
# iterations; FFTW and scipy rounds are single timed calls after planning
# (FFTW) or one warm-up call (scipy).
#
# usage: bench/run.sh            (from anywhere in the repository)
# needs: go, cc, libfftw3-dev, python3-scipy. Other load on the machine
# distorts the figures: the script prints the load average before and after.
set -eu
cd "$(dirname "$0")/.."
ROUNDS=${ROUNDS:-5}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT INT TERM
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3

cc -O2 -o "$tmp/fftw_stft" bench/fftw_stft.c -lfftw3f -lm
go test -c -o "$tmp/dsp.test" ./dsp
echo "load before: $(cat /proc/loadavg)"
echo "cpu: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), $(nproc) cores, GOMAXPROCS default"
: > "$tmp/times"
# Rounds are interleaved (each round runs every tool once) so that a change
# in the machine's load affects all of them alike.
for r in $(seq "$ROUNDS"); do
	for cfg in "1024 128" "4096 512"; do
		set -- $cfg
		"$tmp/fftw_stft" "$1" "$2" 1 2>/dev/null >> "$tmp/times"
		"$PY" bench/scipy_stft.py "$1" "$2" 1 float32 2>/dev/null >> "$tmp/times"
		"$PY" bench/scipy_stft.py "$1" "$2" 1 float64 2>/dev/null >> "$tmp/times"
		for w in 1 2; do
			"$tmp/dsp.test" -test.run '^$' -test.bench "^BenchmarkSTFT60s/$1-hop$2-workers$w\$" \
				-test.benchtime 3x 2>/dev/null |
				awk -v w="$w" -v n="$1" -v h="$2" '/^BenchmarkSTFT60s/ { for (i = 1; i < NF; i++) if ($(i+1) == "cpu-ms/op") c = $i; printf "go-%dworker %s %s %.6f %.6f\n", w, n, h, $3 / 1e9, c / 1e3 }' >> "$tmp/times"
		done
	done
	echo "round $r done, load $(cut -d' ' -f1-3 /proc/loadavg)"
done
echo "load after:  $(cat /proc/loadavg)"
"$PY" - "$tmp/times" <<'PYEOF'
import statistics, sys
rows = {}
for line in open(sys.argv[1]):
    name, n, hop, wall, cpu = line.split()
    d = rows.setdefault((n, hop), {}).setdefault(name, ([], []))
    d[0].append(float(wall))
    d[1].append(float(cpu))
order = ["go-2worker", "go-1worker", "fftw", "scipy-float32", "scipy-float64"]
for (n, hop), d in rows.items():
    print(f"\n60 s of 48 kHz mono, frame {n}, hop {hop}, magnitudes (median of {len(d['fftw'][0])} rounds)")
    wall = {k: statistics.median(v[0]) for k, v in d.items()}
    cpu = {k: statistics.median(v[1]) for k, v in d.items()}
    print(f"  {'':14s} {'wall':>9s} {'x real':>7s} {'cpu':>9s}   wall ratio to go-2worker, cpu ratio to go-1worker")
    for k in order:
        if k in wall:
            print(f"  {k:14s} {wall[k]*1e3:7.1f}ms {60/wall[k]:7.0f} {cpu[k]*1e3:7.1f}ms"
                  f"   {wall[k]/wall['go-2worker']:5.2f}x  {cpu[k]/cpu['go-1worker']:5.2f}x")
    print("  rounds (wall ms): " + "; ".join(f"{k} " + " ".join(f"{x*1e3:.0f}" for x in d[k][0]) for k in order if k in d))
PYEOF
