package synth

import (
	"fmt"
	"testing"
)

// BenchmarkRender renders 60 s at 48 kHz: a clean rotor, and one with every
// impairment (reverberation dominates that cost).
func BenchmarkRender(b *testing.B) {
	steps := []Step{
		{CommandS: 10, TargetHz: 300, TauS: 0.03, DeadS: 0.005},
		{CommandS: 30, TargetHz: 200, TauS: 0.05, DeadS: 0.005},
	}
	plain := Scene{SampleRate: 48000, DurationS: 60, Shaft: Steps(150, steps...), Rotor: NewRotor(3, 7), SNRdB: 15, Seed: 1}
	full := plain
	full.NoiseColor, full.RotorNoiseShare = Pink, 0.4
	full.HighPassHz, full.ReverbS, full.ReverbDRRdB = 150, 0.5, 6
	full.HumHz, full.ToneHz = 50, 2500
	full.Others = []Machine{{Rotor: NewRotor(2, 6), Shaft: Constant(120), LevelDB: -6}}
	full.ClipLevel, full.AGCS = 0.7, 1
	for _, c := range []struct {
		name string
		sc   Scene
	}{{"plain", plain}, {"everything", full}} {
		b.Run(fmt.Sprintf("%s/60s48k", c.name), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Render(c.sc); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkWriteWAV encodes 60 s at 48 kHz mono.
func BenchmarkWriteWAV(b *testing.B) {
	x := make([]float32, 60*48000)
	for _, bits := range []int{PCM16, PCM24, Float32} {
		b.Run(fmt.Sprintf("bits%d", bits), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := EncodeWAV([][]float32{x}, 48000, bits); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
