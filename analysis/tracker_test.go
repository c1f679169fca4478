package analysis

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// renderScene renders sc and tracks it with cfg.
func renderAndTrack(t testing.TB, sc synth.Scene, cfg TrackConfig) *Track {
	t.Helper()
	x, err := synth.Render(sc)
	if err != nil {
		t.Fatal(err)
	}
	tr, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: x, SampleRate: float64(sc.SampleRate)}, cfg, nil)
	if err != nil {
		t.Fatal(err)
	}
	return tr
}

// trackStats compares a track with the truth sampled at the track's times
// and convolved with the track's kernel (kernel = true) or not.
type trackStats struct {
	n, voiced, missed, false_ int
	rmsRel, medRel, maxRel    float64
	gross                     int // samples off by more than 5 %
}

func compareTrack(tr *Track, truth synth.Trajectory, kernel bool, fromS, toS float64) trackStats {
	var st trackStats
	var errs []float64
	for i, t := range tr.TimeS {
		if t < fromS || t > toS {
			continue
		}
		want := truth(t)
		if kernel {
			want = 0
			m := len(tr.Kernel)
			for j, w := range tr.Kernel {
				want += w * math.Max(0, truth(t+(float64(j)-float64(m-1)/2)*tr.KernelDtS))
			}
		}
		st.n++
		run := truth(t) > 0
		switch {
		case run && !tr.Valid(i):
			st.missed++
			continue
		case !run && tr.Valid(i):
			st.false_++
			continue
		case !run:
			continue
		}
		st.voiced++
		e := (tr.ShaftHz[i] - want) / want
		if math.Abs(e) > 0.05 {
			st.gross++
		}
		errs = append(errs, math.Abs(e))
		st.rmsRel += e * e
		st.maxRel = math.Max(st.maxRel, math.Abs(e))
	}
	if st.voiced > 0 {
		st.rmsRel = math.Sqrt(st.rmsRel / float64(st.voiced))
		slices.Sort(errs)
		st.medRel = errs[len(errs)/2]
	}
	return st
}

// meanShaft returns the mean of the valid track samples in [fromS, toS].
func meanShaft(tr *Track, fromS, toS float64) (float64, int) {
	var s float64
	n := 0
	for i, t := range tr.TimeS {
		if t >= fromS && t <= toS && tr.Valid(i) {
			s += tr.ShaftHz[i]
			n++
		}
	}
	return s / float64(n), n
}

// steadyScene is a rotor at a constant speed with white noise at snrDB.
func steadyScene(blades int, f0, snrDB float64, seed uint64) synth.Scene {
	return synth.Scene{SampleRate: 48000, DurationS: 2, Shaft: synth.Constant(f0),
		Rotor: synth.NewRotor(blades, 7), SNRdB: snrDB, Seed: seed}
}

// Issue 3 §5: steady-rpm error ≤ 0.2 % at SNR ≥ 10 dB and ≤ 1 % at 0 dB.
func TestTrackSteady(t *testing.T) {
	for _, c := range []struct {
		blades  int
		f0, snr float64
		maxRel  float64
	}{
		{2, 300, 30, 0.002}, {2, 300, 10, 0.002}, {3, 150, 10, 0.002}, {4, 450, 10, 0.002},
		{2, 300, 0, 0.01}, {5, 100, 0, 0.01},
	} {
		tr := renderAndTrack(t, steadyScene(c.blades, c.f0, c.snr, 7), TrackConfig{Blades: c.blades})
		mean, n := meanShaft(tr, 0.2, 1.8)
		rel := (mean - c.f0) / c.f0
		st := compareTrack(tr, synth.Constant(c.f0), false, 0.2, 1.8)
		// SigmaHz calibration: RMS error over RMS reported sigma.
		var s2 float64
		for i, tt := range tr.TimeS {
			if tt >= 0.2 && tt <= 1.8 && tr.Valid(i) {
				s2 += tr.SigmaHz[i] * tr.SigmaHz[i]
			}
		}
		ratio := st.rmsRel * c.f0 / math.Sqrt(s2/float64(n))
		t.Logf("B=%d f0=%.0f Hz SNR=%.0f dB: mean %.4f Hz (%+.4f %%), per-frame RMS %.4f %%, %d/%d frames; RMS error / RMS SigmaHz = %.2f",
			c.blades, c.f0, c.snr, mean, 100*rel, 100*st.rmsRel, n, st.n, ratio)
		if math.Abs(rel) > c.maxRel || n < st.n*9/10 {
			t.Errorf("B=%d f0=%.0f SNR=%.0f: error %.4f %% over %d of %d frames, want ≤ %.1f %%", c.blades, c.f0, c.snr, 100*rel, n, st.n, 100*c.maxRel)
		}
	}
}

