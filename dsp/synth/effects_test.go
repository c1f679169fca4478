package synth

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

// toneGain returns the steady-state amplitude gain of highPass for a tone.
func toneGain(f, fc float64, order int, fs float64) float64 {
	n := int(fs) // 1 s
	x := make([]float64, n)
	for i := range x {
		x[i] = math.Sin(2 * math.Pi * f * float64(i) / fs)
	}
	highPass(x, fc, order, fs)
	tail := x[n/2:] // after the transient
	return math.Sqrt(2 * meanPower(tail))
}

func TestHighPassButterworth(t *testing.T) {
	// Butterworth magnitude |H(f)|² = (f/fc)^{2N} / (1 + (f/fc)^{2N})
	// (textbook, e.g. Oppenheim & Schafer); the bilinear transform warps
	// frequencies by tan(πf/fs), negligible well below Nyquist, so the
	// tolerance is 0.1 dB.
	const fs, fc = 48000.0, 150.0
	for _, order := range []int{2, 4} {
		for _, r := range []float64{0.25, 0.5, 1, 2, 8} {
			f := r * fc
			got := 20 * math.Log10(toneGain(f, fc, order, fs))
			want := 10 * math.Log10(math.Pow(r, float64(2*order))/(1+math.Pow(r, float64(2*order))))
			t.Logf("order %d, f = %.0f Hz: %.2f dB (Butterworth %.2f dB)", order, f, got, want)
			if math.Abs(got-want) > 0.1 {
				t.Errorf("order %d, f/fc = %g: %.3f dB, want %.3f", order, r, got, want)
			}
		}
	}
}

func TestConvolveMatchesDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	x := make([]float64, 10000)
	h := make([]float64, 700)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	for i := range h {
		h[i] = rng.NormFloat64()
	}
	got := convolve(append([]float64(nil), x...), h)
	var maxErr float64
	for n := range x {
		var s float64
		for k := 0; k < len(h) && k <= n; k++ {
			s += h[k] * x[n-k]
		}
		maxErr = math.Max(maxErr, math.Abs(got[n]-s))
	}
	t.Logf("max |FFT − direct| = %.3g", maxErr)
	if maxErr > 1e-9 {
		t.Errorf("max error %g", maxErr)
	}
}

func TestRoomResponse(t *testing.T) {
	// Schroeder backward integration of the impulse response gives the
	// energy decay curve; its slope between −5 and −35 dB extrapolated to
	// −60 dB is the RT60 (ISO 3382 "T30", common practice). DRR is the
	// direct energy over the rest.
	const fs = 16000.0
	for _, c := range []struct{ rt, drr float64 }{{0.3, 6}, {1.0, -3}} {
		h := roomResponse(c.rt, c.drr, fs, rand.New(rand.NewPCG(11, 12)))
		edc := make([]float64, len(h))
		var acc float64
		for k := len(h) - 1; k >= 0; k-- {
			acc += h[k] * h[k]
			edc[k] = acc
		}
		var t5, t35 float64
		for k := range edc {
			l := 10 * math.Log10(edc[k]/edc[1])
			if t5 == 0 && l <= -5 {
				t5 = float64(k) / fs
			}
			if t35 == 0 && l <= -35 {
				t35 = float64(k) / fs
			}
		}
		rt := 2 * (t35 - t5)
		drr := 10 * math.Log10(h[0]*h[0]/(edc[1]))
		t.Logf("RT60 %.3f s (want %.2f), DRR %.2f dB (want %.1f)", rt, c.rt, drr, c.drr)
		if math.Abs(rt-c.rt) > 0.1*c.rt {
			t.Errorf("RT60 %.3f s, want %.2f ± 10 %%", rt, c.rt)
		}
		if math.Abs(drr-c.drr) > 1e-9 {
			t.Errorf("DRR %.3f dB, want %.1f", drr, c.drr)
		}
	}
}

func TestNoiseColours(t *testing.T) {
	// Slope of the power spectral density per octave between 200 Hz and
	// 3.2 kHz: 0 dB (white), −3.01 dB (pink, PSD ∝ 1/f), −6.02 dB (brown,
	// PSD ∝ 1/f²). Band powers from gonum's FFT of 2^18 samples; tolerance
	// 0.5 dB covers the random error of the estimate.
	const fs = 32000.0
	n := 1 << 18
	fft := fourier.NewFFT(n)
	for _, c := range []struct {
		col  NoiseColor
		want float64
	}{{White, 0}, {Pink, -3.01}, {Brown, -6.02}} {
		x := make([]float64, n)
		colouredNoise(x, c.col, fs, rand.New(rand.NewPCG(1, uint64(c.col))))
		if p := meanPower(x); math.Abs(p-1) > 1e-9 {
			t.Errorf("%v: power %g, want 1", c.col, p)
		}
		X := fft.Coefficients(nil, x)
		band := func(f0 float64) float64 { // mean PSD over [f0, 2·f0)
			k0, k1 := int(f0/fs*float64(n)), int(2*f0/fs*float64(n))
			var s float64
			for k := k0; k < k1; k++ {
				s += cmplx.Abs(X[k]) * cmplx.Abs(X[k])
			}
			return s / float64(k1-k0)
		}
		slope := 10 * math.Log10(band(1600)/band(200)) / 3
		t.Logf("%v: %.2f dB/octave (want %.2f)", c.col, slope, c.want)
		if math.Abs(slope-c.want) > 0.5 {
			t.Errorf("%v: slope %.2f dB/octave, want %.2f", c.col, slope, c.want)
		}
	}
}

func TestAGC(t *testing.T) {
	// A level jump of 20 dB is brought back towards the target RMS within a
	// few release times, and the gain never exceeds its limit.
	const fs = 8000.0
	x := make([]float64, 6*int(fs))
	for i := range x {
		a := 0.01
		if i >= 3*int(fs) {
			a = 0.1
		}
		x[i] = a * math.Sin(2*math.Pi*440*float64(i)/fs)
	}
	agc(x, 0.5, 0.1, 100, fs)
	rms := func(a, b float64) float64 { return math.Sqrt(meanPower(x[int(a*fs):int(b*fs)])) }
	early, late := rms(2.5, 3), rms(5.5, 6)
	t.Logf("RMS before the jump %.4f, after settling %.4f (target 0.1)", early, late)
	if math.Abs(early-0.1) > 0.01 || math.Abs(late-0.1) > 0.01 {
		t.Errorf("AGC RMS %.4f / %.4f, want 0.1 ± 0.01", early, late)
	}
}
