package synth

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/dsp/fourier"
)

// NoiseColor is the spectral shape of broadband noise.
type NoiseColor int

const (
	// White noise has a flat power spectral density.
	White NoiseColor = iota
	// Pink noise falls 3 dB per octave (PSD ∝ 1/f), made with Paul Kellet's
	// refined pinking filter (accurate to ±0.05 dB above about fs/1000).
	Pink
	// Brown noise falls 6 dB per octave (PSD ∝ 1/f²) above 5 Hz: a leaky
	// integrator of white noise.
	Brown
)

// String returns the colour's name.
func (c NoiseColor) String() string {
	switch c {
	case White:
		return "white"
	case Pink:
		return "pink"
	case Brown:
		return "brown"
	}
	return "unknown"
}

// colouredNoise fills dst with Gaussian noise of the given colour, scaled to
// unit RMS over dst.
func colouredNoise(dst []float64, c NoiseColor, fs float64, rng *rand.Rand) {
	switch c {
	case Pink:
		var b0, b1, b2, b3, b4, b5, b6 float64
		for i := range dst {
			w := rng.NormFloat64()
			b0 = 0.99886*b0 + w*0.0555179
			b1 = 0.99332*b1 + w*0.0750759
			b2 = 0.96900*b2 + w*0.1538520
			b3 = 0.86650*b3 + w*0.3104856
			b4 = 0.55000*b4 + w*0.5329522
			b5 = -0.7616*b5 - w*0.0168980
			dst[i] = b0 + b1 + b2 + b3 + b4 + b5 + b6 + w*0.5362
			b6 = w * 0.115926
		}
	case Brown:
		a := math.Exp(-2 * math.Pi * 5 / fs)
		var y float64
		for i := range dst {
			y = a*y + rng.NormFloat64()
			dst[i] = y
		}
	default:
		for i := range dst {
			dst[i] = rng.NormFloat64()
		}
	}
	normaliseRMS(dst)
}

func meanPower(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	var s float64
	for _, v := range x {
		s += v * v
	}
	return s / float64(len(x))
}

func normaliseRMS(x []float64) {
	if p := meanPower(x); p > 0 {
		scale(x, 1/math.Sqrt(p))
	}
}

func scale(x []float64, g float64) {
	for i := range x {
		x[i] *= g
	}
}

// biquad is a direct-form-I second-order section.
type biquad struct{ b0, b1, b2, a1, a2 float64 }

// highPassSection returns a second-order high-pass with cut-off fcHz and
// quality q (the audio-EQ-cookbook design, bilinear transform).
func highPassSection(fcHz, q, fs float64) biquad {
	w := 2 * math.Pi * fcHz / fs
	alpha := math.Sin(w) / (2 * q)
	cw := math.Cos(w)
	a0 := 1 + alpha
	return biquad{
		b0: (1 + cw) / 2 / a0,
		b1: -(1 + cw) / a0,
		b2: (1 + cw) / 2 / a0,
		a1: -2 * cw / a0,
		a2: (1 - alpha) / a0,
	}
}

func (f biquad) apply(x []float64) {
	var x1, x2, y1, y2 float64
	for i, v := range x {
		y := f.b0*v + f.b1*x1 + f.b2*x2 - f.a1*y1 - f.a2*y2
		x2, x1 = x1, v
		y2, y1 = y1, y
		x[i] = y
	}
}

// highPass filters x in place with a Butterworth high-pass of the given
// order (2 or 4; other values are rounded to those) and cut-off fcHz, made of
// cascaded second-order sections with Butterworth Q values.
func highPass(x []float64, fcHz float64, order int, fs float64) {
	if fcHz <= 0 || fcHz >= fs/2 {
		return
	}
	qs := []float64{1 / math.Sqrt2}
	if order >= 4 {
		// Poles of the 4th-order Butterworth: Q = 1/(2 cos(π/8)), 1/(2 cos(3π/8)).
		qs = []float64{1 / (2 * math.Cos(math.Pi/8)), 1 / (2 * math.Cos(3*math.Pi/8))}
	}
	for _, q := range qs {
		highPassSection(fcHz, q, fs).apply(x)
	}
}

// roomResponse returns an impulse response: the direct sound (1 at 0), a few
// early reflections in the first 25 ms, and a tail of exponentially decaying
// Gaussian noise whose level falls 60 dB in rt60S seconds. The reverberant
// part (reflections and tail) is scaled so that the direct-to-reverberant
// energy ratio is drrDB.
func roomResponse(rt60S, drrDB, fs float64, rng *rand.Rand) []float64 {
	n := int(math.Ceil(rt60S*fs)) + 1
	h := make([]float64, n)
	decay := 3 * math.Ln10 / (rt60S * fs) // amplitude e^{−decay·k}: −60 dB at rt60
	pre := int(0.003 * fs)                // the diffuse tail starts after ~3 ms
	for k := pre; k < n; k++ {
		h[k] = rng.NormFloat64() * math.Exp(-decay*float64(k))
	}
	for range 4 {
		k := int((0.002 + 0.023*rng.Float64()) * fs)
		if k > 0 && k < n {
			sign := 1.0
			if rng.IntN(2) == 0 {
				sign = -1
			}
			h[k] += sign * (0.3 + 0.4*rng.Float64()) * math.Exp(-decay*float64(k)) * 3
		}
	}
	var e float64
	for _, v := range h[1:] {
		e += v * v
	}
	if e > 0 {
		g := math.Sqrt(math.Pow(10, -drrDB/10) / e)
		for k := 1; k < n; k++ {
			h[k] *= g
		}
	}
	h[0] = 1
	return h
}

