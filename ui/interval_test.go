package ui

import (
	"image/color"
	"math"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/test"

	"whirlfit/analysis"
	"whirlfit/assets"
)

// demoOnsetTolS is how far a detected step's response start may lie from
// the demo's command time: the dead time (at most 7 ms, assets.Demo) plus
// a few hops of the track.
const demoOnsetTolS = 0.05

// stepsAt checks that the shown report has exactly one step near each of
// the given demo command times and no other.
func stepsAt(t *testing.T, w *Window, wantS ...float64) {
	t.Helper()
	rep := w.cur.Report
	if rep == nil {
		t.Fatalf("no report; status %q", w.status.Text)
	}
	var got []float64
	for _, st := range rep.Steps {
		got = append(got, st.ResponseStartS)
	}
	if len(got) != len(wantS) {
		t.Fatalf("steps at %v s, want %d near %v s (interval %g–%g s)", got, len(wantS), wantS, rep.Config.FromS, rep.Config.ToS)
	}
	for i := range got {
		if math.Abs(got[i]-wantS[i]) > demoOnsetTolS {
			t.Fatalf("step %d at %.3f s, want near %.3f s (all: %v)", i+1, got[i], wantS[i], got)
		}
	}
	if rows, _ := w.results.size(); rows != len(wantS)+1 {
		t.Errorf("results table: %d rows, want %d", rows, len(wantS)+1)
	}
}

// demoCommands returns the demo's command times (1.0, 2.5, 4.5, 6.0 s).
func demoCommands() []float64 {
	var c []float64
	for _, s := range assets.Demo.Steps {
		c = append(c, s.CommandS)
	}
	return c
}

// Selecting a span on the demo and analysing it fits only the steps
// inside; undo, redo and "the whole recording" move between the two; the
// interval is kept for the recording and comes back when it is reopened.
func TestIntervalSelectAnalyseClear(t *testing.T) {
	w, ch := openDemo(t)
	cmd := demoCommands()
	stepsAt(t, w, cmd...)

	c, ok := w.win.Canvas().(interface{ TypedShortcut(fyne.Shortcut) })
	if !ok {
		t.Skip("test canvas does not take shortcuts")
	}
	// Drag across 2–5 s (the frequencies do not matter), then Ctrl+I.
	onUI(func() {
		v := w.view
		v.mu.Lock()
		y := v.yOf((v.vp.F0 + v.vp.F1) / 2)
		x0, x1 := v.xOf(2), v.xOf(5)
		v.mu.Unlock()
		v.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(x0+1, y)}, Dragged: fyne.Delta{DX: 1}})
		v.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(x1, y)}, Dragged: fyne.Delta{DX: x1 - x0 - 1}})
		v.DragEnd()
	})
	from, to, ok := w.view.SelectedSpan()
	// One unit of the drag is a few ms at this width (9 s over ~900 units).
	if !ok || math.Abs(from-2) > 0.02 || math.Abs(to-5) > 0.02 {
		t.Fatalf("selected span after the drag: %g–%g s (%v), want about 2–5 s", from, to, ok)
	}
	onUI(func() { c.TypedShortcut(shortcut(fyne.KeyI, 0)) })
	await(t, ch, 1)
	rep := w.cur.Report
	if rep.Config.FromS != from || rep.Config.ToS != to {
		t.Fatalf("analysed interval: got %g–%g s, want the selection %g–%g s", rep.Config.FromS, rep.Config.ToS, from, to)
	}
	stepsAt(t, w, cmd[1], cmd[2]) // 2.5 and 4.5 s
	for _, st := range rep.Steps {
		if st.ResponseStartS < from || st.ResponseStartS > to {
			t.Errorf("step at %.3f s outside the interval", st.ResponseStartS)
		}
	}
	if got := loadInterval(w.prefs, ""); got != (span{from, to}) {
		t.Errorf("kept interval of the demo: got %+v, want %g–%g s", got, from, to)
	}
	if !strings.Contains(w.status.Text, "2 step(s) fitted in ") {
		t.Errorf("status does not name the interval: %q", w.status.Text)
	}
	if w.ivPanel.from.Text == "" || w.ivPanel.to.Text == "" {
		t.Errorf("panel entries after the selection: %q–%q", w.ivPanel.from.Text, w.ivPanel.to.Text)
	}

	// Undo goes back to the whole recording, redo to the interval.
	onUI(func() { c.TypedShortcut(shortcut(fyne.KeyZ, 0)) })
	await(t, ch, 1)
	stepsAt(t, w, cmd...)
	if !w.marks.Interval().whole() || loadInterval(w.prefs, "") != (span{}) {
		t.Errorf("after undo: interval %+v, kept %+v; want none", w.marks.Interval(), loadInterval(w.prefs, ""))
	}
	onUI(func() { w.redoMarker() })
	await(t, ch, 1)
	stepsAt(t, w, cmd[1], cmd[2])

	// The context menu's "Analyse the whole recording" clears it.
	var whole *fyne.MenuItem
	for _, it := range w.view.contextItems(fyne.NewPos(marginL+10, marginT+10)) {
		if it.Label == "Analyse the whole recording" {
			whole = it
		}
	}
	if whole == nil {
		t.Fatal("no \"Analyse the whole recording\" in the context menu with an interval set")
	}
	onUI(whole.Action)
	await(t, ch, 1)
	stepsAt(t, w, cmd...)
	if w.cur.Report.Config.FromS != 0 || w.cur.Report.Config.ToS != 0 {
		t.Errorf("after clearing: analysed %g–%g s, want the whole recording", w.cur.Report.Config.FromS, w.cur.Report.Config.ToS)
	}

	// Typed in the panel, open to the end: 4 s on holds 4.5 and 6.0 s. It
	// is kept: reopening the demo analyses the same interval.
	onUI(func() {
		w.ivPanel.from.SetText("4")
		w.ivPanel.to.SetText("")
		w.submitInterval()
	})
	await(t, ch, 1)
	stepsAt(t, w, cmd[2], cmd[3])
	onUI(func() { w.OpenDemo() })
	await(t, ch, 1)
	if got := w.marks.Interval(); got != (span{FromS: 4}) {
		t.Fatalf("reopened demo's interval: got %+v, want from 4 s to the end", got)
	}
	stepsAt(t, w, cmd[2], cmd[3])
}

