package analysis

import (
	"strings"
	"testing"

	"whirlfit/dsp/synth"
)

// A second rotor in the room whose comb is cleaner than the motor's: the
// motor's propeller has only two blade-pass harmonics in band, the other
// rotor (same blade count, 9 dB weaker, at two thirds of the speed, drifting
// by 2.5 %) five. On salience alone the other rotor holds the path; the
// second-source check must hand it to the louder comb, and in a second
// scene, where the other rotor is 2 dB louder, to the comb that steps when
// the one followed first stays put.
func TestTrackSecondSource(t *testing.T) {
	main := synth.NewRotor(4, 7)
	main.BladeHarmonics = 2
	main.BladeRolloff = 0.5
	other := synth.NewRotor(4, 5)
	other.BladeHarmonics = 5
	other.BladeRolloff = 0.5
	traj := synth.Steps(500,
		synth.Step{CommandS: 1.5, TargetHz: 410, TauS: 0.03, DeadS: 0.008},
		synth.Step{CommandS: 2.6, TargetHz: 560, TauS: 0.02, DeadS: 0.008},
		synth.Step{CommandS: 3.6, TargetHz: 500, TauS: 0.03, DeadS: 0.008})
	for _, c := range []struct {
		name     string
		levelDB  float64
		wantWarn string
	}{
		{"louder", -9, "the louder one"},
		{"stepped", 2, "the one whose speed changes"},
	} {
		sc := synth.Scene{SampleRate: 48000, DurationS: 4.5, Shaft: traj, Rotor: main, SNRdB: 20, Seed: 5,
			Others: []synth.Machine{{Rotor: other, Shaft: synth.Ramp(0, 4.5, 340, 348), LevelDB: c.levelDB}}}
		tr := renderAndTrack(t, sc, TrackConfig{Blades: 4})
		k := compareTrack(tr, traj, true, 0.1, 4.4)
		t.Logf("%s: RMS vs kernel-seen truth %.3f %%, %d/%d frames; warnings %q", c.name, 100*k.rmsRel, k.voiced, k.n, tr.Warnings)
		// Where the other rotor's lines cross the motor's, a few frames
		// are left empty.
		if k.rmsRel > 0.01 || k.missed > k.n*8/100 {
			t.Errorf("%s: RMS %.3f %% with %d of %d frames missed, want ≤ 1 %% and ≤ 8 %% (the other rotor held the track)", c.name, 100*k.rmsRel, k.missed, k.n)
		}
		found := false
		for _, w := range tr.Warnings {
			found = found || strings.Contains(w, c.wantWarn)
		}
		if !found {
			t.Errorf("%s: no warning containing %q", c.name, c.wantWarn)
		}
	}
}
