package analysis

import (
	"math"
	"math/rand/v2"
	"sort"
)

// Moving-block bootstrap of a step fit's residuals: the cross-check of the
// analytic intervals (interval.go).
//
// The weighted residuals are cut into overlapping blocks of l consecutive
// samples; B series are glued together from blocks drawn with replacement,
// scaled up for the noise the fitted curve absorbed, added to the fitted
// curve, and refitted from the original solution. Blocks longer than the
// error correlation keep the dependence between neighbouring frames
// (H. R. Künsch, "The jackknife and the bootstrap for general stationary
// observations", Ann. Statist. 17(3):1217–1241, 1989; block length of order
// n^{1/3}: P. Hall, J. L. Horowitz & B.-Y. Jing, Biometrika 82(3):561–574,
// 1995; both from memory). With fewer than minBlocks blocks in the window
// the method says little and is skipped.

const minBlocks = 8

// bootResult holds percentile intervals of the free parameters.
type bootResult struct {
	lo, hi []float64 // 2.5 % and 97.5 % quantiles per free parameter
	sd     []float64
	b      int // replicates that converged
	block  int
}

// blockBootstrap refits the step B times. scale multiplies the residuals
// (√(n/(n − tr HR)) from the interval code). It returns nil when the window
// holds too few blocks.
func blockBootstrap(d *stepData, fit *stepFitOut, lower, upper []float64, block, B int, scale float64, seed uint64) *bootResult {
	n := d.n()
	block = max(block, int(math.Ceil(math.Cbrt(float64(n)))))
	if B <= 0 || n/block < minBlocks {
		return nil
	}
	rng := rand.New(rand.NewPCG(seed, 0x5bd1e995))
	fitted := make([]float64, n)
	d.model(fitted, nil, &fit.p, fit.free)
	// Centre the residuals: a block bootstrap of a series with a non-zero
	// mean would shift every replicate.
	mean := 0.0
	for _, r := range fit.resid {
		mean += r
	}
	mean /= float64(n)
	orig := d.y
	defer func() { d.y = orig }()
	ystar := make([]float64, n)
	np := len(fit.free)
	samples := make([][]float64, np)
	for rep := 0; rep < B; rep++ {
		for i := 0; i < n; {
			start := rng.IntN(n - block + 1)
			for j := 0; j < block && i < n; j++ {
				r := (fit.resid[start+j] - mean) * scale
				ystar[i] = (fitted[i] + r) / d.sw[i]
				i++
			}
		}
		d.y = ystar
		res, _, err := d.polish(fit.p, fit.free, lower, upper)
		if err != nil && !res.Converged {
			continue
		}
		for c := range fit.free {
			samples[c] = append(samples[c], res.P[c])
		}
	}
	if len(samples[0]) < B/2 {
		return nil
	}
	out := &bootResult{b: len(samples[0]), block: block}
	for c := range samples {
		s := samples[c]
		sort.Float64s(s)
		out.lo = append(out.lo, quantileSorted(s, 0.025))
		out.hi = append(out.hi, quantileSorted(s, 0.975))
		m, v := 0.0, 0.0
		for _, x := range s {
			m += x
		}
		m /= float64(len(s))
		for _, x := range s {
			v += (x - m) * (x - m)
		}
		out.sd = append(out.sd, math.Sqrt(v/float64(len(s)-1)))
	}
	return out
}

// quantileSorted interpolates the q-quantile of sorted data.
func quantileSorted(s []float64, q float64) float64 {
	if len(s) == 0 {
		return math.NaN()
	}
	x := q * float64(len(s)-1)
	i := int(x)
	if i >= len(s)-1 {
		return s[len(s)-1]
	}
	f := x - float64(i)
	return s[i]*(1-f) + s[i+1]*f
}
