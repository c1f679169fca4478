package synth

import (
	"math"
	"math/rand/v2"
	"sort"
)

// TriggerKind is the shape of a recorded command signal.
type TriggerKind int

const (
	// TriggerToggle is a square level that changes sign at each command,
	// starting low: one edge per command.
	TriggerToggle TriggerKind = iota
	// TriggerPulse is a 5 ms rectangular pulse starting at each command.
	TriggerPulse
	// TriggerPWM is a servo-style throttle line: one pulse per frame at
	// RateHz, 1 ms wide at zero throttle and 2 ms at full throttle. A
	// command takes effect at a frame start, so its command time must lie
	// on the frame grid PhaseS + k/RateHz (RandomScene puts it there); the
	// first pulse of the new width then starts exactly at the command time.
	TriggerPWM
)

// Trigger describes a command channel recorded beside the sound, for example
// a throttle line or a test-stand trigger taken through line-in.
type Trigger struct {
	// CommandS are the command times in seconds (see Commands).
	CommandS []float64
	Kind     TriggerKind
	// Level is the amplitude of the signal (0 means 0.8).
	Level float64
	// ACHz, when > 0, is the cut-off of a first-order high-pass modelling an
	// AC-coupled line input: a toggle then reads as a decaying spike at each
	// edge.
	ACHz float64
	// NoiseDB is the channel's white noise relative to Level, in dB
	// (0 means −60 dB).
	NoiseDB float64
	// For TriggerPWM: the frame rate (0 means 50 Hz), the time of the first
	// frame start (in [0, 1/RateHz)), the throttle (0–1) before the first
	// command and after each command.
	RateHz        float64
	PhaseS        float64
	StartThrottle float64
	Throttle      []float64
}

// FrameS returns the first PWM frame start at or after tS: the time at
// which a command given at tS reaches a TriggerPWM line.
func (tg Trigger) FrameS(tS float64) float64 {
	rate := tg.rate()
	k := math.Ceil((tS-tg.PhaseS)*rate - 1e-9)
	return tg.PhaseS + k/rate
}

func (tg Trigger) rate() float64 {
	if tg.RateHz > 0 {
		return tg.RateHz
	}
	return 50
}

// Commands returns the command times of steps.
func Commands(steps []Step) []float64 {
	t := make([]float64, len(steps))
	for i, s := range steps {
		t[i] = s.CommandS
	}
	return t
}

// RenderStereo renders the scene as channel 0 and the trigger signal as
// channel 1. Each edge falls exactly on the first sample at or after its
// command time.
func RenderStereo(sc Scene, tg Trigger) ([][]float32, error) {
	p, err := render(sc)
	if err != nil {
		return nil, err
	}
	return [][]float32{toFloat32(p.mix), toFloat32(triggerSignal(sc, tg))}, nil
}

func triggerSignal(sc Scene, tg Trigger) []float64 {
	n := sc.NumSamples()
	fs := float64(sc.SampleRate)
	level := tg.Level
	if level == 0 {
		level = 0.8
	}
	x := make([]float64, n)
	edge := func(t float64) int { return min(n, max(0, int(math.Ceil(t*fs-1e-9)))) }
	switch tg.Kind {
	case TriggerPWM:
		rate := tg.rate()
		type cmd struct{ t, th float64 }
		cmds := make([]cmd, len(tg.CommandS))
		for i, t := range tg.CommandS {
			th := tg.StartThrottle
			if i < len(tg.Throttle) {
				th = tg.Throttle[i]
			}
			cmds[i] = cmd{t, th}
		}
		sort.SliceStable(cmds, func(i, j int) bool { return cmds[i].t < cmds[j].t })
		th, next := tg.StartThrottle, 0
		for k := 0; ; k++ {
			start := tg.PhaseS + float64(k)/rate
			if start >= sc.DurationS {
				break
			}
			for next < len(cmds) && cmds[next].t <= start+1e-9 {
				th = cmds[next].th
				next++
			}
			w := 0.001 * (1 + math.Max(0, math.Min(1, th)))
			for i := edge(start); i < min(n, edge(start+w)); i++ {
				x[i] = level
			}
		}
	case TriggerPulse:
		w := int(0.005 * fs)
		for _, t := range tg.CommandS {
			for i := edge(t); i < min(n, edge(t)+w); i++ {
				x[i] = level
			}
		}
	default:
		v := -level
		last := 0
		ts := append([]float64(nil), tg.CommandS...)
		sort.Float64s(ts)
		for _, t := range ts {
			e := edge(t)
			for i := last; i < e; i++ {
				x[i] = v
			}
			last, v = e, -v
		}
		for i := last; i < n; i++ {
			x[i] = v
		}
	}
	if tg.ACHz > 0 {
		// First-order high-pass y[i] = a·(y[i−1] + x[i] − x[i−1]).
		a := 1 / (1 + 2*math.Pi*tg.ACHz/fs)
		var px, py float64
		for i, v := range x {
			py = a * (py + v - px)
			px = v
			x[i] = py
		}
	}
	ndb := tg.NoiseDB
	if ndb == 0 {
		ndb = -60
	}
	rng := rand.New(rand.NewPCG(sc.Seed, 0x51ed))
	g := level * math.Pow(10, ndb/20)
	for i := range x {
		x[i] += g * rng.NormFloat64()
	}
	return x
}
