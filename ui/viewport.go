package ui

import (
	"math"

	"whirlfit/analysis/figure"
)

// viewport is what the plot shows: a time range, a frequency range for the
// spectrogram, an rpm range for the rpm view, and the colour scale. It is
// screen geometry only; the data it looks at stay untouched.
type viewport struct {
	figure.View
	R0, R1 float64 // rpm range of the rpm view
}

// Zoom limits: the narrowest time and frequency spans a view can shrink
// to, so that a run of zoom keys never reaches a degenerate range.
const (
	minSpanS  = 0.01
	minSpanHz = 5
	minSpanR  = 50
	// zoomStep is the factor one key press or one wheel notch zooms by.
	zoomStep = 1.25
)

// zoomRange scales the span [a, b] by factor about the point c, keeps it
// within [lo, hi] and at least minSpan wide.
func zoomRange(a, b, c, factor, lo, hi, minSpan float64) (float64, float64) {
	span := (b - a) * factor
	span = math.Max(span, minSpan)
	if span >= hi-lo {
		return lo, hi
	}
	frac := 0.5
	if b > a {
		frac = (c - a) / (b - a)
	}
	na := c - frac*span
	return clampRange(na, na+span, lo, hi)
}

// panRange shifts [a, b] by d and keeps it within [lo, hi].
func panRange(a, b, d, lo, hi float64) (float64, float64) {
	return clampRange(a+d, b+d, lo, hi)
}

func clampRange(a, b, lo, hi float64) (float64, float64) {
	span := b - a
	if span >= hi-lo {
		return lo, hi
	}
	if a < lo {
		a, b = lo, lo+span
	}
	if b > hi {
		a, b = hi-span, hi
	}
	return a, b
}
