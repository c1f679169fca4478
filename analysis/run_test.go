package analysis

import (
	"context"
	"errors"
	"math"
	"testing"

	"whirlfit/assets"
	"whirlfit/dsp"
)

func TestTrackBetween(t *testing.T) {
	tr := &Track{Blades: 2, TimeS: []float64{0, 1, 2, 3, 4}, ShaftHz: []float64{1, 2, 3, 4, 5},
		SigmaHz: make([]float64, 5), Confidence: make([]float64, 5)}
	for _, c := range []struct {
		name          string
		from, to      float64
		first, length int
	}{
		{"middle", 1, 3, 1, 3},
		{"to the end", 2.5, 0, 3, 2},
		{"all", 0, 0, 0, 5},
		{"empty", 4.5, 0, 5, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			b := tr.Between(c.from, c.to)
			if b.Len() != c.length || (c.length > 0 && b.TimeS[0] != float64(c.first)) {
				t.Fatalf("Between(%g, %g): got %v, want %d samples from t=%d", c.from, c.to, b.TimeS, c.length, c.first)
			}
			if len(b.ShaftHz) != b.Len() || len(b.SigmaHz) != b.Len() || len(b.Confidence) != b.Len() {
				t.Fatal("Between: parallel slices differ in length")
			}
		})
	}
}

// TestRunInterval analyses the demo with an interval: only the steps inside
// it are fitted, and they keep their absolute times. Self-consistency with
// the demo's own truth (assets.Demo, invented for the demo).
func TestRunInterval(t *testing.T) {
	a, err := dsp.Decode("demo.wav", assets.DemoWAV)
	if err != nil {
		t.Fatal(err)
	}
	var cmds []float64
	for _, s := range assets.Demo.Steps {
		cmds = append(cmds, s.CommandS)
	}
	cfg := Config{Blades: assets.Demo.Blades, CommandTimesS: cmds, FromS: 2, ToS: 5}
	cfg.Steps.Bootstrap = -1
	rep, err := Run(context.Background(), a, cfg, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Steps) != 2 {
		t.Fatalf("steps in 2–5 s: got %d, want 2 (commands at 2.5 and 4.5 s)", len(rep.Steps))
	}
	for i, want := range assets.Demo.Steps[1:3] {
		got := rep.Steps[i]
		if got.CommandS == nil || *got.CommandS != want.CommandS {
			t.Errorf("step %d: command %v, want %g s", i, got.CommandS, want.CommandS)
		}
		if e := math.Abs(got.TauS.Value-want.TauS) / want.TauS; e > 0.05 {
			t.Errorf("step %d: τ %.2f ms, want %.1f ms ± 5 %%", i, 1e3*got.TauS.Value, 1e3*want.TauS)
		}
	}
	if rep.Track.Len() == 0 || rep.Track.TimeS[0] > 0.1 {
		t.Errorf("the whole recording must still be tracked; track starts at %v", rep.Track.TimeS[:min(1, rep.Track.Len())])
	}
	if _, err := Run(context.Background(), a, Config{Blades: 3, FromS: 4, ToS: 3}, nil); err == nil {
		t.Error("an empty interval must be refused")
	}
}

// TestRunDemoDetected finds the demo's four steps with no command times and
// fits each within 5 % of its true τ (self-consistency with assets.Demo).
// Regression: a down step detected twice once cut its own fit stretch to
// the duplicate's start, giving τ 80 ± 80 ms for a true 55 ms.
func TestRunDemoDetected(t *testing.T) {
	a, err := dsp.Decode("demo.wav", assets.DemoWAV)
	if err != nil {
		t.Fatal(err)
	}
	cfg := Config{Blades: assets.Demo.Blades}
	cfg.Steps.Bootstrap = -1
	rep, err := Run(context.Background(), a, cfg, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Steps) != len(assets.Demo.Steps) {
		t.Fatalf("found %d steps, want %d", len(rep.Steps), len(assets.Demo.Steps))
	}
	for i, want := range assets.Demo.Steps {
		got := rep.Steps[i]
		e := math.Abs(got.TauS.Value-want.TauS) / want.TauS
		t.Logf("step %d: τ %.2f ms (95 %% %.2f…%.2f), true %.1f ms", i+1, 1e3*got.TauS.Value, 1e3*got.TauS.CI95[0], 1e3*got.TauS.CI95[1], 1e3*want.TauS)
		if e > 0.05 {
			t.Errorf("step %d: τ %.2f ms, want %.1f ms ± 5 %%", i+1, 1e3*got.TauS.Value, 1e3*want.TauS)
		}
		if w := got.TauS.CI95[1] - got.TauS.CI95[0]; w > 0.2*want.TauS {
			t.Errorf("step %d: τ interval %.1f ms wide, want under 20 %% of τ on a clean settled step", i+1, 1e3*w)
		}
	}
}

// TestCheckInterval: the intervals Run refuses, on a 9 s recording (the
// demo's length), and the shortest it takes (MinIntervalS).
func TestCheckInterval(t *testing.T) {
	const durS = 9
	for _, c := range []struct {
		name     string
		from, to float64
		ok       bool
	}{
		{"middle", 2, 5, true},
		{"to the end", 2, 0, true},
		{"whole", 0, durS, true},
		{"shortest", 1, 1 + MinIntervalS, true},
		{"too short", 1, 1 + MinIntervalS/2, false},
		{"to the end, too short", durS - MinIntervalS/2, 0, false},
		{"reversed", 5, 2, false},
		{"empty", 3, 3, false},
		{"negative", -1, 3, false},
		{"past the end", 2, durS + 1, false},
		{"starts after the end", durS + 1, 0, false},
		{"NaN", math.NaN(), 3, false},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := CheckInterval(c.from, c.to, durS)
			if (err == nil) != c.ok {
				t.Fatalf("CheckInterval(%g, %g, %d): got %v, want ok %v", c.from, c.to, durS, err, c.ok)
			}
			if err != nil && !errors.Is(err, ErrInterval) {
				t.Fatalf("error %v does not wrap ErrInterval", err)
			}
		})
	}
}
