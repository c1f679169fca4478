package figure

import (
	"math"

	"whirlfit/analysis"
)

// fitCurves is what a fitted step offers for drawing; analysis.StepFit
// provides it. The figures fall back to the reported numbers (stepCurve's
// own formulas) for a step without it.
type fitCurves interface {
	Model(tS float64) float64
	SeenModel(tS float64) float64
	Band(ts []float64) (lo, hi []float64)
}

// curve is one step's fitted model ready to draw, in rpm against seconds.
type curve struct {
	// Model is the fitted true speed, Seen the model as the track sees it
	// (through the analysis window's kernel).
	Model, Seen func(tS float64) float64
	// Band is the pointwise 95 % band of the true curve.
	Band func(ts []float64) (lo, hi []float64)
	// FromS and ToS bound the drawn stretch; OnsetS is the response start,
	// CommandS the command time (NaN when unknown).
	FromS, ToS, OnsetS, CommandS float64
	R0, Delta, TauS              float64
}

// curveOf returns the drawable curve of step i of rep. The stretch drawn
// runs from 2τ (at least 50 ms) before the command (or the response start)
// to 6τ after the response start (99.75 % of the change), cut at the
// neighbouring steps and at the ends of the track.
func curveOf(rep *analysis.Report, i int) curve {
	s := &rep.Steps[i]
	c := curve{
		OnsetS: s.ResponseStartS, CommandS: math.NaN(),
		R0: s.RPMBefore.Value, Delta: s.RPMAfter.Value - s.RPMBefore.Value, TauS: s.TauS.Value,
	}
	if s.CommandS != nil {
		c.CommandS = *s.CommandS
	}
	start := c.OnsetS
	if !math.IsNaN(c.CommandS) {
		start = math.Min(start, c.CommandS)
	}
	c.FromS = start - math.Max(0.05, 2*c.TauS)
	c.ToS = c.OnsetS + 6*c.TauS
	if i > 0 {
		c.FromS = math.Max(c.FromS, stepStart(&rep.Steps[i-1])+0.5*(start-stepStart(&rep.Steps[i-1])))
	}
	if i+1 < len(rep.Steps) {
		next := stepStart(&rep.Steps[i+1])
		c.ToS = math.Min(c.ToS, next)
	}
	if tr := rep.Track; tr != nil && tr.Len() > 0 {
		c.FromS = math.Max(c.FromS, tr.TimeS[0])
		c.ToS = math.Min(c.ToS, tr.TimeS[tr.Len()-1])
	}
	if fc, ok := any(s.Fit).(fitCurves); ok && s.Fit != nil {
		c.Model, c.Seen, c.Band = fc.Model, fc.SeenModel, fc.Band
		return c
	}
	c.Model = func(t float64) float64 { return fopdt(t, c.OnsetS, c.R0, c.Delta, c.TauS) }
	c.Seen = c.Model
	if tr := rep.Track; tr != nil && len(tr.Kernel) > 1 && tr.KernelDtS > 0 {
		k, dt := tr.Kernel, tr.KernelDtS
		mid := float64(len(k)-1) / 2
		c.Seen = func(t float64) float64 {
			var y float64
			for j, w := range k {
				y += w * c.Model(t+(float64(j)-mid)*dt)
			}
			return y
		}
	}
	c.Band = func(ts []float64) (lo, hi []float64) { return cornerBand(s, ts) }
	return c
}

func stepStart(s *analysis.StepResult) float64 {
	if s.CommandS != nil {
		return math.Min(*s.CommandS, s.ResponseStartS)
	}
	return s.ResponseStartS
}

// fopdt is the first-order-plus-dead-time step from r0 by delta with time
// constant tau, starting at onset.
func fopdt(t, onset, r0, delta, tau float64) float64 {
	if t < onset {
		return r0
	}
	return r0 + delta*(1-math.Exp(-(t-onset)/tau))
}

// cornerBand is the fallback band for a step without its fit: at each time
// the smallest and largest model value over the 16 corners of the
// intervals of r0, r1, τ and the response start (the dead time's
// interval moved to the response start). It is wider than the pointwise
// band of the fit, which uses the parameters' correlations.
func cornerBand(s *analysis.StepResult, ts []float64) (lo, hi []float64) {
	lo = make([]float64, len(ts))
	hi = make([]float64, len(ts))
	onset := [2]float64{s.ResponseStartS, s.ResponseStartS}
	if s.DeadTimeS != nil && s.CommandS != nil {
		onset = [2]float64{*s.CommandS + s.DeadTimeS.CI95[0], *s.CommandS + s.DeadTimeS.CI95[1]}
	}
	r0, r1, tau := ends(s.RPMBefore), ends(s.RPMAfter), ends(s.TauS)
	onset[0], onset[1] = orValue(onset[0], s.ResponseStartS), orValue(onset[1], s.ResponseStartS)
	for i := range ts {
		lo[i], hi[i] = math.Inf(1), math.Inf(-1)
	}
	for m := 0; m < 16; m++ {
		a, b, ta, on := r0[m&1], r1[m>>1&1], tau[m>>2&1], onset[m>>3&1]
		if !(ta > 0) {
			ta = s.TauS.Value
		}
		for i, t := range ts {
			v := fopdt(t, on, a, b-a, ta)
			lo[i], hi[i] = math.Min(lo[i], v), math.Max(hi[i], v)
		}
	}
	return lo, hi
}

// sampleTimes returns n times evenly from a to b.
func sampleTimes(a, b float64, n int) []float64 {
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return ts
}

// ends returns e's interval with missing ends replaced by the value.
func ends(e analysis.Estimate) [2]float64 {
	return [2]float64{orValue(e.CI95[0], e.Value), orValue(e.CI95[1], e.Value)}
}

func orValue(x, v float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return v
	}
	return x
}
