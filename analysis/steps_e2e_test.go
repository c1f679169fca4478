package analysis

import (
	"context"
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// End-to-end checks through Run on audio rendered by the project's
// synthesizer (dsp/synth), whose trajectory is the exact truth.

func e2eScene() (synth.Scene, []synth.StepTruth) {
	steps := []synth.Step{
		{CommandS: 0.8, TargetHz: 300, TauS: 0.035, DeadS: 0.006},
		{CommandS: 1.5, TargetHz: 200, TauS: 0.060, DeadS: 0.004},
		{CommandS: 1.9, TargetHz: 340, TauS: 0.020, DeadS: 0.010},
		{CommandS: 2.6, TargetHz: 240, TauS: 0.050, DeadS: 0.008},
	}
	sc := synth.Scene{
		SampleRate: 48000,
		DurationS:  3.2,
		Shaft:      synth.Steps(200, steps...),
		Rotor:      synth.NewRotor(3, 7),
		SNRdB:      20,
		HighPassHz: 120,
		Seed:       4,
	}
	return sc, synth.StepsTruth(200, steps...)
}

func TestEndToEndSteps(t *testing.T) {
	sc, truth := e2eScene()
	x, err := synth.Render(sc)
	if err != nil {
		t.Fatal(err)
	}
	var cmds []float64
	for _, s := range truth {
		cmds = append(cmds, s.CommandS)
	}
	a := &dsp.Audio{SampleRate: sc.SampleRate, Channels: [][]float32{x}}

	t.Run("detected", func(t *testing.T) {
		rep, err := Run(context.Background(), a, Config{Blades: 3, Steps: StepConfig{Bootstrap: -1}}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(rep.Steps) != len(truth) {
			for _, r := range rep.Steps {
				t.Logf("found %s at %.3f s", r.Direction, r.ResponseStartS)
			}
			t.Fatalf("found %d steps, want %d (warnings %q)", len(rep.Steps), len(truth), rep.Warnings)
		}
		for i, s := range truth {
			r := rep.Steps[i]
			want := Down
			if s.Up() {
				want = Up
			}
			t.Logf("step %d: %s at %.4f s (true %.4f), τ %.2f ms [%.2f, %.2f] (true %.1f)", i, r.Direction, r.ResponseStartS, s.StartS(),
				1e3*r.TauS.Value, 1e3*r.TauS.CI95[0], 1e3*r.TauS.CI95[1], 1e3*s.TauS)
			if r.Direction != want || math.Abs(r.ResponseStartS-s.StartS()) > 0.005 {
				t.Errorf("step %d: %s at %.4f s, want %s at %.4f ± 0.005 s", i, r.Direction, r.ResponseStartS, want, s.StartS())
			}
			if r.DeadTimeS != nil {
				t.Errorf("step %d: dead time reported without a command time", i)
			}
		}
	})

	t.Run("command times", func(t *testing.T) {
		rep, err := Run(context.Background(), a, Config{Blades: 3, CommandTimesS: cmds, Steps: StepConfig{Seed: 1}}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(rep.Steps) != len(truth) {
			t.Fatalf("fitted %d steps, want %d (warnings %q)", len(rep.Steps), len(truth), rep.Warnings)
		}
		for i, s := range truth {
			r := rep.Steps[i]
			t.Logf("step %d: τ %.2f ms [%.2f, %.2f] (true %.1f), θ %.2f ms [%.2f, %.2f] (true %.1f), rpm %.0f → %.0f (true %.0f → %.0f), R² %.4f",
				i, 1e3*r.TauS.Value, 1e3*r.TauS.CI95[0], 1e3*r.TauS.CI95[1], 1e3*s.TauS,
				1e3*r.DeadTimeS.Value, 1e3*r.DeadTimeS.CI95[0], 1e3*r.DeadTimeS.CI95[1], 1e3*s.DeadS,
				r.RPMBefore.Value, r.RPMAfter.Value, RPM(s.FromHz), RPM(s.TargetHz), r.R2)
			// Issue 4 benchmark goals per step: τ within 10 %, θ within
			// 2 ms, rpm within 0.5 %.
			if math.Abs(r.TauS.Value/s.TauS-1) > 0.10 {
				t.Errorf("step %d: τ %.2f ms, want %.1f ms ± 10 %%", i, 1e3*r.TauS.Value, 1e3*s.TauS)
			}
			if math.Abs(r.DeadTimeS.Value-s.DeadS) > 0.002 {
				t.Errorf("step %d: θ %.2f ms, want %.1f ± 2 ms", i, 1e3*r.DeadTimeS.Value, 1e3*s.DeadS)
			}
			if math.Abs(r.RPMAfter.Value/RPM(s.TargetHz)-1) > 0.005 {
				t.Errorf("step %d: rpm after %.0f, want %.0f ± 0.5 %%", i, r.RPMAfter.Value, RPM(s.TargetHz))
			}
		}
	})
}

func TestEndToEndTriggerChannel(t *testing.T) {
	// A stereo recording whose second channel is an AC-coupled toggle line
	// (synth.RenderStereo): the command times come from the line itself.
	sc, truth := e2eScene()
	var cmds []float64
	for _, s := range truth {
		cmds = append(cmds, s.CommandS)
	}
	chans, err := synth.RenderStereo(sc, synth.Trigger{CommandS: cmds, Kind: synth.TriggerToggle, ACHz: 20})
	if err != nil {
		t.Fatal(err)
	}
	a := &dsp.Audio{SampleRate: sc.SampleRate, Channels: chans}
	edges := TriggerEdges(dsp.Signal{Samples: chans[1], SampleRate: float64(sc.SampleRate)})
	if len(edges) != len(cmds) {
		t.Fatalf("trigger edges %v, want %v", edges, cmds)
	}
	for i := range edges {
		// synth puts each edge on the first sample at or after the command.
		if math.Abs(edges[i]-cmds[i]) > 1.5/float64(sc.SampleRate) {
			t.Errorf("edge %d at %.6f s, want %.6f s", i, edges[i], cmds[i])
		}
	}
	rep, err := Run(context.Background(), a, Config{Blades: 3, Channel: 1, TriggerChannel: 2, Steps: StepConfig{Bootstrap: -1}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Steps) != len(truth) {
		t.Fatalf("fitted %d steps, want %d (warnings %q)", len(rep.Steps), len(truth), rep.Warnings)
	}
	for i, s := range truth {
		r := rep.Steps[i]
		if r.CommandS == nil || r.DeadTimeS == nil {
			t.Fatalf("step %d: no command time from the trigger channel", i)
		}
		if math.Abs(r.DeadTimeS.Value-s.DeadS) > 0.002 {
			t.Errorf("step %d: θ %.2f ms, want %.1f ± 2 ms", i, 1e3*r.DeadTimeS.Value, 1e3*s.DeadS)
		}
	}
}

func TestEndToEndRandomScenes(t *testing.T) {
	// Varied scenes from synth.RandomScene (benchmark-like ranges, with
	// impairments), command times given. Logs the issue 4 benchmark
	// figures; the assertions cover the steps whose speeds the tracker got
	// right, since the rest measure the tracker.
	if testing.Short() {
		t.Skip("renders and tracks several recordings")
	}
	rng := rand.New(rand.NewPCG(20261201, 4))
	opts := synth.DefaultRandomOptions()
	opts.Compressed = 0
	opts.MaxDurationS = 5
	var tauErr, thErr, okErr []float64
	in, n, okN, okIn := 0, 0, 0, 0
	for c := 0; c < 8; c++ {
		cs := synth.RandomScene(rng, opts)
		x, err := synth.Render(cs.Scene)
		if err != nil {
			t.Fatal(err)
		}
		var cmds []float64
		for _, s := range cs.Truth.Steps {
			cmds = append(cmds, s.CommandS)
		}
		a := &dsp.Audio{SampleRate: cs.Scene.SampleRate, Channels: [][]float32{x}}
		rep, err := Run(context.Background(), a, Config{Blades: cs.Truth.Blades, CommandTimesS: cmds, Steps: StepConfig{Bootstrap: -1}}, nil)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("case %d: %s", c, cs)
		for _, s := range cs.Truth.Steps {
			for _, r := range rep.Steps {
				if r.CommandS == nil || math.Abs(*r.CommandS-s.CommandS) > 1e-6 {
					continue
				}
				n++
				if r.TauS.CI95[0] <= s.TauS && s.TauS <= r.TauS.CI95[1] {
					in++
				}
				tauErr = append(tauErr, math.Abs(r.TauS.Value/s.TauS-1))
				thErr = append(thErr, math.Abs(r.DeadTimeS.Value-s.DeadS))
				// Steps whose speeds the tracker got right (both plateaus
				// within 1 %) measure the fit rather than the tracker.
				if math.Abs(r.RPMBefore.Value/RPM(s.FromHz)-1) < 0.01 && math.Abs(r.RPMAfter.Value/RPM(s.TargetHz)-1) < 0.01 {
					okN++
					okErr = append(okErr, math.Abs(r.TauS.Value/s.TauS-1))
					if r.TauS.CI95[0] <= s.TauS && s.TauS <= r.TauS.CI95[1] {
						okIn++
					}
				}
			}
		}
	}
	sort.Float64s(tauErr)
	sort.Float64s(thErr)
	t.Logf("%d steps: τ inside its 95 %% interval %d times (%.0f %%); |τ error| median %.1f %%, 95th pct %.1f %%; |θ error| median %.2f ms",
		n, in, 100*float64(in)/float64(max(n, 1)), 100*quantileSorted(tauErr, 0.5), 100*quantileSorted(tauErr, 0.95), 1e3*quantileSorted(thErr, 0.5))
	sort.Float64s(okErr)
	t.Logf("%d steps with both speeds right to 1 %%: τ inside its interval %d times; |τ error| median %.1f %%",
		okN, okIn, 100*quantileSorted(okErr, 0.5))
	if okN < 3 || quantileSorted(okErr, 0.5) > 0.10 || float64(okIn) < 0.6*float64(okN) {
		t.Errorf("where the tracker is right: %d steps, median |τ error| %.1f %%, %d inside the interval; want ≥ 3 steps, ≤ 10 %%, ≥ 60 %% inside",
			okN, 100*quantileSorted(okErr, 0.5), okIn)
	}
}

func TestEndToEndFastStepsSlowRotor(t *testing.T) {
	// A two-blade rotor at 100–150 Hz: the track's frame holds 4.5 turns
	// of the slowest speed (43 ms at 48 kHz, a kernel standard deviation
	// of 6 ms), and the time constants are 6–15 ms. These steps are
	// refitted on the fine track (half the frame). On the track alone θ
	// came out 2.8–3.2 ms off for the 12 ms down steps and the τ
	// intervals spanned a factor of three.
	steps := []synth.Step{
		{CommandS: 0.8, TargetHz: 140, TauS: 0.008, DeadS: 0.004},
		{CommandS: 1.3, TargetHz: 100, TauS: 0.012, DeadS: 0.006},
		{CommandS: 1.8, TargetHz: 150, TauS: 0.006, DeadS: 0.003},
		{CommandS: 2.3, TargetHz: 110, TauS: 0.015, DeadS: 0.005},
	}
	truth := synth.StepsTruth(110, steps...)
	var cmds []float64
	for _, s := range truth {
		cmds = append(cmds, s.CommandS)
	}
	for _, seed := range []uint64{1, 2, 3} {
		sc := synth.Scene{SampleRate: 48000, DurationS: 2.8, Shaft: synth.Steps(110, steps...),
			Rotor: synth.NewRotor(2, 7), SNRdB: 20, HighPassHz: 80, Seed: seed}
		x, err := synth.Render(sc)
		if err != nil {
			t.Fatal(err)
		}
		a := &dsp.Audio{SampleRate: sc.SampleRate, Channels: [][]float32{x}}
		rep, err := Run(context.Background(), a, Config{Blades: 2, CommandTimesS: cmds, Steps: StepConfig{Bootstrap: -1}}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(rep.Steps) != len(truth) {
			t.Fatalf("seed %d: fitted %d steps, want %d (warnings %q)", seed, len(rep.Steps), len(truth), rep.Warnings)
		}
		for i, s := range truth {
			r := rep.Steps[i]
			t.Logf("seed %d step %d: τ %.2f ms [%.2f, %.2f] (true %.1f), θ %.2f ms (true %.1f)", seed, i,
				1e3*r.TauS.Value, 1e3*r.TauS.CI95[0], 1e3*r.TauS.CI95[1], 1e3*s.TauS, 1e3*r.DeadTimeS.Value, 1e3*s.DeadS)
			if math.Abs(r.TauS.Value/s.TauS-1) > 0.07 {
				t.Errorf("seed %d step %d: τ %.2f ms, want %.1f ms ± 7 %%", seed, i, 1e3*r.TauS.Value, 1e3*s.TauS)
			}
			if math.Abs(r.DeadTimeS.Value-s.DeadS) > 0.0015 {
				t.Errorf("seed %d step %d: θ %.2f ms, want %.1f ± 1.5 ms", seed, i, 1e3*r.DeadTimeS.Value, 1e3*s.DeadS)
			}
			if hi, lo := r.TauS.CI95[1], r.TauS.CI95[0]; hi/lo > 1.6 {
				t.Errorf("seed %d step %d: τ interval [%.2f, %.2f] ms spans more than a factor of 1.6", seed, i, 1e3*lo, 1e3*hi)
			}
		}
	}
}
