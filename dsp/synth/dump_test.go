package synth

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
)

var (
	dumpDir  = flag.String("dump", "", "write random cases and their truth into this `folder` (TestDumpCases)")
	dumpN    = flag.Int("dumpn", 45, "number of cases -dump writes")
	dumpSeed = flag.Uint64("dumpseed", 1, "seed of the cases -dump writes")
	dumpImp  = flag.Float64("dumpimpair", -1, "with -dump: probability of each impairment, standstill, ramp, trigger, second microphone and compressed format (negative: the defaults)")
)

// caseJSON is the truth file written beside each dumped recording.
type caseJSON struct {
	File        string     `json:"file"`
	Blades      int        `json:"blades"`
	SampleRate  int        `json:"sample_rate_hz"`
	DurationS   float64    `json:"duration_s"`
	SNRdB       float64    `json:"snr_db"`
	Standstill  bool       `json:"standstill"`
	TriggerCh   *int       `json:"trigger_channel"`
	Steps       []stepJSON `json:"steps"`
	Ramps       []rampJSON `json:"ramps"`
	Impairments []string   `json:"impairments"`
	Summary     string     `json:"summary"`
}

type stepJSON struct {
	Direction string  `json:"direction"`
	CommandS  float64 `json:"command_s"`
	StartS    float64 `json:"response_start_s"`
	DeadS     float64 `json:"dead_time_s"`
	TauS      float64 `json:"tau_s"`
	FromRPM   float64 `json:"rpm_before"`
	ToRPM     float64 `json:"rpm_after"`
	// Local SNR (MeasureSNR) over 0.2 s before the command and over
	// [start + 3τ, start + 3τ + 0.2 s).
	// null where it is not finite (no rotor, or no noise).
	SNRBefore *float64 `json:"snr_before_db"`
	SNRAfter  *float64 `json:"snr_after_db"`
}

type rampJSON struct {
	T0S     float64 `json:"t0_s"`
	T1S     float64 `json:"t1_s"`
	FromRPM float64 `json:"rpm_from"`
	ToRPM   float64 `json:"rpm_to"`
}

// TestDumpCases writes a benchmark-like set of recordings with their truth
// when run with -dump, for end-to-end checks of the command line:
//
//	go test ./dsp/synth -run TestDumpCases -dump /tmp/cases -dumpn 45
//
// -dumpimpair 0 writes clean cases (steps, noise and levels still vary).
// Without -dump it is skipped.
func TestDumpCases(t *testing.T) {
	if *dumpDir == "" {
		t.Skip("no -dump folder given")
	}
	if err := os.MkdirAll(*dumpDir, 0o755); err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(*dumpSeed, 0xd0))
	opts := DefaultRandomOptions()
	if p := *dumpImp; p >= 0 {
		opts.Impairment, opts.Standstill, opts.Ramp, opts.Stereo, opts.Stereo2, opts.Compressed = p, p, p, p, p, p
	}
	for k := range *dumpN {
		c := RandomScene(rng, opts)
		chs, err := c.Render()
		if err != nil {
			t.Fatal(err)
		}
		var trig *int
		if c.Trigger != nil {
			ch := c.Truth.TriggerChannel
			trig = &ch
		}
		f := c.Format
		name := fmt.Sprintf("case%02d%s", k, f.Ext())
		err = WriteFile(context.Background(), filepath.Join(*dumpDir, name), chs, c.Scene.SampleRate, f)
		if errors.Is(err, ErrNoEncoder) {
			f = WAV16
			name = fmt.Sprintf("case%02d%s", k, f.Ext())
			err = WriteFile(context.Background(), filepath.Join(*dumpDir, name), chs, c.Scene.SampleRate, f)
		}
		if err != nil {
			t.Fatal(err)
		}
		j := caseJSON{File: name, Blades: c.Truth.Blades, SampleRate: c.Scene.SampleRate, DurationS: c.Scene.DurationS,
			SNRdB: c.Scene.SNRdB, Standstill: c.Truth.Standstill, TriggerCh: trig, Impairments: c.Truth.Impairments, Summary: c.String()}
		var ivs [][2]float64
		for _, s := range c.Truth.Steps {
			a := s.StartS() + 3*s.TauS
			ivs = append(ivs, [2]float64{math.Max(0, s.CommandS-0.2), s.CommandS}, [2]float64{a, math.Min(a+0.2, c.Scene.DurationS)})
		}
		snr, err := MeasureSNR(c.Scene, ivs...)
		if err != nil {
			t.Fatal(err)
		}
		for i, s := range c.Truth.Steps {
			d := "down"
			if s.Up() {
				d = "up"
			}
			j.Steps = append(j.Steps, stepJSON{Direction: d, CommandS: s.CommandS, StartS: s.StartS(), DeadS: s.DeadS,
				TauS: s.TauS, FromRPM: 60 * s.FromHz, ToRPM: 60 * s.TargetHz, SNRBefore: finiteOrNil(snr[2*i]), SNRAfter: finiteOrNil(snr[2*i+1])})
		}
		for _, r := range c.Truth.Ramps {
			j.Ramps = append(j.Ramps, rampJSON{r.T0S, r.T1S, 60 * r.FromHz, 60 * r.ToHz})
		}
		b, err := json.MarshalIndent(j, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		base := name[:len(name)-len(f.Ext())]
		if err := os.WriteFile(filepath.Join(*dumpDir, base+".json"), append(b, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %s", name, c)
	}
}

func finiteOrNil(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}
