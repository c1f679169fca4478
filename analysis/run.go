package analysis

import (
	"context"
	"errors"
	"fmt"
	"math"

	"whirlfit/dsp"
)

// Config sets up a whole analysis. Its zero value means defaults.
type Config struct {
	// Blades is the propeller's blade count; 0 lets the tracker estimate it
	// from the harmonic comb (and say so in a warning).
	Blades int
	// Channel is the 1-based channel to analyse; 0 means the mix of all.
	Channel int
	// TriggerChannel is the 1-based channel that carries the throttle
	// command (a trigger or PWM line); 0 means none.
	TriggerChannel int
	// CommandTimesS are throttle command times given by the user, seconds.
	CommandTimesS []float64
	// FromS and ToS limit the steps looked for and fitted to an interval of
	// the recording (seconds; ToS 0 means to the end). The whole recording
	// is still tracked, so the display and the rpm CSV stay complete.
	FromS, ToS float64
	// Track and Steps tune the two stages; zero values mean defaults.
	Track TrackConfig
	Steps StepConfig
}

// MinIntervalS is the shortest interval Run fits steps in: room for one
// step's fit window, the track before the onset and the shortest stretch
// after it.
const MinIntervalS = preWindowS + minPostWindowS

// intervalSlackS forgives the rounding of decimal input (1.42 − 1 is a
// little less than 0.42 in binary).
const intervalSlackS = 1e-9

// ErrInterval is wrapped by the errors CheckInterval (and so Run) returns
// for an interval that cannot be analysed.
var ErrInterval = errors.New("analysis: not a usable interval")

// CheckInterval reports whether fromS–toS (seconds; toS 0 means the end) is
// an interval Run can look for steps in on a recording of durationS
// seconds: it must lie inside the recording, start before it ends and be at
// least MinIntervalS long. The error wraps ErrInterval and says why.
func CheckInterval(fromS, toS, durationS float64) error {
	end := toS
	if end == 0 {
		end = durationS
	}
	bad := func(why string) error {
		return fmt.Errorf("%w: %g–%g s %s", ErrInterval, fromS, end, why)
	}
	switch {
	case math.IsNaN(fromS) || math.IsNaN(toS) || math.IsInf(fromS, 0) || math.IsInf(toS, 0):
		return bad("is not a pair of numbers")
	case fromS < 0 || toS < 0:
		return bad("starts before the recording (times are from 0 s)")
	case durationS > 0 && (fromS >= durationS || end > durationS):
		return bad(fmt.Sprintf("reaches outside the recording (0–%g s)", durationS))
	case end <= fromS:
		return bad("ends before it starts")
	case end-fromS < MinIntervalS-intervalSlackS:
		return bad(fmt.Sprintf("is shorter than %g s, the least one step's fit needs", MinIntervalS))
	}
	return nil
}

// Progress reports how far a long stage has come. stage names it ("track",
// "fit"); done of total units are finished. It may be nil and is called from
// worker goroutines.
type Progress func(stage string, done, total int)

// Run analyses one decoded recording: it tracks the rotor speed, finds or
// takes the throttle steps and fits each one. The command line and the
// window both call it.
func Run(ctx context.Context, a *dsp.Audio, cfg Config, progress Progress) (*Report, error) {
	ch := dsp.Mix
	if cfg.Channel > 0 {
		ch = cfg.Channel - 1
	}
	sig, err := a.Signal(ch)
	if err != nil {
		return nil, err
	}
	rep := &Report{Blades: cfg.Blades, SampleRateHz: float64(a.SampleRate), DurationS: a.DurationS(), Config: cfg}
	if cfg.FromS != 0 || cfg.ToS != 0 {
		// Before the long tracking stage, so that a bad interval fails fast.
		if err := CheckInterval(cfg.FromS, cfg.ToS, rep.DurationS); err != nil {
			return nil, err
		}
	}
	rep.Warnings = append(rep.Warnings, a.Warnings...)
	if a.NonFinite > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("%d NaN or infinite samples were replaced by 0", a.NonFinite))
	}

	steps := cfg.Steps
	steps.CommandTimesS = cfg.CommandTimesS
	if cfg.TriggerChannel > 0 {
		if cfg.TriggerChannel-1 == ch {
			return nil, fmt.Errorf("analysis: the trigger channel %d is also the analysed channel", cfg.TriggerChannel)
		}
		trig, err := a.Signal(cfg.TriggerChannel - 1)
		if err != nil {
			return nil, err
		}
		edges := TriggerEdges(trig)
		if len(edges) == 0 {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("no edges found on trigger channel %d", cfg.TriggerChannel))
		}
		steps.CommandTimesS = append(append([]float64(nil), steps.CommandTimesS...), edges...)
		// The analysed channel must not be a mix that includes the trigger.
		if ch == dsp.Mix {
			ch = 0
			if cfg.TriggerChannel == 1 {
				ch = 1
			}
			if sig, err = a.Signal(ch); err != nil {
				return nil, err
			}
		}
	}

	tc := cfg.Track
	if tc.Blades == 0 {
		tc.Blades = cfg.Blades
	}
	var trackProgress func(done, total int)
	if progress != nil {
		trackProgress = func(done, total int) { progress("track", done, total) }
	}
	tr, spec, err := TrackSignal(ctx, sig, tc, trackProgress)
	if err != nil {
		return nil, err
	}
	rep.Track, rep.Spectrogram, rep.Blades = tr, spec, tr.Blades
	rep.Warnings = append(rep.Warnings, tr.Warnings...)

	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("analysis: cancelled: %w", err)
	}
	fitOn := tr
	if cfg.FromS != 0 || cfg.ToS != 0 {
		fitOn = tr.Between(cfg.FromS, cfg.ToS)
		var inside []float64
		for _, c := range steps.CommandTimesS {
			if c >= cfg.FromS && (cfg.ToS <= 0 || c <= cfg.ToS) {
				inside = append(inside, c)
			}
		}
		if len(inside) < len(steps.CommandTimesS) {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("%d command time(s) outside the interval %g–%g s left out", len(steps.CommandTimesS)-len(inside), cfg.FromS, cfg.ToS))
		}
		steps.CommandTimesS = inside
	}
	res, warn := AnalyseSteps(fitOn, steps)
	rep.Steps = res
	rep.Warnings = append(rep.Warnings, warn...)
	if rep.Steps == nil {
		rep.Steps = []StepResult{}
	}
	if rep.Warnings == nil {
		rep.Warnings = []string{}
	}
	return rep, nil
}
