package analysis

import (
	"fmt"
	"math/rand/v2"
)

// A step from 12,000 to 18,000 rpm, commanded at 0.5 s, seen through a
// 40 ms Hann window's w² kernel (invented track): the fit recovers the dead
// time and time constant of the true trajectory, not of the smoothed one.
func ExampleAnalyseSteps() {
	spec := synthTrackSpec{hopS: 0.0025, windowS: 0.04, durS: 1.2, startHz: 200, noiseHz: 0.01,
		steps: []synthStep{{commandS: 0.5, deadS: 0.008, tauS: 0.030, toHz: 300}}}
	tr := spec.track(rand.New(rand.NewPCG(1, 1)))
	steps, _ := AnalyseSteps(tr, StepConfig{CommandTimesS: []float64{0.5}})
	for _, s := range steps {
		fmt.Printf("%s step: θ = %.1f ms, τ = %.1f ms, t95 = %.1f ms, %.0f → %.0f rpm\n",
			s.Direction, 1e3*s.DeadTimeS.Value, 1e3*s.TauS.Value, 1e3*s.T95S.Value, s.RPMBefore.Value, s.RPMAfter.Value)
	}
	// Output:
	// up step: θ = 8.0 ms, τ = 30.0 ms, t95 = 98.0 ms, 12000 → 18000 rpm
}
