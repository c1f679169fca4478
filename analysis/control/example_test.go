package control_test

import (
	"fmt"

	"whirlfit/analysis/control"
)

// A motor with τ = 30 ms and θ = 12.3 ms in a 1 kHz loop: 12 whole samples
// of delay and 0.3 of a sample handled by the modified z-transform.
func ExampleDiscretize() {
	d, _ := control.Discretize(control.FOPDT{K: 1, TauS: 0.030, DeadTimeS: 0.0123}, 0.001)
	fmt.Println(d.DelaySamples, "samples +", fmt.Sprintf("%.1f", d.FracDelay))
	fmt.Println(d.Equation())
	// Output:
	// 12 samples + 0.3
	// y[k] = 0.967216·y[k−1] + 0.0230632·u[k−13] + 0.00972068·u[k−14]
}
