package synth

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestRandomSceneRanges(t *testing.T) {
	// 300 draws from the default options stay inside the held-out ranges,
	// and their truth agrees with their trajectory.
	rng := rand.New(rand.NewPCG(2026, 12))
	o := DefaultRandomOptions()
	counts := map[string]int{}
	for k := range 300 {
		c := RandomScene(rng, o)
		sc, tr := c.Scene, c.Truth
		if err := sc.Validate(); err != nil {
			t.Fatalf("case %d: %v", k, err)
		}
		if tr.Blades < 2 || tr.Blades > 5 || tr.Blades != sc.Rotor.Blades {
			t.Errorf("case %d: %d blades", k, tr.Blades)
		}
		if sc.SNRdB < -5 || sc.SNRdB > 30 {
			t.Errorf("case %d: SNR %g", k, sc.SNRdB)
		}
		var up, down int
		for i, s := range tr.Steps {
			if tr.Standstill && i == 0 {
				if s.FromHz != 0 {
					t.Errorf("case %d: spin-up from %g Hz", k, s.FromHz)
				}
				continue
			}
			if s.TauS < 0.008 || s.TauS > 0.120 || s.DeadS < 0 || s.DeadS > 0.015 {
				t.Errorf("case %d step %d: τ %g θ %g", k, i, s.TauS, s.DeadS)
			}
			if s.TargetHz < 80-1e-9 || s.TargetHz > 550+1e-9 {
				t.Errorf("case %d step %d: target %g Hz", k, i, s.TargetHz)
			}
			if got := tr.Shaft(s.StartS()); math.Abs(got-s.FromHz) > 1e-9 {
				t.Errorf("case %d step %d: trajectory %g at start, FromHz %g", k, i, got, s.FromHz)
			}
			if math.Abs(s.TargetHz-s.FromHz) < 0.1*s.FromHz {
				t.Errorf("case %d step %d: change %g → %g too small", k, i, s.FromHz, s.TargetHz)
			}
			if i > 0 {
				if gap := s.CommandS - tr.Steps[i-1].CommandS; gap < 0.25-1e-12 {
					t.Errorf("case %d step %d: gap %g s", k, i, gap)
				}
			}
			if s.Up() {
				up++
			} else {
				down++
			}
		}
		if len(tr.Steps) < 2 || up == 0 || down == 0 {
			t.Errorf("case %d: %d steps (%d up, %d down)", k, len(tr.Steps), up, down)
		}
		counts["fs"+itoa(sc.SampleRate)]++
		counts["B"+itoa(tr.Blades)]++
		for _, s := range tr.Impairments {
			n := 0
			for n < len(s) && s[n] >= 'a' && s[n] <= 'z' {
				n++
			}
			counts[s[:n]]++
		}
		if c.Trigger != nil {
			counts["trigger"]++
		}
		counts[string(c.Format)]++
	}
	t.Logf("draw counts over 300 cases: %v", counts)
	for _, key := range []string{"fs16000", "fs44100", "fs48000", "B2", "B5", "standstill", "ramp", "clip", "agc", "reverb", "hum", "tone", "fan", "pump", "rotor", "twin", "pwm", "resonance", "clicks", "dropouts", "dc", "mics", "highpass", "rotornoise", "jitter", "white", "pink", "brown", "trigger", "wav16", "wav24", "wavf32", "flac", "mp3", "m4a", "ogg"} {
		if counts[key] == 0 {
			t.Errorf("no case with %s", key)
		}
	}
}

func itoa(n int) string {
	if n == 0 {
		return "0"
	}
	var b []byte
	for ; n > 0; n /= 10 {
		b = append([]byte{byte('0' + n%10)}, b...)
	}
	return string(b)
}

func TestRandomSceneDeterministicAndRenders(t *testing.T) {
	o := DefaultRandomOptions()
	o.Impairment = 1 // everything on
	o.MaxDurationS = 4
	for seed := range uint64(4) {
		a := RandomScene(rand.New(rand.NewPCG(seed, 1)), o)
		b := RandomScene(rand.New(rand.NewPCG(seed, 1)), o)
		if a.String() != b.String() {
			t.Fatalf("seed %d: cases differ:\n%s\n%s", seed, a, b)
		}
		t.Logf("seed %d: %s", seed, a)
		x, err := a.Render()
		if err != nil {
			t.Fatal(err)
		}
		wantCh := a.Mics
		if a.Trigger != nil {
			wantCh++
			if a.Truth.TriggerChannel != a.Mics {
				t.Errorf("trigger channel %d, want %d", a.Truth.TriggerChannel, a.Mics)
			}
		}
		if len(x) != wantCh {
			t.Errorf("%d channels, want %d", len(x), wantCh)
		}
		for _, ch := range x {
			for i, v := range ch {
				if v != v || v < -1 || v > 1 {
					t.Fatalf("seed %d: sample %d = %g", seed, i, v)
				}
			}
		}
		if _, err := EncodeWAV(x, a.Scene.SampleRate, a.Bits); err != nil {
			t.Fatal(err)
		}
	}
}

func TestRandomSceneClean(t *testing.T) {
	// Impairment 0, no standstill, ramp or trigger: the plain scenes a fit
	// test starts from.
	o := DefaultRandomOptions()
	o.Impairment, o.Standstill, o.Ramp, o.Stereo, o.Stereo2 = 0, 0, 0, 0, 0
	o.SampleRates = []int{48000}
	rng := rand.New(rand.NewPCG(9, 9))
	for range 50 {
		c := RandomScene(rng, o)
		sc := c.Scene
		if sc.HighPassHz != 0 || sc.ReverbS != 0 || sc.HumHz != 0 || sc.ToneHz != 0 || len(sc.Others) != 0 ||
			sc.ClipLevel != 0 || sc.AGCS != 0 || sc.RotorNoiseShare != 0 || sc.Rotor.JitterRel != 0 ||
			c.Trigger != nil || c.Truth.Standstill || len(c.Truth.Ramps) != 0 ||
			len(sc.Resonances) != 0 || sc.Rotor.PWMHz != 0 || sc.ClickRateHz != 0 || len(sc.Dropouts) != 0 ||
			sc.DCOffset != 0 || c.Mics != 1 || c.Truth.TriggerChannel != -1 {
			t.Fatalf("impairment on in a clean case: %s", c)
		}
	}
}