// Issue 3 §5: track RMS error ≤ 1 % across steps with τ ≥ 10 ms. The truth
// is seen through the track's kernel (Track.Kernel); the RMS against the
// raw truth is printed beside it.
func TestTrackSteps(t *testing.T) {
	for _, c := range []struct {
		blades int
		tau    float64
		snr    float64
	}{
		{2, 0.010, 20}, {3, 0.030, 10}, {4, 0.060, 20},
	} {
		traj := synth.Steps(200,
			synth.Step{CommandS: 0.6, TargetHz: 340, TauS: c.tau, DeadS: 0.005},
			synth.Step{CommandS: 1.3, TargetHz: 250, TauS: c.tau * 1.5, DeadS: 0.005})
		sc := synth.Scene{SampleRate: 48000, DurationS: 2, Shaft: traj, Rotor: synth.NewRotor(c.blades, 7), SNRdB: c.snr, Seed: 3}
		tr := renderAndTrack(t, sc, TrackConfig{Blades: c.blades})
		k := compareTrack(tr, traj, true, 0.1, 1.9)
		raw := compareTrack(tr, traj, false, 0.1, 1.9)
		t.Logf("B=%d τ=%.0f ms SNR=%.0f dB: RMS vs kernel-seen truth %.3f %%, vs raw truth %.3f %% (max %.2f %%), kernel %.1f ms, %d/%d frames",
			c.blades, 1e3*c.tau, c.snr, 100*k.rmsRel, 100*raw.rmsRel, 100*k.maxRel, 1e3*tr.KernelDtS*float64(len(tr.Kernel)-1), k.voiced, k.n)
		if k.rmsRel > 0.01 || k.missed > k.n/20 {
			t.Errorf("τ=%.0f ms: RMS %.3f %% with %d missed frames, want ≤ 1 %%", 1e3*c.tau, 100*k.rmsRel, k.missed)
		}
	}
}

// The kernel claim (methods notes §1.5): a track sample is the w²-weighted
// mean of the true speed over its frame. It holds while the speed moves by
// less than about a bin within one frame; a jump across many bins inside
// one frame is seen as whichever line is stronger. The test renders a
// step slow enough for the first case and checks that the kernel-seen
// truth fits the track clearly better than the raw truth; it prints the
// figures of a fast step, where the claim is only approximate.
func TestTrackKernel(t *testing.T) {
	for _, c := range []struct {
		tau, to float64
		frame   int
		assert  bool
	}{
		{0.040, 262, 2048, true}, // 250→262 Hz: under a bin per frame at the blade-pass line
		{0.008, 375, 2048, false},
	} {
		traj := synth.Steps(250, synth.Step{CommandS: 0.8, TargetHz: c.to, TauS: c.tau})
		sc := synth.Scene{SampleRate: 48000, DurationS: 1.6, Shaft: traj, Rotor: synth.NewRotor(2, 7), SNRdB: math.Inf(1), Seed: 5}
		sc.Rotor.AMDepth, sc.Rotor.SpreadDB = 0, 0
		tr := renderAndTrack(t, sc, TrackConfig{Blades: 2, STFT: dsp.STFTConfig{FrameLen: c.frame, Hop: 128}})
		k := compareTrack(tr, traj, true, 0.75, 0.8+8*c.tau)
		raw := compareTrack(tr, traj, false, 0.75, 0.8+8*c.tau)
		var sw, sw2 float64
		for j, w := range tr.Kernel {
			x := (float64(j) - float64(len(tr.Kernel)-1)/2) * tr.KernelDtS
			sw += w
			sw2 += w * x * x
		}
		t.Logf("step 250→%.0f Hz, τ = %.0f ms, frame %d: RMS vs kernel-seen truth %.4f %%, vs raw truth %.4f %%; kernel sum %.6f, sd %.2f ms (0.1414 × frame = %.2f ms)",
			c.to, 1e3*c.tau, c.frame, 100*k.rmsRel, 100*raw.rmsRel, sw, 1e3*math.Sqrt(sw2), 1e3*0.1414*float64(c.frame)/48000)
		if math.Abs(sw-1) > 1e-9 {
			t.Errorf("kernel sums to %g, want 1", sw)
		}
		if c.assert && !(k.rmsRel < raw.rmsRel/1.5) {
			t.Errorf("τ = %.0f ms: kernel-seen RMS %.4f %% not well below raw %.4f %%", 1e3*c.tau, 100*k.rmsRel, 100*raw.rmsRel)
		}
	}
}

