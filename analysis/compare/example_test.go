package compare_test

import (
	"fmt"

	"whirlfit/analysis"
	"whirlfit/analysis/compare"
)

// Two recordings of one motor with different propellers (invented
// numbers): the verdict says which responds faster, or that the intervals
// overlap.
func ExampleCompare() {
	step := func(tau, hw float64) analysis.StepResult {
		return analysis.StepResult{Direction: analysis.Up,
			TauS: analysis.Estimate{Value: tau, CI95: [2]float64{tau - hw, tau + hw}}}
	}
	a := &analysis.Report{File: "two-blade.wav", Steps: []analysis.StepResult{step(0.027, 0.002)}}
	b := &analysis.Report{File: "three-blade.wav", Steps: []analysis.StepResult{step(0.018, 0.001)}}
	c, _ := compare.Compare([]*analysis.Report{a, b}, nil)
	for _, v := range c.Verdicts {
		fmt.Println(v)
	}
	// Output:
	// up step 1: B responds faster than A: τ 18.0 ± 1.0 ms vs 27.0 ± 2.0 ms
}
