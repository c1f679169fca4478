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
		maxRMS        float64 // relative RMS vs the kernel-seen truth
	}{
		// maxRMS: the measured figures (logged: 0.67, 1.19, 0.17, 0.11,
		// 0.20 %) with a margin. Peak picking alone left 0.62, 1.87,
		// 3.35, 2.88 and 10.6 % (measured before the centroid pass). With
		// two blades and a 50 % step only the first blade-pass line has a
		// clean band, hence the second case's larger figure.
		{"up τ5 frame1024", 2, 200, 300, 0.005, 1024, 0, 0.010},
		{"up τ10 frame2048", 2, 200, 300, 0.010, 2048, 0, 0.016},
		{"down τ10 frame2048", 3, 300, 180, 0.010, 2048, 0, 0.008},
		{"up τ20 frame4096", 2, 150, 220, 0.020, 4096, 0, 0.008},
		{"down τ5 frame2048", 4, 320, 200, 0.005, 2048, 0, 0.008},
		// A whine inside the blade-pass line's band, h·[200, 320] Hz: the
		// steady frames either side show it, and it is left out (0.65 %;
		// 4.5 % with it in).
		{"down τ5 frame2048 tone", 4, 320, 200, 0.005, 2048, 1010, 0.010},
	} {
		t.Run(c.name, func(t *testing.T) {
			traj := synth.Steps(c.from, synth.Step{CommandS: 0.6, TargetHz: c.to, TauS: c.tau})
			sc := synth.Scene{SampleRate: 48000, DurationS: 1.2, Shaft: traj, Rotor: synth.NewRotor(c.blades, 7), SNRdB: 30, Seed: 11}
			sc.Rotor.AMDepth = 0
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
