package synth

import (
	"math"
	"math/rand/v2"
	"testing"
)

// pureRotor is a single line at the shaft frequency with no randomness and
// a constant amplitude law exponent, so its samples are known in closed form.
func pureRotor() Rotor {
	return Rotor{Blades: 1, BladeHarmonics: 1, BladeLevel: 1, RefHz: 100, LevelExponent: 1e-300}
}

// fopdtPhase is the closed-form integral (in cycles) of a single
// first-order step from f0 to f1 starting at s with time constant tau.
func fopdtPhase(t, f0, f1, s, tau float64) float64 {
	if t <= s {
		return f0 * t
	}
	u := t - s
	return f0*t + (f1-f0)*(u-tau*(1-math.Exp(-u/tau)))
}

func TestPhaseIntegrationExact(t *testing.T) {
	// The rendered line must equal sin(2π(Φ(t) + p)) with Φ the exact
	// integral of the trajectory, across a step and for 20 s: the
	// instantaneous frequency is the trajectory, and the phase is continuous.
	const fs = 48000
	const f0, f1, s, tau = 123.456, 321.0, 7.3, 0.012
	tr := Steps(f0, Step{CommandS: s - 0.004, TargetHz: f1, TauS: tau, DeadS: 0.004})
	r := pureRotor()
	n := 20 * fs
	out := renderRotor(r, tr, n, fs, rand.New(rand.NewPCG(1, 2)), false)
	p := r.Lines(rand.New(rand.NewPCG(1, 2)))[0].PhaseC
	var maxErr float64
	for i := 0; i < n; i++ {
		ti := float64(i) / fs
		want := math.Sin(2 * math.Pi * (fopdtPhase(ti, f0, f1, s, tau) + p))
		maxErr = math.Max(maxErr, math.Abs(out.tonal[i]-want))
	}
	t.Logf("max |rendered − closed form| over 20 s = %.3g", maxErr)
	// Simpson's rule error for e^{−u/τ} with dt = 1/48000, τ = 12 ms is
	// below 1e-12 cycles per sample; 1e-7 leaves room for sin and float64
	// accumulation over 960,000 samples.
	if maxErr > 1e-7 {
		t.Errorf("max error %.3g, want < 1e-7", maxErr)
	}
}

func TestConstantFrequencyZeroCrossings(t *testing.T) {
	// Independent check: a 10 s line at f has 2·f·10 zero crossings (±1).
	for _, f := range []float64{80, 137.5, 550} {
		out := renderRotor(pureRotor(), Constant(f), 10*16000, 16000, rand.New(rand.NewPCG(3, 4)), false)
		var zc int
		for i := 1; i < len(out.tonal); i++ {
			if (out.tonal[i-1] < 0) != (out.tonal[i] < 0) {
				zc++
			}
		}
		want := 2 * f * 10
		t.Logf("f = %g Hz: %d zero crossings in 10 s, want %g", f, zc, want)
		if math.Abs(float64(zc)-want) > 1 {
			t.Errorf("f = %g: %d crossings, want %g ± 1", f, zc, want)
		}
	}
}

func TestLinesAndLaw(t *testing.T) {
	r := NewRotor(3, 7)
	r.SpreadDB = 0
	lines := r.Lines(rand.New(rand.NewPCG(1, 1)))
	amp := map[int]float64{}
	for _, l := range lines {
		amp[l.H] = l.Amp
	}
	cases := []struct {
		h    int
		want float64
	}{
		{3, 1}, {6, 0.5}, {9, 1.0 / 3}, {12, 0.25}, // blade-pass, 1/k
		{1, 0.25}, {2, 0.125}, // shaft line and its 2nd harmonic
		{7, 0.1}, {14, 0.05}, // whine at pole pairs × shaft and twice that
	}
	for _, c := range cases {
		if math.Abs(amp[c.h]-c.want) > 1e-12 {
			t.Errorf("line h=%d: amplitude %g, want %g", c.h, amp[c.h], c.want)
		}
	}
	if len(lines) != len(cases) {
		t.Errorf("%d lines, want %d", len(lines), len(cases))
	}
	// Amplitude law: doubling the speed quadruples the amplitude (exponent 2).
	pr := pureRotor()
	pr.LevelExponent = 0
	a := renderRotor(pr, Constant(100), 48000, 48000, rand.New(rand.NewPCG(1, 1)), false)
	b := renderRotor(pr, Constant(200), 48000, 48000, rand.New(rand.NewPCG(1, 1)), false)
	ratio := math.Sqrt(meanPower(b.tonal) / meanPower(a.tonal))
	t.Logf("amplitude ratio for 2× speed: %.4f", ratio)
	if math.Abs(ratio-4) > 0.01 {
		t.Errorf("amplitude ratio %g, want 4", ratio)
	}
}

func TestNyquistFade(t *testing.T) {
	// At 16 kHz a 550 Hz five-blade rotor's upper blade-pass harmonics
	// (≥ 6.72 kHz) fade or vanish rather than alias.
	r := Rotor{Blades: 5, BladeHarmonics: 4, BladeLevel: 1, BladeRolloff: 1, RefHz: 550}
	out := renderRotor(r, Constant(550), 16000, 16000, rand.New(rand.NewPCG(5, 5)), false)
	// Harmonics 2750 and 5500 Hz survive whole, 8250 and 11000 Hz are
	// above 0.96·Nyquist and vanish: power is (1 + 1/4)/2.
	got := meanPower(out.tonal)
	if math.Abs(got-0.625) > 0.01 {
		t.Errorf("power %g, want 0.625 (two surviving lines)", got)
	}
}
