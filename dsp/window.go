package dsp

import "math"

// WindowKind names an analysis window.
type WindowKind int

const (
	// Hann is the raised cosine 0.5 − 0.5 cos(2πn/N).
	Hann WindowKind = iota
)

// Window is an analysis window: a kind and, for adjustable families, its
// parameter.
type Window struct {
	Kind  WindowKind
	Param float64
}

// Values returns the periodic ("DFT-even", Harris 1978) window of length n.
func (w Window) Values(n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = 0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(n))
	}
	return v
}