// Issue 3 §5: no octave or blade errors across blade counts 2–5 and shaft
// 80–550 Hz with reverberation, mains hum, a fixed whine tone and clipping
// in some.
func TestTrackNoOctaveErrors(t *testing.T) {
	type imp struct {
		name                            string
		reverb, humDB, toneHz, clip, hp float64
	}
	imps := []imp{
		{"dry", 0, 0, 0, 0, 0},
		{"reverb", 0.4, 0, 0, 0, 0},
		{"hum", 0, 0, 0, 0, 0},
		{"tone+clip", 0, 0, 1234, 0.6, 0},
		{"reverb+hum+highpass", 0.3, -3, 0, 0, 150},
	}
	imps[2].humDB = 0
	bad := 0
	n := 0
	for bi, blades := range []int{2, 3, 4, 5} {
		for fi, f0 := range []float64{80, 170, 320, 550} {
			im := imps[(bi+fi)%len(imps)]
			sc := synth.Scene{SampleRate: 44100, DurationS: 1.2, Shaft: synth.Constant(f0), Rotor: synth.NewRotor(blades, 7),
				SNRdB: 15, ReverbS: im.reverb, ReverbDRRdB: 6, ClipLevel: im.clip, ToneHz: im.toneHz, ToneDB: -3,
				HighPassHz: im.hp, Seed: uint64(10*bi + fi)}
			if im.name == "hum" || im.humDB != 0 {
				sc.HumHz, sc.HumDB = 50, im.humDB
			}
			tr := renderAndTrack(t, sc, TrackConfig{Blades: blades})
			mean, _ := meanShaft(tr, 0.2, 1.0)
			st := compareTrack(tr, sc.Shaft, false, 0.2, 1.0)
			n++
			// An octave or blade-count error moves the whole track by 33 % or
			// more: the median frame error tells it. Frames off by over 5 %
			// (a passing capture by an interfering line) are printed.
			ok := st.medRel < 0.01 && st.missed <= st.n/10
			if !ok {
				bad++
			}
			t.Logf("B=%d f0=%3.0f Hz %-20s mean %8.3f Hz (%+.3f %%), median error %.3f %%, %d of %d frames off by > 5 %%, %d empty; ok=%v %q",
				blades, f0, im.name, mean, 100*(mean-f0)/f0, 100*st.medRel, st.gross, st.n, st.missed, ok, tr.Warnings)
		}
	}
	if bad > 0 {
		t.Errorf("%d of %d scenes tracked at the wrong speed (octave or blade-count error)", bad, n)
	}
}

// Common practice: a motor's no-load speed ≈ kV × supply voltage; 5000 kV
// on 7.8 V is 39,000 rpm = 650 rev/s. With 2 blades the lines lie at 650 and
// 1,300 Hz; with 3 blades at 650 and 1,950 Hz. Both read 39,000 rpm ± 0.2 %.
func TestTrackKVOutsideCheck(t *testing.T) {
	const fs = 48000
	for _, c := range []struct {
		blades int
		lines  [2]float64
	}{{2, [2]float64{650, 1300}}, {3, [2]float64{650, 1950}}} {
		x := make([]float32, fs)
		rng := rand.New(rand.NewPCG(1, uint64(c.blades)))
		for i := range x {
			tt := float64(i) / fs
			x[i] = float32(0.3*math.Sin(2*math.Pi*c.lines[0]*tt) + 0.3*math.Sin(2*math.Pi*c.lines[1]*tt+1) + 0.01*rng.NormFloat64())
		}
		tr, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: x, SampleRate: fs}, TrackConfig{Blades: c.blades}, nil)
		if err != nil {
			t.Fatal(err)
		}
		mean, n := meanShaft(tr, 0, 1)
		rpm := RPM(mean)
		t.Logf("B=%d lines %v Hz: %.1f rpm (%+.4f %%) over %d frames", c.blades, c.lines, rpm, 100*(rpm-39000)/39000, n)
		if math.Abs(rpm-39000)/39000 > 0.002 {
			t.Errorf("B=%d: got %.1f rpm, want 39000 ± 0.2 %%", c.blades, rpm)
		}
	}
}

