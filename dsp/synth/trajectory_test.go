package synth

import (
	"math"
	"testing"
)

func TestStepsFOPDT(t *testing.T) {
	// One step: the textbook first-order response reaches 63.2 % of the
	// change one τ after it starts and 95.0 % after 3τ (Ogata, Modern
	// Control Engineering, first-order systems).
	tr := Steps(200, Step{CommandS: 1, TargetHz: 300, TauS: 0.03, DeadS: 0.005})
	cases := []struct {
		name string
		t    float64
		want float64
	}{
		{"before command", 0.5, 200},
		{"during dead time", 1.004, 200},
		{"at start", 1.005, 200},
		{"1 tau", 1.035, 200 + 100*(1-math.Exp(-1))},
		{"3 tau", 1.095, 200 + 100*(1-math.Exp(-3))},
		{"long after", 5, 300},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := tr(c.t); math.Abs(got-c.want) > 1e-9 {
				t.Errorf("f(%g) = %.9g, want %.9g", c.t, got, c.want)
			}
		})
	}
	if got := (tr(1.035) - 200) / 100; math.Abs(got-0.632) > 5e-4 {
		t.Errorf("fraction at 1τ = %.4f, want 0.632 (Ogata)", got)
	}
	if got := (tr(1.095) - 200) / 100; math.Abs(got-0.950) > 5e-4 {
		t.Errorf("fraction at 3τ = %.4f, want 0.950 (Ogata)", got)
	}
}

func TestStepsChain(t *testing.T) {
	// A second command before the first response settles redirects it from
	// the value reached: continuity at the second start, FromHz recorded.
	steps := []Step{
		{CommandS: 1.0, TargetHz: 400, TauS: 0.1, DeadS: 0.01},
		{CommandS: 1.1, TargetHz: 150, TauS: 0.05, DeadS: 0.005},
	}
	tr := Steps(200, steps...)
	truth := StepsTruth(200, steps...)
	s2 := 1.105
	want := 200 + 200*(1-math.Exp(-(s2-1.01)/0.1))
	if math.Abs(truth[1].FromHz-want) > 1e-9 {
		t.Errorf("FromHz = %.9g, want %.9g", truth[1].FromHz, want)
	}
	if d := math.Abs(tr(s2-1e-9) - tr(s2+1e-9)); d > 1e-5 {
		t.Errorf("jump of %g Hz at the second start", d)
	}
	if truth[1].Up() || !truth[0].Up() {
		t.Errorf("directions: got %v %v, want up down", truth[0].Up(), truth[1].Up())
	}
	t.Logf("second step starts from %.3f Hz", truth[1].FromHz)
}

func TestStepsOrderAndStandstill(t *testing.T) {
	// Steps given out of order are sorted by response start; a start from
	// 0 Hz is a spin-up, a step to 0 a stop.
	tr := Steps(0,
		Step{CommandS: 3, TargetHz: 0, TauS: 0.2},
		Step{CommandS: 1, TargetHz: 250, TauS: 0.15, DeadS: 0.02},
	)
	if tr(0.9) != 0 || tr(1.02) != 0 {
		t.Errorf("motor should be stopped before the spin-up")
	}
	if got := tr(2.9); math.Abs(got-250) > 1e-3 {
		t.Errorf("f(2.9) = %g, want 250", got)
	}
	if got := tr(6); got > 1e-3 {
		t.Errorf("f(6) = %g, want ≈ 0 after the stop", got)
	}
}

func TestRampAddStoppedWobble(t *testing.T) {
	r := Ramp(1, 3, 100, 200)
	if r(0) != 100 || r(2) != 150 || r(4) != 200 {
		t.Errorf("ramp: got %g %g %g, want 100 150 200", r(0), r(2), r(4))
	}
	a := Add(Constant(10), r)
	if a(2) != 160 {
		t.Errorf("add: got %g, want 160", a(2))
	}
	s := Stopped(Constant(300), [2]float64{1, 2})
	if s(0.5) != 300 || s(1.5) != 0 || s(2) != 300 {
		t.Errorf("stopped: got %g %g %g, want 300 0 300", s(0.5), s(1.5), s(2))
	}
	w := Wobble(Constant(100), 0.01, 5)
	if got := w(0.05); math.Abs(got-101) > 1e-12 {
		t.Errorf("wobble at a crest: got %g, want 101", got)
	}
	got := Sample(nil, r, 0, 1, 5)
	want := []float64{100, 100, 150, 200, 200}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("Sample[%d] = %g, want %g", i, got[i], want[i])
		}
	}
}
