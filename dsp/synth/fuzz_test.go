package synth

import (
	"math"
	"testing"
)

// FuzzRender renders short scenes from arbitrary parameters: either
// Validate rejects them or the output is finite and within [-1, 1].
func FuzzRender(f *testing.F) {
	f.Add(16000, 0.1, 150.0, 300.0, 0.02, 15.0, 0.0, 0.0, 0.0, 0.0, 3, 7)
	f.Add(8000, 0.05, 0.0, 550.0, 0.0, -5.0, 0.5, 0.3, 0.2, 200.0, 5, 14)
	f.Add(44100, 0.2, 80.0, 80.0, 0.2, math.Inf(1), 0.0, 0.0, 1.0, 4000.0, 2, 0)
	f.Add(1000, 0.01, 1e9, -1.0, -1.0, 300.0, 0.99, 10.0, 0.01, 1e6, 1, 1)
	f.Fuzz(func(t *testing.T, fs int, dur, f0, f1, tau, snr, clip, agcS, reverb, hp float64, blades, pp int) {
		if dur > 0.2 {
			dur = 0.2 // keep each input cheap
		}
		sc := Scene{
			SampleRate: fs,
			DurationS:  dur,
			Shaft:      Steps(f0, Step{CommandS: dur / 2, TargetHz: f1, TauS: tau}),
			Rotor:      NewRotor(blades, pp),
			SNRdB:      snr,
			ClipLevel:  clip,
			AGCS:       agcS,
			ReverbS:    reverb,
			HighPassHz: hp,
			HumHz:      50,
			Seed:       1,
		}
		sc.Rotor.PWMHz = hp * 10
		sc.Rotor.PWMLevel = 0.1
		x, err := Render(sc)
		if err != nil {
			return
		}
		for i, v := range x {
			if v != v || v < -1 || v > 1 {
				t.Fatalf("sample %d = %g", i, v)
			}
		}
	})
}
