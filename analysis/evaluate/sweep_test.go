package evaluate

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"whirlfit/analysis"
	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

var (
	evalN    = flag.Int("eval.n", 10, "number of random cases in the sweep")
	evalSeed = flag.Uint64("eval.seed", 20261201, "seed of the sweep")
	evalKeep = flag.String("eval.keep", "", "folder to write each case's recording and truth into")
	evalImp  = flag.Float64("eval.impair", -1, "probability of each impairment (negative: the synthesizer's default)")
)

// sweepOptions returns the synthesizer's default ranges with -eval.impair
// applied.
func sweepOptions() *synth.RandomOptions {
	opts := synth.DefaultRandomOptions()
	if *evalImp >= 0 {
		opts.Impairment = *evalImp
	}
	return opts
}

// stepScore is one true step matched (or not) with a reported one.
type stepScore struct {
	found             bool
	tauErr            float64 // relative
	thetaErrS         float64 // absolute, with command times
	rpmErr            float64 // relative, plateau after the step
	tauCovered        bool
	thetaCovered      bool
	hasTheta          bool
	direction         string
	tau, trueTau, snr float64
	// 95 % half-widths: τ relative (half the interval over the estimate),
	// θ in seconds.
	tauHalf, thetaHalf float64
}

func decodeCase(t *testing.T, i int, c synth.Case, chans [][]float32) (*dsp.Audio, error) {
	sr := c.Scene.SampleRate
	if c.Format != synth.WAV16 && c.Format != synth.WAV24 && c.Format != synth.WAVFloat {
		dir := t.TempDir()
		if *evalKeep != "" {
			dir = *evalKeep
		}
		p := filepath.Join(dir, fmt.Sprintf("case%02d%s", i, c.Format.Ext()))
		err := synth.WriteFile(context.Background(), p, chans, sr, c.Format)
		if err == nil {
			return dsp.DecodeFile(p)
		}
		if !errors.Is(err, synth.ErrNoEncoder) {
			return nil, err
		}
		t.Logf("case %d: %v; falling back to 16-bit WAV", i, err)
	}
	bits := c.Bits
	if bits == 0 {
		bits = 16
	}
	b, err := synth.EncodeWAV(chans, sr, bits)
	if err != nil {
		return nil, err
	}
	if *evalKeep != "" {
		os.WriteFile(filepath.Join(*evalKeep, fmt.Sprintf("case%02d.wav", i)), b, 0o644)
	}
	return dsp.Decode(fmt.Sprintf("case%02d.wav", i), b)
}

// nextCase draws case i, renders it in its file format, decodes it and
// returns it with the analysis configuration (the true blade count, the
// first microphone when a trigger channel is present) and the true command
// times. ok is false when the case could not be decoded (reported).
func nextCase(t *testing.T, i int, rng *rand.Rand, opts *synth.RandomOptions) (c synth.Case, a *dsp.Audio, cfg analysis.Config, cmds []float64, ok bool) {
	t.Helper()
	c = synth.RandomScene(rng, opts)
	chans, err := c.Render()
	if err != nil {
		t.Fatalf("case %d: render: %v", i, err)
	}
	if a, err = decodeCase(t, i, c, chans); err != nil {
		t.Errorf("case %d (%s): decode: %v", i, c.Format, err)
		return c, nil, cfg, nil, false
	}
	cfg = analysis.Config{Blades: c.Truth.Blades}
	if c.Truth.TriggerChannel >= 0 {
		cfg.Channel = 1 // the first microphone; the trigger is not mixed in
	}
	for _, st := range c.Truth.Steps {
		cmds = append(cmds, st.CommandS)
	}
	return c, a, cfg, cmds, true
}

