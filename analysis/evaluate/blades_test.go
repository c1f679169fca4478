package evaluate

import (
	"context"
	"flag"
	"math/rand/v2"
	"testing"

	"whirlfit/analysis"
	"whirlfit/dsp/synth"
)

var evalBlades = flag.Bool("eval.blades", false, "run TestBladeReading on the sweep's cases")

// TestBladeReading analyses the sweep's cases without their blade count and
// counts how often the count read from the harmonic comb is the true one
// and how often the reported rpm is right anyway (a reading at another
// ratio of blade count and speed that explains the same lines, within
// 1 % of the true rpm at the median track sample).
func TestBladeReading(t *testing.T) {
	if !*evalBlades {
		t.Skip("blade reading only with -eval.blades")
	}
	rng := rand.New(rand.NewPCG(*evalSeed, 0x77686972))
	opts := sweepOptions()
	var n, right, rpmRight int
	for i := range *evalN {
		c, a, cfg, _, ok := nextCase(t, i, rng, opts)
		if !ok {
			continue
		}
		cfg.Blades = 0
		rep, err := analysis.Run(context.Background(), a, cfg, nil)
		if err != nil {
			t.Errorf("case %d: %v", i, err)
			continue
		}
		n++
		if rep.Blades == c.Truth.Blades {
			right++
		}
		ok = trackAgrees(c, rep.Track, 0.01)
		if ok {
			rpmRight++
		}
		t.Logf("case %2d true %d read %d rpm agrees %v", i, c.Truth.Blades, rep.Blades, ok)
	}
	t.Logf("blade count read right in %d of %d cases; rpm right in %d", right, n, rpmRight)
}

// trackAgrees reports whether the median of |track/truth − 1| over the
// valid track samples where the truth is running is below tol.
func trackAgrees(c synth.Case, tr *analysis.Track, tol float64) bool {
	var errs []float64
	for k, ts := range tr.TimeS {
		if !tr.Valid(k) {
			continue
		}
		f := c.Scene.Shaft(ts)
		if f <= 0 {
			continue
		}
		e := tr.ShaftHz[k]/f - 1
		if e < 0 {
			e = -e
		}
		errs = append(errs, e)
	}
	return len(errs) > 0 && quantile(errs, 0.5) < tol
}
