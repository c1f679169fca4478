package dsp

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// SelectK gives the element a sort puts at k, ties and repeated calls on
// the reordered slice included.
func TestSelectK(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	for trial := range 500 {
		n := 1 + rng.IntN(300)
		x := make([]float32, n)
		for i := range x {
			x[i] = float32(rng.NormFloat64())
			if trial%3 == 0 {
				x[i] = float32(rng.IntN(5))
			}
		}
		sorted := slices.Clone(x)
		slices.Sort(sorted)
		for range 3 {
			k := rng.IntN(n)
			if got := SelectK(x, k); got != sorted[k] {
				t.Fatalf("n %d k %d: %g, sorted gives %g", n, k, got, sorted[k])
			}
		}
	}
}
