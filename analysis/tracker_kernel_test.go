package analysis

import (
	"testing"

	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// Track.Kernel's claim on fast, large steps: each sample is the w²-weighted
// mean of the instantaneous shaft frequency over its frame (the first
// frequency moment of a frame's power spectrum is the w²a²-weighted mean
// instantaneous frequency: L. Cohen, Time-Frequency Analysis, Prentice
// Hall 1995, ch. 1 and 7 (from memory)). Steps of 40–50 % at τ = 5–20 ms
// cross many bins within one frame; the track is compared with the
// kernel-seen truth over the transition (from the command to 4τ after),
// where a peak-picking track lags and then jumps.
func TestTrackKernelFastSteps(t *testing.T) {
	for _, c := range []struct {
		name          string
		blades        int
		from, to, tau float64
		frame         int
		toneHz        float64 // another machine's whine at −6 dB (0 = none)
		levelExp      float64 // the rotor's amplitude law a ∝ f^p (0 = 2)
		maxRMS        float64 // relative RMS vs the kernel-seen truth
	}{
		// maxRMS: the measured figures (logged: 0.67, 1.19, 0.17, 0.11,
		// 0.20 %) with a margin. Peak picking alone left 0.62, 1.87,
		// 3.35, 2.88 and 10.6 % (measured before the centroid pass). With
		// two blades and a 50 % step only the first blade-pass line has a
		// clean band, hence the second case's larger figure.
		{"up τ5 frame1024", 2, 200, 300, 0.005, 1024, 0, 0, 0.010},
		{"up τ10 frame2048", 2, 200, 300, 0.010, 2048, 0, 0, 0.016},
		{"down τ10 frame2048", 3, 300, 180, 0.010, 2048, 0, 0, 0.008},
		{"up τ20 frame4096", 2, 150, 220, 0.020, 4096, 0, 0, 0.008},
		{"down τ5 frame2048", 4, 320, 200, 0.005, 2048, 0, 0, 0.008},
		// A whine inside the blade-pass line's band, h·[200, 320] Hz: the
		// steady frames either side show it, and it is left out (0.65 %;
		// 4.5 % with it in).
		{"down τ5 frame2048 tone", 4, 320, 200, 0.005, 2048, 1010, 0, 0.010},
		// Lines growing as f³ (power f⁶): the law is read from the steady
		// frames either side (0.30 %; 2.2 % with p = 2 assumed).
		{"down τ5 frame2048 p3", 4, 320, 200, 0.005, 2048, 0, 3, 0.008},
	} {
		t.Run(c.name, func(t *testing.T) {
			traj := synth.Steps(c.from, synth.Step{CommandS: 0.6, TargetHz: c.to, TauS: c.tau})
			sc := synth.Scene{SampleRate: 48000, DurationS: 1.2, Shaft: traj, Rotor: synth.NewRotor(c.blades, 7), SNRdB: 30, Seed: 11}
			sc.Rotor.AMDepth = 0
			sc.Rotor.LevelExponent = c.levelExp
			if c.toneHz > 0 {
				sc.ToneHz, sc.ToneDB = c.toneHz, -6
			}
			tr := renderAndTrack(t, sc, TrackConfig{Blades: c.blades, STFT: dsp.STFTConfig{FrameLen: c.frame, Hop: 120}})
			half := float64(c.frame) / 48000 / 2
			from, to := 0.6-half, 0.6+4*c.tau+half
			k := compareTrack(tr, traj, true, from, to)
			raw := compareTrack(tr, traj, false, from, to)
			t.Logf("%.0f→%.0f Hz τ = %.0f ms, frame %d (%.1f ms): RMS vs kernel-seen truth %.3f %% (max %.2f %%), vs raw truth %.3f %%; %d of %d frames",
				c.from, c.to, 1e3*c.tau, c.frame, 2e3*half, 100*k.rmsRel, 100*k.maxRel, 100*raw.rmsRel, k.voiced, k.n)
			if k.rmsRel > c.maxRMS || k.voiced < k.n*9/10 {
				t.Errorf("RMS %.3f %% over %d of %d frames, want ≤ %.1f %% over ≥ 90 %%", 100*k.rmsRel, k.voiced, k.n, 100*c.maxRMS)
			}
		})
	}
}

// A spin-up from standstill is tracked from low speed: the blade-pass line
// is followed back from where the search pass first finds the rotor. With
// tonal power ∝ f⁴ (the synthesizer's default level law) the line at 75 Hz
// is 24 dB below its level at 300 Hz; the search pass alone found it from
// 161 Hz (measured before the extension).
func TestTrackSpinUp(t *testing.T) {
	traj := synth.Steps(0, synth.Step{CommandS: 0.8, TargetHz: 250, TauS: 0.1})
	sc := synth.Scene{SampleRate: 48000, DurationS: 1.6, Shaft: traj, Rotor: synth.NewRotor(3, 7), SNRdB: 20, Seed: 5}
	tr := renderAndTrack(t, sc, TrackConfig{Blades: 3})
	first := -1
	for i, tt := range tr.TimeS {
		if tt > 0.8 && tr.Valid(i) {
			first = i
			break
		}
	}
	if first < 0 {
		t.Fatal("spin-up not tracked")
	}
	k := compareTrack(tr, traj, true, tr.TimeS[first], 1.2)
	t.Logf("first sample at %.3f s, %.1f Hz; from there RMS vs kernel-seen truth %.3f %% over %d of %d frames",
		tr.TimeS[first], tr.ShaftHz[first], 100*k.rmsRel, k.voiced, k.n)
	// 100 Hz: comfortably below the 161 Hz of the search pass alone;
	// 2 %: the per-sample error of peaks on a line moving a bin per frame.
	if tr.ShaftHz[first] > 100 || k.rmsRel > 0.02 || k.voiced < k.n*9/10 {
		t.Errorf("spin-up tracked from %.1f Hz with RMS %.3f %% over %d of %d frames, want ≤ 100 Hz, ≤ 2 %%, ≥ 90 %%",
			tr.ShaftHz[first], 100*k.rmsRel, k.voiced, k.n)
	}
}