// convolve returns x convolved with h, truncated to len(x), by FFT
// overlap-add.
func convolve(x, h []float64) []float64 {
	if len(h) == 0 || len(x) == 0 {
		return x
	}
	nfft := 1
	for nfft < 2*len(h) || nfft < 4096 {
		nfft <<= 1
	}
	block := nfft - len(h) + 1
	fft := fourier.NewFFT(nfft)
	hbuf := make([]float64, nfft)
	copy(hbuf, h)
	H := fft.Coefficients(nil, hbuf)
	out := make([]float64, len(x)+len(h)-1)
	buf := make([]float64, nfft)
	X := make([]complex128, nfft/2+1)
	for start := 0; start < len(x); start += block {
		end := min(start+block, len(x))
		clear(buf)
		copy(buf, x[start:end])
		fft.Coefficients(X, buf)
		for k := range X {
			X[k] *= H[k]
		}
		fft.Sequence(buf, X)
		inv := 1 / float64(nfft) // gonum's inverse is unnormalised
		for k := 0; k < nfft && start+k < len(out); k++ {
			out[start+k] += buf[k] * inv
		}
	}
	return out[:len(x)]
}

// agc applies a slow automatic gain control in place. The signal power is
// first smoothed over timeS/10 (removing the waveform's own ripple), then
// followed with attack time timeS/10 and release time timeS; the gain brings
// that RMS to target and never exceeds maxGain. It reproduces the pumping
// of a phone's gain control: the level dips after loud onsets and the noise
// rises in quiet passages.
func agc(x []float64, timeS, target, maxGain, fs float64) {
	fast := math.Exp(-1 / (timeS / 10 * fs))
	rel := math.Exp(-1 / (timeS * fs))
	// Start from the power of the first 50 ms so the gain does not leap.
	n0 := min(len(x), int(0.05*fs)+1)
	p1 := meanPower(x[:n0])
	p2 := p1
	for i, v := range x {
		p1 = fast*p1 + (1-fast)*v*v
		if p1 > p2 {
			p2 = fast*p2 + (1-fast)*p1
		} else {
			p2 = rel*p2 + (1-rel)*p1
		}
		g := target / math.Sqrt(p2+1e-20)
		if g > maxGain {
			g = maxGain
		}
		x[i] = v * g
	}
}

// Resonance is a structural resonance of the bench or frame: a peaking
// filter of gain GainDB at Hz with quality Q, applied to the rotor's sound.
// A line passing through it during a step swells and fades.
type Resonance struct {
	Hz, Q, GainDB float64
}

// peakingSection returns the audio-EQ-cookbook peaking filter.
func peakingSection(fcHz, q, gainDB, fs float64) biquad {
	w := 2 * math.Pi * fcHz / fs
	alpha := math.Sin(w) / (2 * q)
	a := math.Pow(10, gainDB/40)
	cw := math.Cos(w)
	a0 := 1 + alpha/a
	return biquad{
		b0: (1 + alpha*a) / a0,
		b1: -2 * cw / a0,
		b2: (1 - alpha*a) / a0,
		a1: -2 * cw / a0,
		a2: (1 - alpha/a) / a0,
	}
}

// lowPassSection returns the audio-EQ-cookbook second-order low-pass.
func lowPassSection(fcHz, q, fs float64) biquad {
	w := 2 * math.Pi * fcHz / fs
	alpha := math.Sin(w) / (2 * q)
	cw := math.Cos(w)
	a0 := 1 + alpha
	return biquad{
		b0: (1 - cw) / 2 / a0,
		b1: (1 - cw) / a0,
		b2: (1 - cw) / 2 / a0,
		a1: -2 * cw / a0,
		a2: (1 - alpha) / a0,
	}
}

// bandPower returns the mean power of x below fcHz, measured through an
// 8th-order Butterworth low-pass (its noise bandwidth exceeds fcHz by
// 0.65 %, 0.03 dB, for a flat spectrum). fcHz ≥ fs/2 gives the full power.
func bandPower(x []float64, fcHz, fs float64) float64 {
	if fcHz <= 0 || fcHz >= 0.49*fs {
		return meanPower(x)
	}
	y := append([]float64(nil), x...)
	const order = 8
	for k := range order / 2 {
		// Butterworth pole pairs: Q = 1/(2 cos((2k+1)π/(2N))).
		q := 1 / (2 * math.Cos(float64(2*k+1)*math.Pi/(2*order)))
		lowPassSection(fcHz, q, fs).apply(y)
	}
	return meanPower(y)
}
