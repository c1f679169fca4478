package figure

import (
	"math"

	"whirlfit/dsp"
)

// Zoom returns the view scaled about the point (tS, hz): factors below 1
// zoom in (0.5 shows half the span), above 1 out; a factor of 1 (or not
// positive) leaves that axis alone. The level range is kept.
func (v View) Zoom(factorT, factorF, tS, hz float64) View {
	if factorT > 0 && factorT != 1 {
		v.T0 = tS + (v.T0-tS)*factorT
		v.T1 = tS + (v.T1-tS)*factorT
	}
	if factorF > 0 && factorF != 1 {
		v.F0 = hz + (v.F0-hz)*factorF
		v.F1 = hz + (v.F1-hz)*factorF
	}
	return v
}

// Pan returns the view moved by dtS seconds and dHz hertz.
func (v View) Pan(dtS, dHz float64) View {
	v.T0, v.T1 = v.T0+dtS, v.T1+dtS
	v.F0, v.F1 = v.F0+dHz, v.F1+dHz
	return v
}

// Minimum spans ClampTo keeps: a few frames and bins, so the view never
// degenerates however far it is zoomed.
const (
	minSpanFrames = 4
	minSpanBins   = 4
)

// ClampTo keeps the view inside the recording's times and 0 Hz … Nyquist
// (moving it back rather than cutting it, while it fits) and no narrower
// than minSpanFrames frames and minSpanBins bins.
func (v View) ClampTo(s *dsp.Spectrogram) View {
	if s == nil || s.Frames == 0 || s.Bins == 0 {
		return v
	}
	dt := float64(s.Hop) / s.SampleRate
	t0 := s.FrameTimeS(0) - dt/2
	t1 := s.FrameTimeS(s.Frames-1) + dt/2
	v.T0, v.T1 = clampSpan(v.T0, v.T1, t0, t1, minSpanFrames*dt)
	v.F0, v.F1 = clampSpan(v.F0, v.F1, 0, s.BinHz(float64(s.Bins-1)), minSpanBins*s.BinHz(1))
	return v
}

func clampSpan(a, b, lo, hi, minSpan float64) (float64, float64) {
	if b < a {
		a, b = b, a
	}
	minSpan = math.Min(minSpan, hi-lo)
	if b-a < minSpan {
		c := (a + b) / 2
		a, b = c-minSpan/2, c+minSpan/2
	}
	if b-a >= hi-lo {
		return lo, hi
	}
	if a < lo {
		a, b = lo, b+(lo-a)
	}
	if b > hi {
		a, b = a-(b-hi), hi
	}
	return a, b
}

// At returns the time and frequency under pixel (x, y) of a w × h image
// rendered with this view (the pixel's centre; y = 0 is the top row), for
// a read-out under the pointer.
func (v View) At(x, y float64, w, h int) (tS, hz float64) {
	tS = v.T0 + (x+0.5)/float64(w)*(v.T1-v.T0)
	hz = v.F1 - (y+0.5)/float64(h)*(v.F1-v.F0)
	return tS, hz
}
