package synth_test

import (
	"fmt"
	"math/rand/v2"

	"whirlfit/dsp/synth"
)

// A three-blade rotor steps from 9,000 to 18,000 rpm and back; the
// trajectory is the exact truth of the rendered sound.
func Example() {
	steps := []synth.Step{
		{CommandS: 1.0, TargetHz: 300, TauS: 0.035, DeadS: 0.006},
		{CommandS: 2.0, TargetHz: 150, TauS: 0.060, DeadS: 0.006},
	}
	sc := synth.Scene{
		SampleRate: 48000,
		DurationS:  3,
		Shaft:      synth.Steps(150, steps...),
		Rotor:      synth.NewRotor(3, 7),
		SNRdB:      20,
		HighPassHz: 120,
		Seed:       1,
	}
	x, err := synth.Render(sc)
	if err != nil {
		panic(err)
	}
	fmt.Println(len(x), "samples")
	for _, s := range synth.StepsTruth(150, steps...) {
		fmt.Printf("%.3f s: %.0f → %.0f rpm, τ %.0f ms, θ %.0f ms\n",
			s.CommandS, 60*s.FromHz, 60*s.TargetHz, 1e3*s.TauS, 1e3*s.DeadS)
	}
	// Output:
	// 144000 samples
	// 1.000 s: 9000 → 18000 rpm, τ 35 ms, θ 6 ms
	// 2.000 s: 18000 → 9000 rpm, τ 60 ms, θ 6 ms
}

// ExampleSteps shows closely spaced commands chaining: the second starts from
// the value the first had reached.
func ExampleSteps() {
	steps := []synth.Step{
		{CommandS: 1.00, TargetHz: 400, TauS: 0.1},
		{CommandS: 1.10, TargetHz: 200, TauS: 0.1},
	}
	tr := synth.Steps(200, steps...)
	fmt.Printf("%.1f Hz at 1.1 s\n", tr(1.1))
	fmt.Printf("second step from %.1f Hz\n", synth.StepsTruth(200, steps...)[1].FromHz)
	// Output:
	// 326.4 Hz at 1.1 s
	// second step from 326.4 Hz
}

// ExampleRandomScene draws cases for a generality test and checks an
// analysis of each against its truth.
func ExampleRandomScene() {
	rng := rand.New(rand.NewPCG(1, 2))
	opts := synth.DefaultRandomOptions()
	opts.Compressed = 0 // WAV only: no ffmpeg needed
	for range 3 {
		c := synth.RandomScene(rng, opts)
		chs, err := c.Render() // microphones, then the trigger if any
		if err != nil {
			panic(err)
		}
		_ = chs // analyse chs[0] (or the mix) with c.Truth.Blades ...
		for _, s := range c.Truth.Steps {
			_ = s // ... and compare with s.CommandS, s.FromHz, s.TargetHz, s.TauS, s.DeadS
		}
	}
}
