package figure

import (
	"context"
	"math"
	"testing"

	"whirlfit/analysis"
	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// On a real analysis (an invented recording from dsp/synth: three blades,
// 9,000 → 18,000 rpm at 1.0 s with τ 30 ms, θ 6 ms), the spectrogram
// figure draws exactly what the analysis computed: the ridge is the
// track's blade-pass frequency and the fitted curve is the step fit's model
// as the track sees it (StepFit.SeenModel), converted to blade-pass Hz.
func TestFigureDrawsTheAnalysis(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a full analysis")
	}
	steps := []synth.Step{{CommandS: 1.0, TargetHz: 300, TauS: 0.030, DeadS: 0.006}}
	sc := synth.Scene{SampleRate: 48000, DurationS: 2.5, Shaft: synth.Steps(150, steps...), Rotor: synth.NewRotor(3, 7),
		SNRdB: 20, HighPassHz: 120, Seed: 5}
	x, err := synth.Render(sc)
	if err != nil {
		t.Fatal(err)
	}
	a := &dsp.Audio{SampleRate: 48000, Bits: 16, Channels: [][]float32{x}}
	rep, err := analysis.Run(context.Background(), a, analysis.Config{Blades: 3, CommandTimesS: []float64{1.0}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Steps) != 1 {
		t.Fatalf("%d steps found, want 1", len(rep.Steps))
	}
	s := rep.Steps[0]
	fc, ok := any(s.Fit).(fitCurves)
	if !ok || s.Fit == nil {
		t.Fatal("analysis.StepFit no longer offers Model, SeenModel and Band")
	}
	t.Logf("τ %.2f ms (truth 30), θ %.2f ms (truth 6)", s.TauS.Value*1e3, s.DeadTimeS.Value*1e3)
	var ly layers
	no := false
	if _, err := spectrogramPlot(rep, Options{Ridge: RidgeBladePass, KHz: &no}, &ly); err != nil {
		t.Fatal(err)
	}
	idx := map[float64]int{}
	for i, tm := range rep.Track.TimeS {
		idx[tm] = i
	}
	for _, seg := range ly.lines {
		for _, q := range seg {
			if i, ok := idx[q.X]; !ok || q.Y != rep.Track.BladePassHzAt(i) {
				t.Fatalf("ridge point (%g, %g) is not on the track", q.X, q.Y)
			}
		}
	}
	toHz := func(rpm float64) float64 { return analysis.BladePassHz(analysis.ShaftHz(rpm), rep.Blades) }
	if len(ly.seen) != 1 || len(ly.seen[0]) != fitSamples {
		t.Fatalf("%d fitted curves", len(ly.seen))
	}
	for _, q := range ly.seen[0] {
		if want := toHz(fc.SeenModel(q.X)); math.Abs(q.Y-want) > 1e-9 {
			t.Fatalf("plotted fit %g Hz at %g s, StepFit gives %g", q.Y, q.X, want)
		}
	}
	// The drawn band is the fit's band.
	ts := []float64{ly.seen[0][fitSamples/2].X}
	lo, hi := fc.Band(ts)
	found := false
	for _, q := range ly.band[0] {
		if q.X == ts[0] && (math.Abs(q.Y-toHz(lo[0])) < 1e-9 || math.Abs(q.Y-toHz(hi[0])) < 1e-9) {
			found = true
		}
	}
	if !found {
		t.Errorf("band polygon lacks the fit's band at %g s", ts[0])
	}
}