// Frames without a motor are flagged, not invented.
func TestTrackNoMotor(t *testing.T) {
	const fs = 16000
	rng := rand.New(rand.NewPCG(4, 4))
	x := make([]float32, 2*fs)
	for i := range x {
		x[i] = float32(0.05 * rng.NormFloat64())
	}
	tr, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: x, SampleRate: fs}, TrackConfig{Blades: 2}, nil)
	if err != nil {
		t.Fatal(err)
	}
	n := tr.validCount()
	t.Logf("white noise: %d of %d frames claimed a motor; warnings %q", n, tr.Len(), tr.Warnings)
	if n > tr.Len()/50 {
		t.Errorf("%d of %d noise frames hold a speed", n, tr.Len())
	}
	// A motor that stops for half a second: the gap is left empty.
	traj := synth.Stopped(synth.Constant(250), [2]float64{0.8, 1.3})
	tr = renderAndTrack(t, synth.Scene{SampleRate: 48000, DurationS: 2, Shaft: traj, Rotor: synth.NewRotor(3, 7), SNRdB: 20, Seed: 9}, TrackConfig{Blades: 3})
	st := compareTrack(tr, traj, false, 0.1, 1.9)
	t.Logf("stop 0.8–1.3 s: %d missed, %d false of %d frames", st.missed, st.false_, st.n)
	if st.false_ > st.n/20 || st.missed > st.n/20 {
		t.Errorf("stop: %d false and %d missed frames of %d", st.false_, st.missed, st.n)
	}
	if _, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: x[:100], SampleRate: fs}, TrackConfig{}, nil); err == nil {
		t.Error("100 samples accepted")
	}
	if _, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: x, SampleRate: fs}, TrackConfig{Blades: -1}, nil); err == nil {
		t.Error("negative blade count accepted")
	}
}

// A randomized generality sweep over the synthesizer's benchmark-like
// ranges (dsp/synth.RandomScene: blade counts 2–5, shaft 80–550 Hz, SNR
// −5…30 dB, every impairment on or off, other machines, standstill
// starts). It prints per-case figures and asserts a floor on the share of
// cases tracked at the right speed; the frames off by more than 5 % that
// it prints, and its failures, are the
// tracker's known weak spots (a louder machine in the room captures the
// track; a reverberant tail holds the old speed after a fast step).
func TestTrackRandomSweep(t *testing.T) {
	n := 8
	if testing.Short() {
		n = 4
	}
	rng := rand.New(rand.NewPCG(2026, 3))
	good := 0
	var meds []float64
	for c := 0; c < n; c++ {
		cs := synth.RandomScene(rng, nil)
		tr := renderAndTrack(t, cs.Scene, TrackConfig{Blades: cs.Truth.Blades})
		st := compareTrack(tr, cs.Truth.Shaft, true, 0, cs.Scene.DurationS)
		ok := st.medRel < 0.005
		if ok {
			good++
		}
		meds = append(meds, st.medRel)
		t.Logf("%v", cs)
		t.Logf("  ok=%v median error %.3f %%, RMS %.2f %%, %d of %d frames off > 5 %%, %d missed, %d false; %q",
			ok, 100*st.medRel, 100*st.rmsRel, st.gross, st.voiced, st.missed, st.false_, tr.Warnings)
	}
	slices.Sort(meds)
	t.Logf("%d of %d cases at the right speed (median frame error < 0.5 %%); median of median errors %.3f %%",
		good, n, 100*meds[len(meds)/2])
	if good < n/2 {
		t.Errorf("only %d of %d random cases tracked well", good, n)
	}
}

