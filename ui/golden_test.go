package ui

import (
	"context"
	"math"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/test"

	"whirlfit/analysis"
	"whirlfit/dsp"
)

// fixtureReport is a small, fixed analysis for the golden images: a
// two-blade rotor whose shaft line steps from 60 to 110 Hz at 1 s with a
// 50 ms time constant (invented data for a self-consistency picture),
// drawn by the real STFT but with a hand-made track, so that the images
// depend on the window's drawing and not on the tracker's tuning.
func fixtureReport(t testing.TB) *analysis.Report {
	const (
		fs     = 4000.0 // Hz
		durS   = 2.0
		f0, f1 = 60.0, 110.0 // shaft Hz before and after
		stepS  = 1.0
		tauS   = 0.05
		blades = 2
	)
	shaft := func(tS float64) float64 {
		if tS < stepS {
			return f0
		}
		return f1 + (f0-f1)*math.Exp(-(tS-stepS)/tauS)
	}
	n := int(fs * durS)
	x := make([]float32, n)
	var ph float64
	for i := range x {
		f := shaft(float64(i) / fs)
		ph += 2 * math.Pi * f / fs
		x[i] = float32(0.2*math.Sin(ph) + 0.5*math.Sin(blades*ph) + 0.1*math.Sin(2*blades*ph))
	}
	spec, err := dsp.ComputeSpectrogram(context.Background(), x, fs, dsp.STFTConfig{FrameLen: 256, Hop: 32, Workers: 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	tr := &analysis.Track{Blades: blades}
	for i := 0; i < spec.Frames; i++ {
		ts := spec.FrameTimeS(i)
		tr.TimeS = append(tr.TimeS, ts)
		tr.ShaftHz = append(tr.ShaftHz, shaft(ts))
	}
	cmd := stepS - 0.01
	return &analysis.Report{
		File: "fixture", Blades: blades, SampleRateHz: fs, DurationS: durS,
		Spectrogram: spec, Track: tr,
		Steps: []analysis.StepResult{{
			Direction: analysis.Up, CommandS: &cmd, ResponseStartS: stepS,
			DeadTimeS: &analysis.Estimate{Value: 0.01, CI95: [2]float64{0.008, 0.012}},
			TauS:      analysis.Estimate{Value: tauS, CI95: [2]float64{0.048, 0.052}},
			RPMBefore: analysis.Estimate{Value: analysis.RPM(f0), CI95: [2]float64{3590, 3610}},
			RPMAfter:  analysis.Estimate{Value: analysis.RPM(f1), CI95: [2]float64{6580, 6620}},
			DeltaRPM:  analysis.Estimate{Value: analysis.RPM(f1 - f0), CI95: [2]float64{2980, 3020}},
			R2:        0.999, Warnings: []string{"invented fixture"},
		}},
		Warnings: []string{},
	}
}

// Golden images of the plot in both modes at a fixed size, with a marker.
// On a mismatch Fyne writes the new image to testdata/failed/; review it
// and copy it over the master to accept a deliberate change.
func TestSpectrogramViewGolden(t *testing.T) {
	test.NewTempApp(t)
	rep := fixtureReport(t)
	v := NewSpectrogramView()
	v.SetData(rep, nil, false)
	v.SetMarkers([]float64{0.99}, 0)
	v.Resize(fyne.NewSize(640, 360))
	test.AssertObjectRendersToImage(t, "spectrogram/spectrogram.png", v)
	v.SetMode(modeRPM)
	test.AssertObjectRendersToImage(t, "spectrogram/rpm.png", v)

	// Zoom and pan change the view and so the image; a pointer move does
	// not re-render (the cached image is returned).
	v.SetMode(modeSpectrogram)
	before := v.Viewport()
	v.Zoom(1/zoomStep, true)
	v.Pan(0.1, 0)
	after := v.Viewport()
	if !(after.T1-after.T0 < before.T1-before.T0) || !(after.F1-after.F0 < before.F1-before.F0) {
		t.Errorf("zoom in: view %+v → %+v, want a narrower time and frequency span", before, after)
	}
	img1 := v.draw(320, 180)
	v.MouseMoved(pointerAt(100, 100))
	if img2 := v.draw(320, 180); img2 != img1 {
		t.Error("pointer move re-rendered the plot image")
	}
	v.Select(0.9, 1.2, 50, 300)
	if !v.ZoomToSelection() {
		t.Fatal("zoom to selection: no selection")
	}
	if got := v.Viewport(); math.Abs(got.T0-0.9) > 1e-9 || math.Abs(got.T1-1.2) > 1e-9 || math.Abs(got.F0-50) > 1e-9 || math.Abs(got.F1-300) > 1e-9 {
		t.Errorf("zoom to selection: got t [%g, %g] f [%g, %g], want t [0.9, 1.2] f [50, 300]", got.T0, got.T1, got.F0, got.F1)
	}
}

// Markup golden of the results table for the fixture's one step.
func TestResultsTableGolden(t *testing.T) {
	test.NewTempApp(t)
	r := newResultsTable(nil)
	r.set(fixtureReport(t))
	r.table.Resize(fyne.NewSize(900, 140))
	test.AssertObjectRendersToMarkup(t, "results/table.xml", r.table)
	// compare.FormatPM: ± the larger distance to an interval end (2 ms),
	// one significant digit.
	if got, want := r.cell(1, 5), "50 ± 2"; got != want {
		t.Errorf("τ cell: got %q, want %q", got, want)
	}
}

func pointerAt(x, y float32) *desktop.MouseEvent {
	return &desktop.MouseEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(x, y)}}
}

