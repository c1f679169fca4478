package figure

import (
	"math"
	"math/rand/v2"

	"whirlfit/analysis"
	"whirlfit/dsp"
)

// fixtureStep is an invented step of the test recording.
type fixtureStep struct {
	dir                analysis.Direction
	cmdS, deadS, tauS  float64
	fromRPM, toRPM     float64
	tauHW, deadHW, rHW float64 // interval half-widths
}

// fixtureReport builds an invented report: a 3 s recording at 16 kHz
// whose shaft speed follows FOPDT steps, a spectrogram with the shaft line,
// the blade-pass line (2 blades) and its second harmonic over a seeded
// noise floor, and a track of the true speed with small seeded noise.
func fixtureReport(file string, seed uint64, tauUp float64) *analysis.Report {
	steps := []fixtureStep{
		{analysis.Up, 1.0, 0.010, tauUp, 9000, 13200, tauUp * 0.06, 0.0012, 12},
		{analysis.Down, 2.0, 0.012, 0.060, 13200, 9000, 0.004, 0.0015, 12},
	}
	speed := func(t float64) float64 { // rpm
		r := steps[0].fromRPM
		for _, s := range steps {
			if on := s.cmdS + s.deadS; t >= on {
				r = s.fromRPM + (s.toRPM-s.fromRPM)*(1-math.Exp(-(t-on)/s.tauS))
			}
		}
		return r
	}
	const fs, frameLen, hop, blades = 16000.0, 1024, 128, 2
	n := int(3 * fs)
	sp := &dsp.Spectrogram{FrameLen: frameLen, Hop: hop, FFTLen: frameLen, SampleRate: fs}
	sp.Frames = 1 + (n-frameLen)/hop
	sp.Bins = frameLen/2 + 1
	sp.Mag = make([]float32, sp.Frames*sp.Bins)
	rng := rand.New(rand.NewPCG(seed, 99))
	ref := MagRef(sp)
	df := fs / frameLen
	tr := &analysis.Track{Blades: blades, KernelDtS: hop / fs, Kernel: []float64{0.1, 0.2, 0.4, 0.2, 0.1}}
	for i := 0; i < sp.Frames; i++ {
		t := sp.FrameTimeS(i)
		shaft := analysis.ShaftHz(speed(t))
		row := sp.Row(i)
		for k := range row {
			f := float64(k) * df
			m := 1e-4 * (0.5 + rng.Float64()) // ≈ −80 dB floor
			for h, lvl := range map[float64]float64{1: 0.02, blades: 0.3, 2 * blades: 0.05} {
				d := (f - h*shaft) / (1.2 * df)
				m += lvl * math.Exp(-d*d/2)
			}
			row[k] = float32(ref * m)
		}
		tr.TimeS = append(tr.TimeS, t)
		// The track sees the speed through its kernel (as analysis.Track
		// documents), plus noise.
		var seen float64
		for j, w := range tr.Kernel {
			seen += w * speed(t+float64(j-2)*tr.KernelDtS)
		}
		hz := analysis.ShaftHz(seen) + rng.NormFloat64()*0.3
		if t > 2.6 && t < 2.65 { // a dropout
			hz = math.NaN()
		}
		tr.ShaftHz = append(tr.ShaftHz, hz)
		tr.SigmaHz = append(tr.SigmaHz, 0.3)
		tr.Confidence = append(tr.Confidence, 0.9)
	}
	rep := &analysis.Report{File: "/some/where/" + file, Blades: blades, SampleRateHz: fs, DurationS: 3,
		Track: tr, Spectrogram: sp, Warnings: []string{}}
	for _, s := range steps {
		cmd := s.cmdS
		dead := est(s.deadS, s.deadHW)
		rep.Steps = append(rep.Steps, analysis.StepResult{
			Direction: s.dir, CommandS: &cmd, ResponseStartS: s.cmdS + s.deadS, DeadTimeS: &dead,
			TauS: est(s.tauS, s.tauHW), RPMBefore: est(s.fromRPM, s.rHW), RPMAfter: est(s.toRPM, s.rHW),
			DeltaRPM: est(s.toRPM-s.fromRPM, 1.4*s.rHW), BandwidthHz: est(1/(2*math.Pi*s.tauS), 0.1),
			Rise1090S: est(s.tauS*math.Log(9), s.tauHW*math.Log(9)), Warnings: []string{},
		})
	}
	return rep
}

func est(v, hw float64) analysis.Estimate {
	return analysis.Estimate{Value: v, CI95: [2]float64{v - hw, v + hw}}
}
