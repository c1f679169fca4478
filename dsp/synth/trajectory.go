package synth

import (
	"math"
	"sort"
)

// Trajectory gives the shaft frequency in Hz at time tS seconds from the
// start of the recording. A value of 0 means the motor is stopped; negative
// values are treated as 0 by Render.
type Trajectory func(tS float64) float64

// Step is one throttle command answered by a first-order-plus-dead-time
// response: the command is given at CommandS, the shaft starts to move DeadS
// seconds later and approaches TargetHz with time constant TauS:
//
//	f(t) = f0 + (TargetHz − f0)·(1 − e^{−(t − CommandS − DeadS)/TauS}),  t ≥ CommandS + DeadS
//
// where f0 is the value the trajectory has at the response start
// CommandS + DeadS. TauS = 0 is an instantaneous jump.
type Step struct {
	CommandS float64
	TargetHz float64
	TauS     float64
	DeadS    float64
}

// StartS returns the time at which the response begins, CommandS + DeadS.
func (s Step) StartS() float64 { return s.CommandS + s.DeadS }

// StepTruth is a Step as it is realised in a trajectory: with the frequency
// from which it starts.
type StepTruth struct {
	Step
	// FromHz is the shaft frequency at the response start, the r0 of the
	// first-order model (it differs from the previous target when the previous
	// step had not settled).
	FromHz float64
}

// Up reports whether the step raises the shaft frequency.
func (s StepTruth) Up() bool { return s.TargetHz > s.FromHz }

// Steps returns a trajectory that holds startHz and then answers each step in
// turn. Steps are ordered by response start; each starts from the value the
// trajectory has at its own start, so closely spaced steps chain as a
// first-order system would: a new command simply redirects the response.
// A step that takes the trajectory to 0 Hz stops the motor; startHz = 0 and a
// first step to a positive target is a start from standstill.
func Steps(startHz float64, steps ...Step) Trajectory {
	tr, _ := stepsWithTruth(startHz, steps)
	return tr
}

// StepsTruth returns the realised steps of Steps(startHz, steps...), in
// order of response start, each with the frequency it starts from.
func StepsTruth(startHz float64, steps ...Step) []StepTruth {
	_, st := stepsWithTruth(startHz, steps)
	return st
}

func stepsWithTruth(startHz float64, steps []Step) (Trajectory, []StepTruth) {
	st := make([]StepTruth, len(steps))
	for i, s := range steps {
		st[i].Step = s
	}
	sort.SliceStable(st, func(i, j int) bool { return st[i].StartS() < st[j].StartS() })
	prev := startHz
	for i := range st {
		if i > 0 {
			prev = st[i-1].at(st[i].StartS())
		}
		st[i].FromHz = prev
	}
	starts := make([]float64, len(st))
	for i := range st {
		starts[i] = st[i].StartS()
	}
	tr := func(t float64) float64 {
		// Last step whose response has started.
		i := sort.SearchFloat64s(starts, t)
		for i < len(starts) && starts[i] <= t {
			i++
		}
		if i == 0 {
			return startHz
		}
		return st[i-1].at(t)
	}
	return tr, st
}

// at evaluates the step's response at t ≥ its start.
func (s StepTruth) at(t float64) float64 {
	dt := t - s.StartS()
	if dt <= 0 {
		return s.FromHz
	}
	if s.TauS <= 0 {
		return s.TargetHz
	}
	return s.FromHz + (s.TargetHz-s.FromHz)*(-math.Expm1(-dt/s.TauS))
}

// Constant returns a trajectory fixed at hz.
func Constant(hz float64) Trajectory {
	return func(float64) float64 { return hz }
}

// Ramp returns a trajectory that holds fromHz until t0S, changes linearly to
// toHz at t1S and holds it afterwards: a slow throttle ramp, which a step
// detector must not mistake for steps.
func Ramp(t0S, t1S, fromHz, toHz float64) Trajectory {
	return func(t float64) float64 {
		switch {
		case t <= t0S:
			return fromHz
		case t >= t1S:
			return toHz
		}
		return fromHz + (toHz-fromHz)*(t-t0S)/(t1S-t0S)
	}
}

// Add returns the sum of trajectories, for example a ramp plus steps.
func Add(trs ...Trajectory) Trajectory {
	return func(t float64) float64 {
		var f float64
		for _, tr := range trs {
			f += tr(t)
		}
		return f
	}
}

// Stopped returns tr with the motor stopped (0 Hz, silent) on each interval
// [from, to) given as pairs of seconds. The frequency drops to 0 and comes
// back abruptly; use Steps with a zero target for a realistic coast-down and
// spin-up.
func Stopped(tr Trajectory, intervals ...[2]float64) Trajectory {
	return func(t float64) float64 {
		for _, iv := range intervals {
			if t >= iv[0] && t < iv[1] {
				return 0
			}
		}
		return tr(t)
	}
}

// Wobble returns tr with a sinusoidal speed ripple of relative depth rel at
// rateHz added (rel = 0.002 is ±0.2 %). The ripple is part of the trajectory,
// hence of the truth.
func Wobble(tr Trajectory, rel, rateHz float64) Trajectory {
	return func(t float64) float64 {
		return tr(t) * (1 + rel*math.Sin(2*math.Pi*rateHz*t))
	}
}

// Sample evaluates tr at n instants t0S, t0S+dtS, … into dst (allocated when
// nil; a wrong length panics).
func Sample(dst []float64, tr Trajectory, t0S, dtS float64, n int) []float64 {
	if dst == nil {
		dst = make([]float64, n)
	}
	if len(dst) != n {
		panic("synth: Sample: dst length mismatch")
	}
	for i := range dst {
		dst[i] = tr(t0S + float64(i)*dtS)
	}
	return dst
}