// Markup golden of the comparison table for two fixed reports that differ
// in τ, and the verdict that names the faster one.
func TestCompareTableGolden(t *testing.T) {
	w, _ := newTestWindow(t)
	a, b := fixtureReport(t), fixtureReport(t)
	b.File = "slower"
	b.Steps[0].TauS = analysis.Estimate{Value: 0.08, CI95: [2]float64{0.077, 0.083}}
	p := w.compare
	p.recs = []*recording{{Label: "two-blade", Report: a}, {Label: "heavy", Report: b}}
	p.refresh()
	if p.cmp == nil {
		t.Fatalf("no comparison: %q", p.verdict.Text)
	}
	if !strings.Contains(p.verdict.Text, "heavy") || !strings.Contains(p.verdict.Text, "two-blade") {
		t.Errorf("verdict does not name both recordings: %q", p.verdict.Text)
	}
	t.Logf("verdict: %s", p.verdict.Text)
	p.table.Resize(fyne.NewSize(700, 300))
	test.AssertObjectRendersToMarkup(t, "compare/table.xml", p.table)
	if txt := p.text(); !strings.Contains(txt, "heavy") || !strings.Contains(txt, "two-blade") {
		t.Errorf("copied comparison lacks the labels: %q", txt)
	}
	for i, k := range compareKinds {
		data, err := p.renderCompare(i)
		if err != nil || len(data) == 0 {
			t.Errorf("%s: %d bytes, %v", k.name, len(data), err)
		}
	}
}

// Marker gestures on the view alone: a plain tap on the plot adds nothing,
// Shift-tap adds, a secondary tap near a marker offers its removal.
func TestViewMarkerGestures(t *testing.T) {
	test.NewTempApp(t)
	w := test.NewTempWindow(t, nil)
	v := NewSpectrogramView()
	w.SetContent(v)
	w.Resize(fyne.NewSize(640, 360))
	v.SetData(fixtureReport(t), nil, false)
	var added []float64
	v.OnAddMarker = func(tS float64) { added = append(added, tS) }
	pos, size := v.plotRect()
	mid := fyne.NewPos(pos.X+size.Width/2, pos.Y+size.Height/2)
	test.TapAt(v, mid)
	if len(added) != 0 {
		t.Fatalf("plain tap on the plot added a marker at %v", added)
	}
	v.MouseDown(&desktop.MouseEvent{PointEvent: fyne.PointEvent{Position: mid}, Button: desktop.MouseButtonPrimary, Modifier: fyne.KeyModifierShift})
	test.TapAt(v, mid)
	vp := v.Viewport()
	if len(added) != 1 || math.Abs(added[0]-(vp.T0+vp.T1)/2) > 1e-6 {
		t.Fatalf("Shift-tap in the middle: got %v, want one marker at %.4f s", added, (vp.T0+vp.T1)/2)
	}
	v.SetMarkers(added, -1)
	removed := -1
	v.OnRemoveMarker = func(i int) { removed = i }
	test.TapSecondaryAt(v, mid)
	if w.Canvas().Overlays().Top() == nil {
		t.Fatal("no context menu after a secondary tap")
	}
	items := v.contextItems(mid)
	if len(items) == 0 || items[0].Label != "Remove marker" {
		t.Fatalf("context menu at the marker: first entry %q, want Remove marker", items[0].Label)
	}
	items[0].Action()
	if removed != 0 {
		t.Errorf("Remove marker removed %d, want 0", removed)
	}
}

// Overlays with non-finite or enormous values (a failed fit, a band at a
// badly located onset) are skipped or clipped, never looped over.
func TestOverlaysSurviveBadNumbers(t *testing.T) {
	test.NewTempApp(t)
	rep := fixtureReport(t)
	rep.Track.ShaftHz[3] = math.NaN()
	rep.Steps[0].ResponseStartS = math.Inf(1)
	nan, inf := math.NaN(), math.Inf(1)
	curves := []stepCurve{{
		TimeS: []float64{0.5, 1, 1.5, nan, 1e300},
		RPM:   []float64{3600, nan, 6600, 6600, inf},
		Lo:    []float64{-1e12, 3000, nan, 0, -inf},
		Hi:    []float64{1e12, 7000, 7000, nan, inf},
	}}
	v := NewSpectrogramView()
	v.Resize(fyne.NewSize(400, 300))
	v.SetData(rep, curves, false)
	r := test.WidgetRenderer(v)
	for _, m := range []plotMode{modeSpectrogram, modeRPM} {
		v.SetMode(m)
		r.Refresh()
		if vp := v.Viewport(); !finite(vp.R0) || !finite(vp.R1) {
			t.Errorf("rpm axis [%g, %g] not finite", vp.R0, vp.R1)
		}
		if img := v.draw(200, 100); img.Bounds().Dx() != 200 {
			t.Fatalf("mode %d: image %v", m, img.Bounds())
		}
	}
}
