package synth

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

// lineAmplitudes returns the amplitudes of x at the given frequencies from
// gonum's FFT of exactly one second (1 Hz bins, integer frequencies).
func lineAmplitudes(x []float64, fs int, freqs []float64) []float64 {
	X := fourier.NewFFT(fs).Coefficients(nil, x[:fs])
	out := make([]float64, len(freqs))
	for i, f := range freqs {
		out[i] = 2 * cmplx.Abs(X[int(math.Round(f))]) / float64(fs)
	}
	return out
}

func TestPWMSidebands(t *testing.T) {
	// Carrier 8 kHz, 7 pole pairs, shaft 200 Hz: electrical 1400 Hz, lines
	// at 8000, 8000 ± 1400, 8000 ± 2800 Hz with amplitudes 1, ½, ¼ (law = 1
	// at the reference speed).
	r := Rotor{Blades: 3, PolePairs: 7, PWMHz: 8000, PWMLevel: 1, RefHz: 200}
	const fs = 48000
	out := renderRotor(r, Constant(200), fs, fs, rand.New(rand.NewPCG(1, 1)), false)
	freqs := []float64{8000, 9400, 6600, 10800, 5200, 7000}
	want := []float64{1, 0.5, 0.5, 0.25, 0.25, 0}
	got := lineAmplitudes(out.tonal, fs, freqs)
	for i := range freqs {
		t.Logf("%5.0f Hz: amplitude %.4f (want %.2f)", freqs[i], got[i], want[i])
		if math.Abs(got[i]-want[i]) > 1e-6 {
			t.Errorf("%g Hz: amplitude %g, want %g", freqs[i], got[i], want[i])
		}
	}
}

func TestResonance(t *testing.T) {
	// The peaking filter has gain GainDB at its centre and ≈ 0 dB far from
	// it (audio-EQ cookbook peaking EQ).
	const fs = 16000
	for _, c := range []struct{ f, want float64 }{{1000, 12}, {100, 0}, {6000, 0}} {
		x := make([]float64, 2*fs)
		for i := range x {
			x[i] = math.Sin(2 * math.Pi * c.f * float64(i) / fs)
		}
		resonate(x, []Resonance{{Hz: 1000, Q: 8, GainDB: 12}}, fs)
		got := 20 * math.Log10(math.Sqrt(2*meanPower(x[fs:])))
		t.Logf("%g Hz: %.2f dB (want %.0f)", c.f, got, c.want)
		if math.Abs(got-c.want) > 0.2 {
			t.Errorf("%g Hz: gain %.2f dB, want %.0f", c.f, got, c.want)
		}
	}
}

func TestBandPower(t *testing.T) {
	// White noise of unit power has power fc/(fs/2) below fc; the 8th-order
	// Butterworth's noise bandwidth is 0.65 % wider (0.03 dB).
	const fs = 48000.0
	x := make([]float64, 1<<19)
	colouredNoise(x, White, fs, rand.New(rand.NewPCG(4, 4)))
	for _, fc := range []float64{2000, 6000} {
		got := 10 * math.Log10(bandPower(x, fc, fs))
		want := 10 * math.Log10(fc/(fs/2))
		t.Logf("below %.0f Hz: %.3f dB (want %.3f)", fc, got, want)
		if math.Abs(got-want) > 0.15 {
			t.Errorf("fc %g: %.3f dB, want %.3f", fc, got, want)
		}
	}
}

func TestSNRBand(t *testing.T) {
	// With SNRBandHz = fs/8 (a quarter of the band 0–fs/2) and white noise,
	// the full-band noise is 4 times (6.02 dB) stronger than with a
	// full-band SNR.
	sc := baseScene()
	sc.SNRdB = 10
	full, _ := render(sc)
	sc.SNRBandHz = float64(sc.SampleRate) / 8
	band, _ := render(sc)
	got := 10 * math.Log10(meanPower(band.noise)/meanPower(full.noise))
	t.Logf("band-limited SNR raises the noise by %.2f dB (want 6.02)", got)
	if math.Abs(got-6.02) > 0.2 {
		t.Errorf("noise ratio %.2f dB, want 6.02", got)
	}
}

func TestMeasureSNR(t *testing.T) {
	// Over the whole recording MeasureSNR gives SNRdB; on the plateaus of a
	// 150 → 300 Hz step the amplitude law (exponent 2: power ∝ f⁴) puts the
	// slow part 12.04 dB below the fast one, less the ±0.3 dB spread of the
	// random modulation and noise estimate.
	sc := baseScene()
	sc.AGCS, sc.ClipLevel = 0, 0
	sc.Rotor.SpreadDB = 0
	v, err := MeasureSNR(sc, [2]float64{0, sc.DurationS}, [2]float64{0, 1}, [2]float64{1.5, 3})
	if err != nil {
		t.Fatal(err)
	}
	all, slow, fast := v[0], v[1], v[2]
	t.Logf("whole %.2f dB (want %.1f), slow %.2f dB, fast %.2f dB, difference %.2f dB (want 12.04)", all, sc.SNRdB, slow, fast, fast-slow)
	if math.Abs(all-sc.SNRdB) > 0.05 {
		t.Errorf("whole-recording SNR %.2f dB, want %.1f", all, sc.SNRdB)
	}
	if math.Abs(fast-slow-12.04) > 0.5 {
		t.Errorf("fast − slow = %.2f dB, want 12.04", fast-slow)
	}
	sc.SNRdB = math.Inf(1)
	if v, _ := MeasureSNR(sc, [2]float64{0, 1}); !math.IsInf(v[0], 1) {
		t.Errorf("noiseless: %g, want +Inf", v[0])
	}
	if _, err := MeasureSNR(sc, [2]float64{2, 1}); err == nil {
		t.Error("empty interval accepted")
	}
}

func TestLowpassNoise(t *testing.T) {
	// Unit RMS, and the lag-k autocorrelation of a one-pole low-pass of
	// white noise is a^k with a = e^{−2π·fc/fs} (textbook AR(1) process).
	const fs, fc = 1000.0, 5.0
	g := newLowpassNoise(fc, fs, rand.New(rand.NewPCG(3, 3)))
	x := make([]float64, 1<<20)
	for i := range x {
		x[i] = g.next()
	}
	p := meanPower(x)
	var r float64
	const lag = 20
	for i := lag; i < len(x); i++ {
		r += x[i] * x[i-lag]
	}
	r /= float64(len(x)-lag) * p
	want := math.Exp(-2 * math.Pi * fc / fs * lag)
	t.Logf("RMS %.3f (want 1), lag-%d correlation %.3f (want %.3f)", math.Sqrt(p), lag, r, want)
	// 2^20 samples span about 33,000 correlation times (1/(2π·fc) = 32
	// samples), so both estimates are good to well within 0.03.
	if math.Abs(math.Sqrt(p)-1) > 0.03 || math.Abs(r-want) > 0.03 {
		t.Errorf("RMS %.3f, correlation %.3f; want 1 and %.3f", math.Sqrt(p), r, want)
	}
}
