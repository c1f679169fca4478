package analysis

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Degenerate tracks must never panic and must give finite numbers or no
// step at all (regression: an index-out-of-range panic was once seen in the
// interval code). Invented tracks.

// degenerateTrack builds a track of n samples, hop 5 ms, from shape.
func degenerateTrack(n int, shape func(i int) float64, kernel []float64) *Track {
	tr := &Track{Blades: 2, Kernel: kernel, KernelDtS: synthKernelDtS}
	for i := 0; i < n; i++ {
		tr.TimeS = append(tr.TimeS, 0.02+0.005*float64(i))
		tr.ShaftHz = append(tr.ShaftHz, shape(i))
		tr.SigmaHz = append(tr.SigmaHz, 0.5)
		tr.Confidence = append(tr.Confidence, 1)
	}
	return tr
}

func checkFinite(t *testing.T, res []StepResult) {
	t.Helper()
	for _, r := range res {
		for _, e := range []*Estimate{&r.TauS, r.DeadTimeS, r.T63S, r.T95S, &r.Rise1090S, &r.RPMBefore, &r.RPMAfter, &r.DeltaRPM, &r.BandwidthHz} {
			if e == nil {
				continue
			}
			for _, v := range []float64{e.Value, e.CI95[0], e.CI95[1]} {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Errorf("non-finite value in %+v (warnings %q)", *e, r.Warnings)
				}
			}
		}
		if math.IsNaN(r.ResidualRMSRPM) || math.IsInf(r.ResidualRMSRPM, 0) {
			t.Errorf("non-finite residual RMS")
		}
	}
}

func TestDegenerateTracks(t *testing.T) {
	k := hann2Kernel(0.04, synthKernelDtS)
	nan := math.NaN()
	cases := []struct {
		name  string
		n     int
		shape func(i int) float64
		k     []float64
	}{
		{"empty", 0, nil, k},
		{"three samples", 3, func(int) float64 { return 300 }, k},
		{"eight samples", 8, func(i int) float64 { return 300 + float64(i) }, k},
		{"all NaN", 200, func(int) float64 { return nan }, k},
		{"constant", 200, func(int) float64 { return 300 }, k},
		{"constant, no kernel", 200, func(int) float64 { return 300 }, nil},
		{"zero", 200, func(int) float64 { return 0 }, k},
		{"huge spikes", 300, func(i int) float64 {
			if i%17 == 0 {
				return 1e9
			}
			return 300
		}, k},
		{"infinite samples", 300, func(i int) float64 {
			if i%23 == 0 {
				return math.Inf(1)
			}
			if i > 150 {
				return 400
			}
			return 300
		}, k},
		{"alternating NaN", 300, func(i int) float64 {
			if i%2 == 0 {
				return nan
			}
			if i > 150 {
				return 400
			}
			return 300
		}, k},
		{"one valid sample", 300, func(i int) float64 {
			if i == 100 {
				return 300
			}
			return nan
		}, k},
		{"step then NaN", 300, func(i int) float64 {
			switch {
			case i < 100:
				return 300
			case i < 104:
				return 400
			}
			return nan
		}, k},
		{"negative kernel", 200, func(i int) float64 {
			if i > 100 {
				return 400
			}
			return 300
		}, []float64{-1, 2, -1}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			shape := c.shape
			if shape == nil {
				shape = func(int) float64 { return 0 }
			}
			tr := degenerateTrack(c.n, shape, c.k)
			for _, cmds := range [][]float64{nil, {0.1, 0.5, 0.52, 5, math.NaN(), math.Inf(1)}} {
				res, warns := AnalyseSteps(tr, StepConfig{CommandTimesS: cmds, Bootstrap: 20})
				checkFinite(t, res)
				t.Logf("commands %v: %d steps, warnings %q", cmds, len(res), warns)
			}
		})
	}
}

// TestRandomDegenerateTracks feeds short random tracks with NaN stretches,
// spikes, steps and duplicate or decreasing times (seeded).
func TestRandomDegenerateTracks(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	k := hann2Kernel(0.03, synthKernelDtS)
	for trial := 0; trial < 60; trial++ {
		n := rng.IntN(400)
		level := 50 + 500*rng.Float64()
		tr := degenerateTrack(n, func(i int) float64 {
			switch u := rng.Float64(); {
			case u < 0.1:
				return math.NaN()
			case u < 0.13:
				return level * (1 + 10*rng.Float64())
			case u < 0.14:
				return 0
			}
			if i > n/2 {
				return level * 1.3
			}
			return level + rng.NormFloat64()
		}, k)
		if trial%7 == 3 && n > 10 {
			tr.TimeS[n/3] = tr.TimeS[n/3-1] // a repeated time
		}
		if trial%11 == 5 {
			for i := range tr.SigmaHz {
				tr.SigmaHz[i] = math.NaN()
			}
		}
		var cmds []float64
		if trial%2 == 0 && n > 0 {
			cmds = []float64{tr.TimeS[n/2] - 0.01, tr.TimeS[n/2] + 0.3*rng.Float64()}
		}
		res, _ := AnalyseSteps(tr, StepConfig{CommandTimesS: cmds, Bootstrap: 10, Seed: uint64(trial)})
		checkFinite(t, res)
	}
}

// FuzzAnalyseSteps decodes bytes into a track (one sample per byte pair)
// and requires AnalyseSteps not to panic.
func FuzzAnalyseSteps(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5, 6, 7, 8}, 0.1)
	f.Add(make([]byte, 200), 0.3)
	seed := make([]byte, 300)
	for i := range seed {
		seed[i] = byte(100 + 50*(i/150))
	}
	f.Add(seed, 0.5)
	k := hann2Kernel(0.02, synthKernelDtS)
	f.Fuzz(func(t *testing.T, b []byte, cmd float64) {
		if len(b) > 4000 {
			return
		}
		tr := degenerateTrack(len(b), func(i int) float64 {
			if b[i] == 255 {
				return math.NaN()
			}
			return 4 * float64(b[i])
		}, k)
		res, _ := AnalyseSteps(tr, StepConfig{Bootstrap: 5})
		checkFinite(t, res)
		res, _ = AnalyseSteps(tr, StepConfig{CommandTimesS: []float64{cmd}, Bootstrap: 5})
		checkFinite(t, res)
	})
}
