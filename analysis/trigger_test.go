package analysis

import (
	"math"
	"math/rand/v2"
	"testing"

	"whirlfit/dsp"
)

// Invented trigger lines for self-consistency tests.

// acCouple applies a first-order high-pass (a line input's coupling
// capacitor) with corner fc.
func acCouple(x []float32, fs, fc float64) {
	a := 1 / (1 + 2*math.Pi*fc/fs)
	prevX, prevY := 0.0, 0.0
	for i, v := range x {
		y := a * (prevY + float64(v) - prevX)
		prevX, prevY = float64(v), y
		x[i] = float32(y)
	}
}

func addNoise(x []float32, sd float64, rng *rand.Rand) {
	for i := range x {
		x[i] += float32(sd * rng.NormFloat64())
	}
}

// pwmLine is a servo-style pulse train at rateHz whose pulse width follows
// width(t).
func pwmLine(fs, durS, rateHz float64, width func(t float64) float64) []float32 {
	x := make([]float32, int(fs*durS))
	period := 1 / rateHz
	for start := 0.01; start < durS; start += period {
		w := width(start)
		for i := int(math.Ceil(start * fs)); i < int((start+w)*fs) && i < len(x); i++ {
			x[i] = 0.5
		}
	}
	return x
}

func TestTriggerEdges(t *testing.T) {
	const fs = 48000
	rng := rand.New(rand.NewPCG(7, 7))
	near := func(got []float64, want []float64, tol float64) bool {
		if len(got) != len(want) {
			return false
		}
		for i := range got {
			if math.Abs(got[i]-want[i]) > tol {
				return false
			}
		}
		return true
	}
	t.Run("pwm 50 Hz duty steps, AC coupled, noisy", func(t *testing.T) {
		// Pulse starts are at 0.01 + k/50 s; commands land on pulse starts.
		cmds := []float64{0.51, 1.51, 2.01}
		x := pwmLine(fs, 3, 50, func(tt float64) float64 {
			switch {
			case tt >= cmds[2]-1e-9:
				return 0.0012
			case tt >= cmds[1]-1e-9:
				return 0.0018
			case tt >= cmds[0]-1e-9:
				return 0.0015
			}
			return 0.0010
		})
		acCouple(x, fs, 10)
		addNoise(x, 0.01, rng)
		got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs})
		if !near(got, cmds, 2e-4) {
			t.Errorf("got %v, want %v", got, cmds)
		}
	})
	t.Run("pwm 400 Hz", func(t *testing.T) {
		x := pwmLine(fs, 2, 400, func(tt float64) float64 {
			if tt >= 1.01-1e-9 {
				return 0.0015
			}
			return 0.0011
		})
		addNoise(x, 0.01, rng)
		got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs})
		if !near(got, []float64{1.01}, 2e-4) {
			t.Errorf("got %v, want [1.01]", got)
		}
	})
	t.Run("step line, AC coupled", func(t *testing.T) {
		x := make([]float32, 3*fs)
		for i := range x {
			tt := float64(i) / fs
			if (tt >= 0.7 && tt < 1.9) || tt >= 2.5 {
				x[i] = 0.8
			}
		}
		acCouple(x, fs, 5)
		addNoise(x, 0.005, rng)
		got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs})
		if !near(got, []float64{0.7, 1.9, 2.5}, 2e-4) {
			t.Errorf("got %v, want [0.7 1.9 2.5]", got)
		}
	})
	t.Run("short pulses give leading edges", func(t *testing.T) {
		x := make([]float32, 2*fs)
		for _, p := range []float64{0.4, 1.3} {
			for i := int(p * fs); i < int((p+0.01)*fs); i++ {
				x[i] = -0.6
			}
		}
		got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs})
		if !near(got, []float64{0.4, 1.3}, 2e-4) {
			t.Errorf("got %v, want [0.4 1.3]", got)
		}
	})
	t.Run("tone burst", func(t *testing.T) {
		x := make([]float32, 2*fs)
		for i := range x {
			tt := float64(i) / fs
			if tt >= 0.8 {
				x[i] = float32(0.5 * math.Sin(2*math.Pi*1000*tt))
			}
		}
		got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs})
		if !near(got, []float64{0.8}, 3e-3) {
			t.Errorf("got %v, want [0.8]", got)
		}
	})
	t.Run("noise only", func(t *testing.T) {
		x := make([]float32, 2*fs)
		addNoise(x, 0.1, rng)
		if got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs}); len(got) != 0 {
			t.Errorf("got %d edges from noise, want none", len(got))
		}
	})
	t.Run("silence", func(t *testing.T) {
		x := make([]float32, fs)
		if got := TriggerEdges(dsp.Signal{Samples: x, SampleRate: fs}); len(got) != 0 {
			t.Errorf("got %v from silence, want none", got)
		}
	})
}