// Markers outside the interval are kept but not fitted, and the core says
// how many it left out.
func TestIntervalMarkersOutsideKept(t *testing.T) {
	w, ch := openDemo(t)
	cmd := demoCommands()
	onUI(func() { w.addMarker(cmd[0]) })
	await(t, ch, 1)
	onUI(func() { w.addMarker(cmd[2]) })
	await(t, ch, 1)
	onUI(func() { w.setInterval(span{FromS: 4, ToS: 5}) })
	await(t, ch, 1)
	rep := w.cur.Report
	if w.marks.Len() != 2 {
		t.Fatalf("markers after setting the interval: %v, want both kept", w.marks.Times())
	}
	if len(rep.Steps) != 1 || rep.Steps[0].CommandS == nil || *rep.Steps[0].CommandS != cmd[2] {
		t.Fatalf("steps: %+v, want the one at the %g s marker", rep.Steps, cmd[2])
	}
	found := false
	for _, s := range rep.Warnings {
		found = found || strings.Contains(s, "1 command time(s) outside the interval")
	}
	if !found {
		t.Errorf("no warning about the marker left out: %v", rep.Warnings)
	}
}

// Intervals the core would refuse are refused with a message before any
// run, and nothing changes: the interval, the markers, the results.
func TestIntervalRefused(t *testing.T) {
	w, ch := openDemo(t)
	onUI(func() { w.addMarker(2.5) })
	await(t, ch, 1)
	onUI(func() { w.setInterval(span{FromS: 2, ToS: 5}) })
	await(t, ch, 1)
	before, iv := w.cur.Report, w.marks.Interval()
	for _, c := range []struct {
		name, from, to string
		want           string // in the message
	}{
		{"reversed", "5", "2", "ends before it starts"},
		{"empty", "3", "3", "ends before it starts"},
		{"too short", "2", "2.2", "shorter than"},
		{"past the end", "2", "100", "outside the recording"},
		{"starts after the end", "20", "", "outside the recording"},
		{"negative", "-1", "3", "before the recording"},
		{"not a number", "two", "", `the From entry "two" is not a time in seconds`},
	} {
		t.Run(c.name, func(t *testing.T) {
			onUI(func() {
				w.ivPanel.from.SetText(c.from)
				w.ivPanel.to.SetText(c.to)
				w.submitInterval()
			})
			checkRefused(t, w, ch, c.want, before, iv)
		})
	}
	t.Run("selection too short", func(t *testing.T) {
		onUI(func() {
			w.view.Select(2, 2+analysis.MinIntervalS/2, 100, 200)
			w.analyseSelection()
		})
		checkRefused(t, w, ch, "shorter than", before, iv)
	})
	t.Run("no selection", func(t *testing.T) {
		onUI(func() {
			w.view.ZoomToSelection() // uses up the selection
			w.analyseSelection()
		})
		checkRefused(t, w, ch, "no span is selected", before, iv)
		w.view.ResetView()
	})
}