// score matches true steps with reported ones: same direction, reported
// response start within 60 ms of the true one (θ and τ shift the visible
// start, so the window is generous but far shorter than the 0.25 s
// shortest gap).
func score(c synth.Case, rep *analysis.Report, withCommands bool) (ss []stepScore, falseSteps int) {
	used := make([]bool, len(rep.Steps))
	for _, st := range c.Truth.Steps {
		s := stepScore{direction: "down", trueTau: st.TauS, snr: c.Scene.SNRdB}
		if st.Up() {
			s.direction = "up"
		}
		start := st.CommandS + st.DeadS
		best, bestD := -1, 0.06
		for j, r := range rep.Steps {
			if used[j] || string(r.Direction) != s.direction {
				continue
			}
			d := math.Abs(r.ResponseStartS - start)
			if withCommands && r.CommandS != nil {
				d = math.Abs(*r.CommandS - st.CommandS)
			}
			if d < bestD {
				best, bestD = j, d
			}
		}
		if best >= 0 {
			used[best] = true
			r := rep.Steps[best]
			s.found = true
			s.tau = r.TauS.Value
			s.tauErr = math.Abs(r.TauS.Value-st.TauS) / st.TauS
			s.tauCovered = r.TauS.CI95[0] <= st.TauS && st.TauS <= r.TauS.CI95[1]
			s.tauHalf = (r.TauS.CI95[1] - r.TauS.CI95[0]) / 2 / r.TauS.Value
			trueAfter := analysis.RPM(st.TargetHz)
			s.rpmErr = math.Abs(r.RPMAfter.Value-trueAfter) / trueAfter
			if r.DeadTimeS != nil {
				s.hasTheta = true
				s.thetaErrS = math.Abs(r.DeadTimeS.Value - st.DeadS)
				s.thetaCovered = r.DeadTimeS.CI95[0] <= st.DeadS && st.DeadS <= r.DeadTimeS.CI95[1]
				s.thetaHalf = (r.DeadTimeS.CI95[1] - r.DeadTimeS.CI95[0]) / 2
			}
		}
		ss = append(ss, s)
	}
	for _, u := range used {
		if !u {
			falseSteps++
		}
	}
	return ss, falseSteps
}

// unmatched describes the reported steps that match no true step (as
// score matches them without command times) and the true steps that no
// reported step matches: direction, response start and speeds, for the
// sweep's per-case lines.
func unmatched(c synth.Case, rep *analysis.Report) string {
	used := make([]bool, len(rep.Steps))
	var b strings.Builder
	for _, st := range c.Truth.Steps {
		dir := analysis.Down
		if st.Up() {
			dir = analysis.Up
		}
		start := st.CommandS + st.DeadS
		best, bestD := -1, 0.06
		for j, r := range rep.Steps {
			if d := math.Abs(r.ResponseStartS - start); !used[j] && r.Direction == dir && d < bestD {
				best, bestD = j, d
			}
		}
		if best < 0 {
			fmt.Fprintf(&b, " {undetected %s %.2f s}", dir, start)
			continue
		}
		used[best] = true
	}
	for j, u := range used {
		if !u {
			r := rep.Steps[j]
			fmt.Fprintf(&b, " {false %s %.2f s %.0f→%.0f rpm τ %.1f ms}", r.Direction, r.ResponseStartS, r.RPMBefore.Value, r.RPMAfter.Value, 1e3*r.TauS.Value)
		}
	}
	return b.String()
}

func quantile(x []float64, q float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := slices.Clone(x)
	slices.Sort(s)
	pos := q * float64(len(s)-1)
	lo := int(math.Floor(pos))
	hi := min(lo+1, len(s)-1)
	return s[lo] + (pos-float64(lo))*(s[hi]-s[lo])
}

