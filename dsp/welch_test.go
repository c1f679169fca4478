package dsp

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Two steady lines at 650 and 1300 Hz (a 39,000 rpm shaft and its
// two-blade pass line; invented data) in white noise: the two strongest
// peaks are the lines, at the right frequencies, and the PSD integrates to
// the tones' power A²/2 (Parseval).
func TestAverageSpectrumLines(t *testing.T) {
	const fs = 48000.0
	rng := rand.New(rand.NewPCG(21, 1))
	x := make([]float32, int(3*fs))
	const a1, a2, sigma = 0.2, 0.5, 0.01
	for i := range x {
		tt := float64(i) / fs
		x[i] = float32(a1*math.Sin(2*math.Pi*650.3*tt) + a2*math.Sin(2*math.Pi*1300.6*tt+1) + sigma*rng.NormFloat64() + 0.05)
	}
	a, err := AverageSpectrum(Signal{Samples: x, SampleRate: fs}, 0.5, 2.5, 0)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("NFFT %d (%.2f Hz bins), %d segments, interval %.3f–%.3f s", a.NFFT, a.BinHz(), a.Segments, a.FromS, a.ToS)
	if a.NFFT != 8192 || a.Segments != 1+(96000-8192)/4096 {
		t.Errorf("NFFT %d, %d segments; want 8192, %d", a.NFFT, a.Segments, 1+(96000-8192)/4096)
	}
	p := a.Peaks(4)
	for _, pk := range p {
		t.Logf("peak %.3f Hz, %.2f dB (bin %d%+.3f)", pk.Hz, pk.DB, pk.Bin, pk.Offset)
	}
	if len(p) < 2 {
		t.Fatalf("got %d peaks, want ≥ 2", len(p))
	}
	for i, want := range []float64{1300.6, 650.3} {
		if math.Abs(p[i].Hz-want) > 0.01*a.BinHz() {
			t.Errorf("peak %d at %.4f Hz, want %.4f ± %.3f", i, p[i].Hz, want, 0.01*a.BinHz())
		}
	}
	// Tone power: Σ PSD·Δf over ±4 bins around each line = A²/2
	// (Parseval's relation; within 1 %).
	for i, amp := range []float64{a2, a1} {
		var pow float64
		for k := p[i].Bin - 4; k <= p[i].Bin+4; k++ {
			pow += a.PSD[k] * a.BinHz()
		}
		if want := amp * amp / 2; math.Abs(pow-want)/want > 0.01 {
			t.Errorf("line %d: integrated power %.5g, want A²/2 = %.5g", i, pow, want)
		}
	}
}

// White noise of variance σ² has a one-sided PSD of 2σ²/fs (textbook fact,
// e.g. Bendat & Piersol, Random Data (M)); the average over bins matches it
// to 2 %.
func TestAverageSpectrumNoiseLevel(t *testing.T) {
	const fs, sigma = 8000.0, 0.1
	rng := rand.New(rand.NewPCG(22, 2))
	x := make([]float32, int(20*fs))
	for i := range x {
		x[i] = float32(sigma * rng.NormFloat64())
	}
	a, err := AverageSpectrum(Signal{Samples: x, SampleRate: fs}, 0, 20, 1024)
	if err != nil {
		t.Fatal(err)
	}
	var mean float64
	for k := 1; k < len(a.PSD)-1; k++ {
		mean += a.PSD[k] / float64(len(a.PSD)-2)
	}
	want := 2 * sigma * sigma / fs
	t.Logf("mean PSD %.4g /Hz, want 2σ²/fs = %.4g", mean, want)
	if math.Abs(mean-want)/want > 0.02 {
		t.Errorf("mean PSD %.4g, want %.4g ± 2 %%", mean, want)
	}
}

func TestAverageSpectrumErrors(t *testing.T) {
	sig := Signal{Samples: make([]float32, 48000), SampleRate: 48000}
	for _, tc := range []struct {
		name     string
		sig      Signal
		from, to float64
		nfft     int
	}{
		{"reversed", sig, 0.5, 0.2, 0},
		{"beyond end", sig, 0.5, 2, 0},
		{"negative", sig, -1, 0.5, 0},
		{"NaN", sig, math.NaN(), 0.5, 0},
		{"not power of two", sig, 0, 1, 1000},
		{"too short", sig, 0, 0.01, 4096},
		{"no rate", Signal{Samples: sig.Samples}, 0, 1, 0},
	} {
		if _, err := AverageSpectrum(tc.sig, tc.from, tc.to, tc.nfft); err == nil {
			t.Errorf("%s: no error", tc.name)
		} else {
			t.Logf("%s: %v", tc.name, err)
		}
	}
	// A short interval gets a shorter default segment instead of an error.
	a, err := AverageSpectrum(sig, 0, 0.05, 0)
	if err != nil || a.NFFT != 2048 {
		t.Errorf("0.05 s interval: NFFT %v, %v; want 2048", a, err)
	}
}
