package analysis

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// BenchmarkTrackSignal tracks 10 s of a 48 kHz recording with steps (both
// passes, all cores).
func BenchmarkTrackSignal(b *testing.B) {
	traj := synth.Steps(200, synth.Step{CommandS: 3, TargetHz: 350, TauS: 0.03}, synth.Step{CommandS: 7, TargetHz: 250, TauS: 0.05})
	x, err := synth.Render(synth.Scene{SampleRate: 48000, DurationS: 10, Shaft: traj, Rotor: synth.NewRotor(3, 7), SNRdB: 10, Seed: 1})
	if err != nil {
		b.Fatal(err)
	}
	sig := dsp.Signal{Samples: x, SampleRate: 48000}
	b.ReportAllocs()
	b.SetBytes(int64(4 * len(x)))
	for b.Loop() {
		if _, _, err := TrackSignal(context.Background(), sig, TrackConfig{Blades: 3}, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// benchFrame is a 4096-point noise frame at 48 kHz with the search grid
// (40–1000 Hz, 0.25 %) and its three-blade comb, and the scratch to score it.
func benchFrame() (re, im, z, pk, sal []float32, comb *combTable) {
	const n = 4096
	rng := rand.New(rand.NewPCG(1, 1))
	re, im = make([]float32, n/2+1), make([]float32, n/2+1)
	for k := range re {
		re[k], im[k] = float32(rng.NormFloat64()), float32(rng.NormFloat64())
	}
	grid := newCandidateGrid(40, 1000, candidateStep)
	comb = newCombTable(grid, 48000.0/n, len(re), 3, combHarmonics)
	z, pk = make([]float32, len(re)), make([]float32, len(re))
	return re, im, z, pk, make([]float32, len(grid)), comb
}

// BenchmarkSalienceFrame is the search pass's per-frame work in its
// per-candidate form: whitening a 4096-point frame and the salience of
// every candidate. It must not allocate.
func BenchmarkSalienceFrame(b *testing.B) {
	re, im, z, pk, sal, comb := benchFrame()
	var wh whitener
	wh.whiten(z, pk, re, im)
	b.ReportAllocs()
	for b.Loop() {
		wh.whiten(z, pk, re, im)
		comb.salience(sal, z, pk, 0, len(sal))
	}
}

func TestSalienceNoAlloc(t *testing.T) {
	const n = 1024
	re, im := make([]float32, n/2+1), make([]float32, n/2+1)
	for k := range re {
		re[k] = float32(k % 7)
		im[k] = 1
	}
	grid := newCandidateGrid(40, 1000, candidateStep)
	comb := newCombTable(grid, 16000.0/n, len(re), 2, combHarmonics)
	z, pk := make([]float32, len(re)), make([]float32, len(re))
	sal := make([]float32, len(grid))
	var wh whitener
	wh.whiten(z, pk, re, im)
	if a := testing.AllocsPerRun(20, func() {
		wh.whiten(z, pk, re, im)
		comb.salience(sal, z, pk, 0, len(grid))
	}); a != 0 {
		t.Errorf("%g allocations per frame, want 0", a)
	}
}

// Noise-only statistics behind emptyCost and noiseSD: the value v of one
// comb position (posValue) on white noise, at positions spread over the
// spectrum.
func TestWhitenNoiseStatistics(t *testing.T) {
	const n, fs = 2048, 48000.0
	rng := rand.New(rand.NewPCG(7, 7))
	x := make([]float32, 40*n)
	for i := range x {
		x[i] = float32(rng.NormFloat64())
	}
	var sum, sum2 float64
	cnt := 0
	var wh whitener
	z, pk := make([]float32, n/2+1), make([]float32, n/2+1)
	err := dsp.STFTConfig{FrameLen: n, Hop: n, FFTLen: n, Workers: 1}.Process(context.Background(), x, fs, func(_, _ int, re, im []float32) {
		wh.whiten(z, pk, re, im)
		for xb := 20.37; xb < float64(len(z)-20); xb += 3.1 {
			sg := matchTolerance(xb)
			v := float64(posValue(z, pk, float32(xb), float32(1/(4*sg*sg))))
			sum += v
			sum2 += v * v
			cnt++
		}
	}, nil)
	if err != nil {
		t.Fatal(err)
	}
	mean := sum / float64(cnt)
	sd := math.Sqrt(sum2/float64(cnt) - mean*mean)
	t.Logf("noise-only comb position: mean v %.3f nepers, sd %.3f (emptyCost %.2f, noiseSD %.2f), %d positions", mean, sd, emptyCost, noiseSD, cnt)
	if mean > emptyCost || mean < emptyCost-0.3 || sd > 1.3*noiseSD || sd < 0.7*noiseSD {
		t.Errorf("noise statistics mean %.3f sd %.3f do not match emptyCost %.2f / noiseSD %.2f", mean, sd, emptyCost, noiseSD)
	}
}

// whitenBelow must agree exactly with whiten below its limit, for any limit.
func TestWhitenBelowAgrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	for _, n := range []int{129, 513, 2049} {
		re, im := make([]float32, n), make([]float32, n)
		for k := range re {
			a := float32(1 + 50*rng.Float64()*rng.Float64())
			re[k], im[k] = a*float32(rng.NormFloat64()), a*float32(rng.NormFloat64())
		}
		var full, part whitener
		z, pk := make([]float32, n), make([]float32, n)
		full.whiten(z, pk, re, im)
		for _, limit := range []int{0, 1, 7, 8, 9, 33, n / 3, n/2 + 1, n - 9, n - 1, n} {
			z2, pk2 := make([]float32, n), make([]float32, n)
			part.whitenBelow(z2, pk2, re, im, limit)
			for k := range min(limit, n-1) {
				if z2[k] != z[k] || pk2[k] != pk[k] {
					t.Fatalf("n %d limit %d: bin %d z %g pk %g, whiten gives %g %g", n, limit, k, z2[k], pk2[k], z[k], pk[k])
				}
			}
		}
	}
}

// The scatter form of the search salience equals the per-candidate form
// bit for bit, for comb orders 0–5, on noise and on noise with combs.
func TestScatterSalienceAgrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for _, n := range []int{1024, 4096} {
		bins := n/2 + 1
		grid := newCandidateGrid(40, 1000, candidateStep)
		for order := 0; order <= 5; order++ {
			comb := newCombTable(grid, 48000.0/float64(n), bins, order, combHarmonics)
			sc := newScatter(comb, bins)
			re, im := make([]float32, bins), make([]float32, bins)
			z, pk := make([]float32, bins), make([]float32, bins)
			a, b := make([]float32, len(grid)), make([]float32, len(grid))
			var wh whitener
			for trial := range 4 {
				for k := range re {
					re[k], im[k] = float32(rng.NormFloat64()), float32(rng.NormFloat64())
				}
				if trial > 0 {
					f := 60 + 500*rng.Float64()
					for h := 1; h < 40; h++ {
						x := float64(h) * f / (48000.0 / float64(n))
						if j := int(x); j+1 < bins {
							re[j] += float32(20 * rng.Float64())
							re[j+1] += float32(10 * rng.Float64())
						}
					}
				}
				lim := comb.readLimit(len(grid))
				wh.whitenBelow(z, pk, re, im, lim)
				comb.salience(a, z, pk, 0, len(grid))
				sc.salience(b, z, pk, lim)
				for k := range a {
					if a[k] != b[k] {
						t.Fatalf("n %d order %d trial %d candidate %d (%.2f Hz): scatter %g, gather %g", n, order, trial, k, grid[k], b[k], a[k])
					}
				}
			}
		}
	}
}

// BenchmarkScatterSalienceFrame is the same work as the search pass does
// it: whitening below the combs' reach and the scatter form of the salience.
func BenchmarkScatterSalienceFrame(b *testing.B) {
	re, im, z, pk, sal, comb := benchFrame()
	sc := newScatter(comb, len(re))
	var wh whitener
	lim := comb.readLimit(len(sal))
	wh.whitenBelow(z, pk, re, im, lim)
	b.ReportAllocs()
	for b.Loop() {
		wh.whitenBelow(z, pk, re, im, lim)
		sc.salience(sal, z, pk, lim)
	}
}

// smallestK agrees with dsp.SelectK (and so with a sort) on random blocks,
// ties included.
func TestSmallestK(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	buf := make([]float32, 40)
	for trial := range 2000 {
		n := 1 + rng.IntN(40)
		x := make([]float32, n)
		for i := range x {
			x[i] = float32(rng.IntN(12)) // ties
			if trial%2 == 0 {
				x[i] = float32(rng.NormFloat64())
			}
		}
		k := rng.IntN(n)
		orig := slices.Clone(x)
		got := smallestK(x, k, buf)
		if !slices.Equal(x, orig) {
			t.Fatal("smallestK changed its input")
		}
		want := dsp.SelectK(slices.Clone(x), k)
		if got != want {
			t.Fatalf("n %d k %d: smallestK %g, SelectK %g", n, k, got, want)
		}
	}
}

// columnMedians agrees with gathering each column and selecting its
// median, with and without a frame filter.
func TestColumnMedians(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	const T, K = 257, 83
	sal := make([]float32, T*K)
	for i := range sal {
		sal[i] = float32(rng.NormFloat64())
	}
	for _, keep := range []func(t, k int) bool{nil, func(t, k int) bool { return (t+k)%3 != 0 && k != 5 }} {
		med, n := columnMedians(sal, T, K, keep)
		for k := 0; k < K; k++ {
			var col []float32
			for t := 0; t < T; t++ {
				if keep == nil || keep(t, k) {
					col = append(col, sal[t*K+k])
				}
			}
			if n[k] != len(col) {
				t.Fatalf("column %d: count %d, want %d", k, n[k], len(col))
			}
			if len(col) > 0 && med[k] != dsp.SelectK(col, len(col)/2) {
				t.Fatalf("column %d: median %g, want %g", k, med[k], dsp.SelectK(col, len(col)/2))
			}
		}
	}
}