func checkRefused(t *testing.T, w *Window, ch chan struct{}, want string, before *analysis.Report, iv span) {
	t.Helper()
	if w.analysisJob.running() {
		t.Error("a refused interval started an analysis")
	}
	w.wait()
	select {
	case <-ch:
		t.Error("a refused interval delivered a result")
	default:
	}
	if !strings.HasPrefix(w.status.Text, "Interval not changed: ") || !strings.Contains(w.status.Text, want) {
		t.Errorf("status: got %q, want the refusal with %q", w.status.Text, want)
	}
	if w.win.Canvas().Overlays().Top() == nil {
		t.Error("no message dialog")
	}
	if w.cur.Report != before || w.marks.Interval() != iv || w.marks.Len() != 1 {
		t.Errorf("something changed: interval %+v (was %+v), %d marker(s), same report %v", w.marks.Interval(), iv, w.marks.Len(), w.cur.Report == before)
	}
}

// The view shades the time outside the interval, dims the markers there
// and offers the selected span, limited to the recording, as the interval.
func TestViewIntervalShading(t *testing.T) {
	test.NewTempApp(t)
	v := NewSpectrogramView()
	v.Resize(fyne.NewSize(640, 360))
	v.SetData(fixtureReport(t), nil, false) // 2 s long
	v.SetInterval(span{FromS: 0.5, ToS: 1.5})
	v.SetMarkers([]float64{0.2, 1.0}, -1)
	r := test.WidgetRenderer(v).(*spectrogramRenderer)
	r.Refresh()
	pos, size := v.plotRect()
	v.mu.Lock()
	x0, x1 := v.xOf(0.5), v.xOf(1.5)
	v.mu.Unlock()
	if r.shadeL.Size().Width != x0-pos.X || r.shadeR.Position().X != x1 || r.shadeR.Size().Width != pos.X+size.Width-x1 {
		t.Errorf("shading: left width %g (want %g), right from %g width %g (want %g, %g)",
			r.shadeL.Size().Width, x0-pos.X, r.shadeR.Position().X, r.shadeR.Size().Width, x1, pos.X+size.Width-x1)
	}
	var markerCols []color.Color
	for _, o := range r.Objects() {
		if ln, ok := o.(*canvas.Line); ok && ln.Position2.Y > pos.Y+size.Height+tickLen {
			markerCols = append(markerCols, ln.StrokeColor)
		}
	}
	if len(markerCols) != 2 || markerCols[0] != dimmed(colMarker) || markerCols[1] != colMarker {
		t.Errorf("marker colours: got %v, want the one outside dimmed (%v) and the one inside not (%v)", markerCols, dimmed(colMarker), colMarker)
	}

	var gotFrom, gotTo float64
	v.OnAnalyseSpan = func(f, t float64) { gotFrom, gotTo = f, t }
	v.OnAnalyseWhole = func() {}
	v.Select(-1, 0.8, 50, 300) // starts before the recording
	labels := map[string]*fyne.MenuItem{}
	for _, it := range v.contextItems(fyne.NewPos(pos.X+size.Width/2, pos.Y+10)) {
		labels[it.Label] = it
	}
	it := labels["Analyse the selected span"]
	if it == nil || labels["Analyse the whole recording"] == nil {
		t.Fatalf("context menu with a selection and an interval: %v", labels)
	}
	it.Action()
	if gotFrom != 0 || gotTo != 0.8 {
		t.Errorf("selected span: got %g–%g s, want 0–0.8 s (limited to the recording)", gotFrom, gotTo)
	}
	v.SetInterval(span{})
	r.Refresh()
	for _, o := range r.Objects() {
		if o == r.shadeL || o == r.shadeR {
			t.Error("shading drawn with no interval")
		}
	}
}

// An interval kept for a path that no longer fits the recording there (the
// file was replaced by a shorter one) gives way to the whole recording,
// with a message.
func TestIntervalKeptButNoLongerFits(t *testing.T) {
	w, ch := newTestWindow(t)
	saveInterval(w.prefs, "", span{FromS: 20, ToS: 30}) // the demo is 9 s long
	onUI(func() { w.OpenDemo() })
	await(t, ch, 1)
	stepsAt(t, w, demoCommands()...)
	if !w.marks.Interval().whole() || loadInterval(w.prefs, "") != (span{}) {
		t.Errorf("interval after the refusal: %+v, kept %+v; want none", w.marks.Interval(), loadInterval(w.prefs, ""))
	}
	if w.win.Canvas().Overlays().Top() == nil {
		t.Error("no message that the kept interval was not used")
	}
	if w.marks.Undo() {
		t.Error("the correction went into the undo history")
	}
}
