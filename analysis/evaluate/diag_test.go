package evaluate

import (
	"context"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"

	"whirlfit/analysis"
)

var (
	evalDiag  = flag.Bool("eval.diag", false, "run TestSweepDiagnostics: per-step intervals and warnings of the sweep's cases")
	evalTrack = flag.String("eval.track", "", "with -eval.diag, `case:from:to` (several separated by commas): also print that case's track samples between from and to seconds")
)

// TestSweepDiagnostics prints, for the same random cases as TestSweep, every
// true step next to the reported intervals and warnings, with and without
// command times. It measures nothing on its own; it is the tool for finding
// why a sweep case misses.
func TestSweepDiagnostics(t *testing.T) {
	if !*evalDiag {
		t.Skip("diagnostics only with -eval.diag")
	}
	rng := rand.New(rand.NewPCG(*evalSeed, 0x77686972))
	opts := sweepOptions()
	for i := range *evalN {
		c, a, cfg, cmds, ok := nextCase(t, i, rng, opts)
		if !ok {
			continue
		}
		t.Logf("case %d %s", i, c.String())
		var tFrom, tTo []float64
		for _, spec := range strings.Split(*evalTrack, ",") {
			var tc int
			var a, b float64
			if _, err := fmt.Sscanf(strings.ReplaceAll(spec, ":", " "), "%d %g %g", &tc, &a, &b); err == nil && tc == i {
				tFrom, tTo = append(tFrom, a), append(tTo, b)
			}
		}
		dumpTrack := len(tFrom) > 0
		for _, with := range []bool{true, false} {
			cfg.CommandTimesS = nil
			if with {
				cfg.CommandTimesS = cmds
			}
			rep, err := analysis.Run(context.Background(), a, cfg, nil)
			if err != nil {
				t.Errorf("case %d: %v", i, err)
				continue
			}
			if dumpTrack && with {
				tr := rep.Track
				for w := range tFrom {
					for k, ts := range tr.TimeS {
						if ts >= tFrom[w] && ts <= tTo[w] {
							t.Logf("   track %.4f %.1f sd %.2f conf %.2f", ts, analysis.RPM(tr.ShaftHz[k]), analysis.RPM(tr.SigmaHz[k]), tr.Confidence[k])
						}
					}
				}
			}
			for _, st := range c.Truth.Steps {
				start := st.CommandS + st.DeadS
				best, bestD := -1, 0.3
				for j, r := range rep.Steps {
					d := math.Abs(r.ResponseStartS - start)
					if with && r.CommandS != nil {
						d = math.Abs(*r.CommandS - st.CommandS)
					}
					if d < bestD {
						best, bestD = j, d
					}
				}
				if best < 0 {
					t.Logf("   cmd=%v true start %.3f τ %.1f ms θ %.1f ms %.0f→%.0f Hz: NO RESULT", with, start, 1e3*st.TauS, 1e3*st.DeadS, st.FromHz, st.TargetHz)
					continue
				}
				r := rep.Steps[best]
				mt, mth := "", ""
				if !(r.TauS.CI95[0] <= st.TauS && st.TauS <= r.TauS.CI95[1]) {
					mt = "!"
				}
				th := "-"
				if r.DeadTimeS != nil {
					if !(r.DeadTimeS.CI95[0] <= st.DeadS && st.DeadS <= r.DeadTimeS.CI95[1]) {
						mth = "!"
					}
					th = strings.Join([]string{f1(1e3 * r.DeadTimeS.Value), "[", f1(1e3 * r.DeadTimeS.CI95[0]), f1(1e3 * r.DeadTimeS.CI95[1]), "]"}, " ")
				}
				if with && r.Fit != nil && r.CommandS != nil {
					t.Logf("   ind %s", onsetIndicators(rep.Track, r, *r.CommandS))
				}
				t.Logf("   cmd=%v true start %.3f τ %.1f ms θ %.1f ms %.0f→%.0f Hz | got %s start %.3f τ %.1f [%.1f %.1f]%s θ %s%s R² %.3f | %q",
					with, start, 1e3*st.TauS, 1e3*st.DeadS, st.FromHz, st.TargetHz, r.Direction, r.ResponseStartS,
					1e3*r.TauS.Value, 1e3*r.TauS.CI95[0], 1e3*r.TauS.CI95[1], mt, th, mth, r.R2, r.Warnings)
			}
			if !with {
				for _, r := range rep.Steps {
					t.Logf("   reported %s start %.3f τ %.1f ms", r.Direction, r.ResponseStartS, 1e3*r.TauS.Value)
				}
				for _, w := range rep.Warnings {
					t.Logf("   file warning: %s", w)
				}
			}
		}
	}
}

func f1(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }

// onsetIndicators summarises the track near a fitted onset (diagnostics).
func onsetIndicators(tr *analysis.Track, r analysis.StepResult, cmd float64) string {
	f := r.Fit
	span := float64(len(tr.Kernel)) * tr.KernelDtS
	sg := 1.0
	if f.DeltaRPM < 0 {
		sg = -1
	}
	t0, tau := f.OnsetS, f.TauS
	var plat []float64
	maxJ, maxM := 0.0, 0.0
	minConf := math.Inf(1)
	dep := math.NaN()
	run := 0
	for i, ts := range tr.TimeS {
		if ts >= cmd-0.1 && ts < cmd && tr.Valid(i) {
			plat = append(plat, tr.Confidence[i])
		}
		if ts >= t0-span && ts <= t0+2*tau+span && i+1 < tr.Len() && tr.Valid(i) && tr.Valid(i+1) {
			maxJ = math.Max(maxJ, sg*(tr.RPMAt(i+1)-tr.RPMAt(i)))
			maxM = math.Max(maxM, sg*(f.SeenModel(tr.TimeS[i+1])-f.SeenModel(ts)))
		}
		if ts >= cmd && ts <= t0+tau {
			c := 0.0
			if tr.Valid(i) {
				c = tr.Confidence[i]
			}
			minConf = math.Min(minConf, c)
		}
		if ts >= cmd && math.IsNaN(dep) && tr.Valid(i) {
			if sg*(tr.RPMAt(i)-f.RPMBefore) > 3*analysis.RPM(tr.SigmaHz[i]) {
				run++
				if run == 3 {
					dep = tr.TimeS[i-2]
				}
			} else {
				run = 0
			}
		}
	}
	var tc, ps, tsd []float64
	for i, ts := range tr.TimeS {
		if !tr.Valid(i) {
			continue
		}
		if ts >= t0 && ts <= t0+math.Min(tau, 0.05) {
			tc = append(tc, tr.Confidence[i])
			tsd = append(tsd, tr.SigmaHz[i])
		}
		if ts >= cmd-0.1 && ts < cmd {
			ps = append(ps, tr.SigmaHz[i])
		}
	}
	med := func(x []float64) float64 {
		if len(x) == 0 {
			return math.NaN()
		}
		slices.Sort(x)
		return x[len(x)/2]
	}
	extra := fmt.Sprintf(" tconf %.2f sdratio %.2f", med(tc), med(tsd)/med(ps))
	pc := math.NaN()
	if len(plat) > 0 {
		slices.Sort(plat)
		pc = plat[len(plat)/2]
	}
	return fmt.Sprintf("span %.1f ms jump %.2f conf %.2f/%.2f dep %.1f ms", 1e3*span, maxJ/math.Max(maxM, 1e-9), minConf, pc, 1e3*(dep-t0)) + extra
}
