package ui

import "whirlfit/analysis"

// curvePoints is how many points a fitted curve is drawn with: enough for
// a smooth line at any window width in common use.
const curvePoints = 400

// stepCurves evaluates each fitted step's model and 95 % band (through the
// core's StepFit) on an even time grid over the stretch the fit used.
func stepCurves(rep *analysis.Report) []stepCurve {
	if rep == nil {
		return nil
	}
	var out []stepCurve
	for i := range rep.Steps {
		f := rep.Steps[i].Fit
		if f == nil || !(f.ToS > f.FromS) {
			continue
		}
		c := stepCurve{TimeS: make([]float64, curvePoints), RPM: make([]float64, curvePoints)}
		for k := range c.TimeS {
			t := f.FromS + (f.ToS-f.FromS)*float64(k)/float64(curvePoints-1)
			c.TimeS[k], c.RPM[k] = t, f.Model(t)
		}
		c.Lo, c.Hi = f.Band(c.TimeS)
		out = append(out, c)
	}
	return out
}