// TestSweep renders random cases across the held-out ranges and scores the
// analysis twice: with the command times given (dead time measurable) and
// with the steps left to detection.
func TestSweep(t *testing.T) {
	if *evalKeep != "" {
		if err := os.MkdirAll(*evalKeep, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	rng := rand.New(rand.NewPCG(*evalSeed, 0x77686972))
	opts := sweepOptions()
	var tauErr, thetaErr, rpmErr, tauHalf, thetaHalf []float64
	var found, total, falseSteps, covTau, covTheta, nTheta int
	var foundDet, falseDet int
	for i := range *evalN {
		c, a, cfg, cmds, ok := nextCase(t, i, rng, opts)
		if !ok {
			continue
		}
		// With command times.
		cfg.CommandTimesS = cmds
		rep, err := analysis.Run(context.Background(), a, cfg, nil)
		if err != nil {
			t.Errorf("case %d: %v", i, err)
			continue
		}
		ss, fs := score(c, rep, true)
		falseSteps += fs
		// Without: detection must find the steps by itself.
		cfg.CommandTimesS = nil
		repDet, err := analysis.Run(context.Background(), a, cfg, nil)
		if err != nil {
			t.Errorf("case %d (detection): %v", i, err)
			continue
		}
		ssDet, fsDet := score(c, repDet, false)
		falseDet += fsDet
		var line strings.Builder
		fmt.Fprintf(&line, "case %2d %-60s", i, c.String())
		for k, s := range ss {
			total++
			if ssDet[k].found {
				foundDet++
			}
			if !s.found {
				fmt.Fprintf(&line, " [%s MISSED]", s.direction)
				continue
			}
			found++
			tauErr = append(tauErr, s.tauErr)
			tauHalf = append(tauHalf, s.tauHalf)
			rpmErr = append(rpmErr, s.rpmErr)
			if s.tauCovered {
				covTau++
			}
			if s.hasTheta {
				nTheta++
				thetaErr = append(thetaErr, s.thetaErrS)
				thetaHalf = append(thetaHalf, s.thetaHalf)
				if s.thetaCovered {
					covTheta++
				}
			}
			mark, thMark := "", ""
			if !s.tauCovered {
				mark = "!"
			}
			if s.hasTheta && !s.thetaCovered {
				thMark = "!"
			}
			fmt.Fprintf(&line, " [%s τ %.1f/%.1f ms%s θerr %.1f ms%s rpm %.2f%%]", s.direction, 1e3*s.tau, 1e3*s.trueTau, mark, 1e3*s.thetaErrS, thMark, 100*s.rpmErr)
		}
		if fs > 0 || fsDet > 0 {
			fmt.Fprintf(&line, " false: %d given, %d detected", fs, fsDet)
		}
		line.WriteString(unmatched(c, repDet))
		t.Log(line.String())
	}
	if total == 0 {
		t.Fatal("no steps scored")
	}
	t.Logf("steps: %d true; with command times %d found, %d false; detection alone %d found, %d false", total, found, falseSteps, foundDet, falseDet)
	t.Logf("|τ error|: median %.2f %%, 95th percentile %.2f %% (goal ≤ 3 %%, ≤ 10 %%)", 100*quantile(tauErr, 0.5), 100*quantile(tauErr, 0.95))
	t.Logf("|θ error|: median %.2f ms (goal ≤ 2 ms)", 1e3*quantile(thetaErr, 0.5))
	t.Logf("rpm error after the step: median %.3f %%, max %.3f %% (goal ≤ 0.5 %%)", 100*quantile(rpmErr, 0.5), 100*quantile(rpmErr, 1))
	t.Logf("95 %% interval coverage: τ %.1f %% of %d, θ %.1f %% of %d (goal 90–98 %%)", 100*float64(covTau)/float64(found), found, 100*float64(covTheta)/float64(max(nTheta, 1)), nTheta)
	t.Logf("95 %% interval half-widths: median τ %.1f %% of the estimate, θ %.2f ms", 100*quantile(tauHalf, 0.5), 1e3*quantile(thetaHalf, 0.5))

	// Regression guards: the held-out goals where a sweep of this size can
	// show them (medians), looser bounds where a few hard cases dominate.
	if f := float64(found) / float64(total); f < 0.9 {
		t.Errorf("with command times %.0f %% of steps found, want ≥ 90 %%", 100*f)
	}
	if m := quantile(tauErr, 0.5); m > 0.03 {
		t.Errorf("median |τ error| %.2f %%, want ≤ 3 %%", 100*m)
	}
	if m := quantile(thetaErr, 0.5); m > 0.002 {
		t.Errorf("median |θ error| %.2f ms, want ≤ 2 ms", 1e3*m)
	}
	if m := quantile(rpmErr, 0.5); m > 0.005 {
		t.Errorf("median rpm error %.3f %%, want ≤ 0.5 %%", 100*m)
	}
}
