package evaluate

import (
	"context"
	"flag"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"whirlfit/analysis"
	"whirlfit/dsp"
)

var (
	evalTQ       = flag.Bool("eval.tq", false, "run TestTrackQuality: the tracker alone on the sweep's cases")
	evalTQCase   = flag.Int("eval.tqcase", -1, "with -eval.tq, score only case `N` and print its track next to the truth")
	evalTQStride = flag.Int("eval.tqstride", 8, "with -eval.tqcase, print every `n`-th track sample")
)

// TestTrackQuality scores the tracker alone on the same random cases as
// TestSweep: per case, the share of samples (true speed above 20 Hz, away
// from dropouts) whose track is off the kernel-averaged true speed by more
// than 3 % or empty, apart for the steady parts and for the stretches from
// each command to θ + 4τ + 30 ms after it, and the 10/50/90 % quantiles of
// track/truth where wrong (octave and other-line errors show as ratios).
// It measures nothing on its own; it is a quick check of tracker changes.
func TestTrackQuality(t *testing.T) {
	if !*evalTQ {
		t.Skip()
	}
	rng := rand.New(rand.NewPCG(*evalSeed, 0x77686972))
	opts := sweepOptions()
	var totBad, totEmpty, totN, totNear, totNearBad int
	for i := range *evalN {
		c, a, cfg, _, ok := nextCase(t, i, rng, opts)
		if !ok {
			continue
		}
		ch := dsp.Mix
		if cfg.Channel > 0 {
			ch = cfg.Channel - 1
		}
		sig, _ := a.Signal(ch)
		tr, _, err := analysis.TrackSignal(context.Background(), sig, analysis.TrackConfig{Blades: cfg.Blades}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if *evalTQCase >= 0 && i != *evalTQCase {
			continue
		}
		if *evalTQCase >= 0 {
			for k := 0; k < tr.Len(); k += *evalTQStride {
				ts := tr.TimeS[k]
				t.Logf("   %.3f truth %.1f track %.1f conf %.2f", ts, c.Truth.Shaft(ts), tr.ShaftHz[k], tr.Confidence[k])
			}
		}
		var bad, empty, n, near, nearBad int
		var ratios []float64
		for k, ts := range tr.TimeS {
			f := c.Truth.Shaft(ts)
			if f < 20 {
				continue
			}
			// the kernel average of the truth
			var s, sw float64
			for j, w := range tr.Kernel {
				u := ts + (float64(j)-float64(len(tr.Kernel)-1)/2)*tr.KernelDtS
				s += w * c.Truth.Shaft(u)
				sw += w
			}
			f = s / sw
			inDrop := false
			for _, d := range c.Truth.Dropouts {
				if ts > d[0]-0.05 && ts < d[1]+0.05 {
					inDrop = true
				}
			}
			if inDrop {
				continue
			}
			isNear := false
			for _, st := range c.Truth.Steps {
				if ts > st.CommandS && ts < st.CommandS+st.DeadS+4*st.TauS+0.03 {
					isNear = true
				}
			}
			e := !tr.Valid(k)
			b := !e && math.Abs(tr.ShaftHz[k]-f)/f > 0.03
			if isNear {
				near++
				if e || b {
					nearBad++
				}
				continue
			}
			n++
			if e {
				empty++
			}
			if b {
				bad++
				ratios = append(ratios, tr.ShaftHz[k]/f)
			}
		}
		slices.Sort(ratios)
		rq := [3]float64{}
		if len(ratios) > 0 {
			rq = [3]float64{ratios[len(ratios)/10], ratios[len(ratios)/2], ratios[len(ratios)*9/10]}
		}
		t.Logf("case %2d ratio %.2f %.2f %.2f %q", i, rq[0], rq[1], rq[2], tr.Warnings)
		t.Logf("case %2d steady n=%5d wrong %5.1f%% empty %5.1f%% | steps n=%5d bad %5.1f%%  %s", i, n, 100*float64(bad)/float64(max(n, 1)), 100*float64(empty)/float64(max(n, 1)), near, 100*float64(nearBad)/float64(max(near, 1)), c.String())
		totBad += bad
		totEmpty += empty
		totN += n
		totNear += near
		totNearBad += nearBad
	}
	t.Logf("TOTAL steady wrong %.2f%% empty %.2f%% | steps bad %.2f%%", 100*float64(totBad)/float64(totN), 100*float64(totEmpty)/float64(totN), 100*float64(totNearBad)/float64(totNear))
}