// With Blades = 0 the tracker reads the blade count from the comb and says
// so. The reading needs shaft-order lines (the shaft line, its harmonics,
// the motor's whine); where a high-pass or noise hides them it can mistake
// (f0, B) for (f0·B/B', B'), which is why the warning asks for the count.
// On random benchmark-like scenes it read 15 of 24 right (see the report).
func TestTrackEstimateBlades(t *testing.T) {
	for _, c := range []struct {
		blades int
		f0     float64
		assert bool
	}{
		{4, 300, true}, {5, 300, true}, {2, 300, true}, {3, 120, true}, {5, 120, true}, {2, 120, true},
	} {
		sc := synth.Scene{SampleRate: 48000, DurationS: 1.5, Shaft: synth.Constant(c.f0), Rotor: synth.NewRotor(c.blades, 7), SNRdB: 15, Seed: uint64(c.blades)}
		tr := renderAndTrack(t, sc, TrackConfig{})
		m, _ := meanShaft(tr, 0.2, 1.3)
		t.Logf("true B=%d f0=%.0f Hz: estimated %d blades, shaft %.2f Hz; %q", c.blades, c.f0, tr.Blades, m, tr.Warnings)
		if len(tr.Warnings) == 0 || !strings.Contains(tr.Warnings[0], "blade count") {
			t.Errorf("no blade-count warning: %q", tr.Warnings)
		}
		if c.assert && (tr.Blades != c.blades || math.Abs(m-c.f0)/c.f0 > 0.002) {
			t.Errorf("B=%d f0=%.0f: got %d blades at %.2f Hz", c.blades, c.f0, tr.Blades, m)
		}
	}
}

func TestClippingWarning(t *testing.T) {
	const n = 48000
	sine := make([]float32, n)
	clipped := make([]float32, n)
	for i := range sine {
		v := 0.9 * math.Sin(2*math.Pi*440*float64(i)/n)
		sine[i] = float32(v)
		clipped[i] = float32(max(-0.6, min(0.6, v)))
	}
	if msg := clippingWarning(sine); msg != "" {
		t.Errorf("clean sine: %q", msg)
	}
	msg := clippingWarning(clipped)
	t.Logf("sine clipped at 2/3 of its peak: %q", msg)
	if msg == "" {
		t.Error("clipped sine not reported")
	}
}

// Degenerate inputs give a clear result or error, never a panic.
func TestTrackDegenerate(t *testing.T) {
	for _, c := range []struct {
		name string
		x    []float32
		fs   float64
	}{
		{"silence", make([]float32, 48000), 48000},
		{"300 samples", make([]float32, 300), 48000},
		{"one second at 8 kHz", make([]float32, 8000), 8000},
		{"full-scale square", func() []float32 {
			x := make([]float32, 22050)
			for i := range x {
				x[i] = 1
				if (i/50)%2 == 1 {
					x[i] = -1
				}
			}
			return x
		}(), 22050},
	} {
		tr, spec, err := TrackSignal(context.Background(), dsp.Signal{Samples: c.x, SampleRate: c.fs}, TrackConfig{Blades: 2}, nil)
		if err != nil {
			t.Logf("%s: error %v", c.name, err)
			continue
		}
		t.Logf("%s: %d frames, %d with a motor, display %dx%d, warnings %q", c.name, tr.Len(), tr.validCount(), spec.Frames, spec.Bins, tr.Warnings)
		if len(tr.TimeS) != len(tr.ShaftHz) || len(tr.SigmaHz) != len(tr.ShaftHz) || len(tr.Confidence) != len(tr.ShaftHz) {
			t.Errorf("%s: track slices of different lengths", c.name)
		}
	}
	if _, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: make([]float32, 1000), SampleRate: 0}, TrackConfig{}, nil); err == nil {
		t.Error("zero sample rate accepted")
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, _, err := TrackSignal(ctx, dsp.Signal{Samples: make([]float32, 48000), SampleRate: 48000}, TrackConfig{Blades: 2}, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled context: got %v, want context.Canceled", err)
	}
}

// Sample rates from phone to studio: the same rotor reads the same speed.
func TestTrackSampleRates(t *testing.T) {
	for _, fs := range []int{8000, 22050, 96000, 192000} {
		sc := synth.Scene{SampleRate: fs, DurationS: 1, Shaft: synth.Constant(260), Rotor: synth.NewRotor(3, 7), SNRdB: 15, Seed: 11}
		tr := renderAndTrack(t, sc, TrackConfig{Blades: 3})
		mean, n := meanShaft(tr, 0.15, 0.85)
		rel := (mean - 260) / 260
		t.Logf("%6d Hz: %.4f Hz (%+.4f %%) over %d frames, kernel %.1f ms", fs, mean, 100*rel, n, 1e3*tr.KernelDtS*float64(len(tr.Kernel)-1))
		if math.Abs(rel) > 0.002 || n == 0 {
			t.Errorf("%d Hz: got %.4f Hz, want 260 ± 0.2 %%", fs, mean)
		}
	}
}
