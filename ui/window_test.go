package ui

import (
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"whirlfit/analysis"
	"whirlfit/analysis/export"
	"whirlfit/assets"
)

// testSize is the fixed window size of the window tests.
var testSize = fyne.NewSize(1280, 800)

// applied returns a channel that receives once per shown analysis result.
func applied(w *Window) chan struct{} {
	ch := make(chan struct{}, 64)
	w.afterApply = func() { ch <- struct{}{} }
	return ch
}

// await waits for n results; the timeout only guards against a hang.
func await(t testing.TB, ch chan struct{}, n int) { awaitFor(t, ch, n, 2*time.Minute) }

func awaitFor(t testing.TB, ch chan struct{}, n int, timeout time.Duration) {
	t.Helper()
	for i := 0; i < n; i++ {
		select {
		case <-ch:
		case <-time.After(timeout):
			t.Fatalf("no analysis result after %v (%d of %d)", timeout, i, n)
		}
	}
}

func newTestWindow(t testing.TB) (*Window, chan struct{}) {
	a := test.NewTempApp(t)
	win := test.NewTempWindow(t, widget.NewLabel(""))
	w := New(a, win)
	win.Resize(testSize)
	return w, applied(w)
}

// openDemo loads the demo and waits for its analysis.
func openDemo(t testing.TB) (*Window, chan struct{}) {
	w, ch := newTestWindow(t)
	onUI(func() { w.OpenDemo() })
	await(t, ch, 1)
	if w.cur.Err != nil {
		t.Fatalf("demo analysis failed: %v", w.cur.Err)
	}
	return w, ch
}

func TestDemoResultsTable(t *testing.T) {
	w, ch := newTestWindow(t)
	onUI(func() { w.FirstStart() })
	if n := len(w.win.Canvas().Overlays().List()); n != 1 {
		t.Errorf("first start: %d overlay(s), want the first-run note", n)
	}
	if !w.prefs.Bool(prefNoteSeen) {
		t.Error("first-run note not marked as seen")
	}
	await(t, ch, 1)
	if w.cur.Err != nil {
		t.Fatalf("demo analysis failed: %v", w.cur.Err)
	}
	rep := w.cur.Report
	if rep == nil || rep.Spectrogram == nil || rep.Track == nil {
		t.Fatal("demo report lacks the spectrogram or the track")
	}
	for _, d := range assets.Demo.Steps {
		t.Logf("demo truth: command %.3f s, τ %.1f ms, dead time %.1f ms", d.CommandS, d.TauS*msPerS, d.DeadS*msPerS)
	}
	t.Logf("demo: %d step(s), %d blade(s); status %q", len(rep.Steps), rep.Blades, w.status.Text)
	// How well the core finds the demo's steps is the core's tests' job;
	// here the table must show what the core found.
	if len(rep.Steps) == 0 {
		t.Fatal("no step found in the demo")
	}
	if got, want := len(rep.Steps), len(assets.Demo.Steps); got != want {
		t.Logf("note: the core found %d step(s) in the demo, which has %d (assets.Demo)", got, want)
	}
	rows, cols := w.results.size()
	if rows != len(rep.Steps)+1 || cols != len(resultColumns) {
		t.Fatalf("table size: got %d×%d, want %d×%d", rows, cols, len(rep.Steps)+1, len(resultColumns))
	}
	tauCol := slices.IndexFunc(resultColumns, func(c struct {
		title string
		width float32
		cell  func(int, *analysis.StepResult) string
	}) bool {
		return strings.HasPrefix(c.title, "τ")
	})
	for i, st := range rep.Steps {
		cell := w.results.cell(i+1, tauCol)
		want := msEst(&st.TauS)
		if cell != want {
			t.Errorf("step %d τ cell: got %q, want %q", i+1, cell, want)
		}
		t.Logf("step %d: %s at %.3f s, τ %s ms", i+1, st.Direction, st.ResponseStartS, cell)
	}
	txt := resultsText(rep)
	if n := strings.Count(txt, "\n"); n < len(rep.Steps)+2 {
		t.Errorf("copied text has %d lines, want at least %d", n, len(rep.Steps)+2)
	}
	if !strings.Contains(txt, w.results.cell(1, tauCol)) {
		t.Error("copied text lacks the table's τ of step 1")
	}
}

// A tap on the time axis places a command marker and refits: the step
// then has a command time and a dead time.
func TestTapOnTimeAxisAddsMarkerAndRefits(t *testing.T) {
	w, ch := openDemo(t)
	v := w.view
	cmd := assets.Demo.Steps[0].CommandS
	pos, size := v.plotRect()
	v.mu.Lock()
	x := v.xOf(cmd)
	v.mu.Unlock()
	onUI(func() { test.TapAt(v, fyne.NewPos(x, pos.Y+size.Height+marginB/2)) })
	if got := w.marks.Times(); len(got) != 1 || abs(got[0]-cmd) > 0.01 {
		t.Fatalf("markers after tap: got %v, want one near %.3f s", got, cmd)
	}
	await(t, ch, 1)
	rep := w.cur.Report
	if got := rep.Config.CommandTimesS; len(got) != 1 {
		t.Fatalf("refit's command times: got %v, want the marker", got)
	}
	var st *analysis.StepResult
	for i := range rep.Steps {
		if c := rep.Steps[i].CommandS; c != nil && abs(*c-w.marks.Times()[0]) < 1e-9 {
			st = &rep.Steps[i]
		}
	}
	if st == nil || st.DeadTimeS == nil {
		t.Fatalf("no step took the marker as its command time: %+v", rep.Steps)
	}
	t.Logf("marker at %.4f s: dead time %s ms (true %.1f ms)", w.marks.Times()[0], msEst(st.DeadTimeS), assets.Demo.Steps[0].DeadS*msPerS)

	// Dragging the marker moves it (one history entry) and refits.
	before := w.marks.Times()[0]
	v.mu.Lock()
	x = v.xOf(before)
	v.mu.Unlock()
	// Events as the desktop driver sends them: the pointer's position and
	// the move since the last event (test.Drag sends the start position).
	y := pos.Y + size.Height/2
	onUI(func() {
		v.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(x+5, y)}, Dragged: fyne.Delta{DX: 5}})
	})
	onUI(func() {
		v.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(x+25, y)}, Dragged: fyne.Delta{DX: 20}})
	})
	onUI(func() { v.DragEnd() })
	await(t, ch, 1)
	moved := w.marks.Times()[0]
	if !(moved > before) {
		t.Fatalf("drag right: marker %.4f s → %.4f s, want later", before, moved)
	}
	if got := w.cur.Report.Config.CommandTimesS; len(got) != 1 || got[0] != moved {
		t.Fatalf("refit after drag: command times %v, want [%v]", got, moved)
	}
	onUI(func() { w.undoMarker() }) // undoes the whole drag
	await(t, ch, 1)
	if got := w.marks.Times(); len(got) != 1 || got[0] != before {
		t.Fatalf("undo drag: markers %v, want [%v]", got, before)
	}

	// Undo removes it and refits again; Delete on a selected marker too.
	onUI(func() { w.undoMarker() })
	await(t, ch, 1)
	if w.marks.Len() != 0 || len(w.cur.Report.Config.CommandTimesS) != 0 {
		t.Fatalf("after undo: %d marker(s), command times %v", w.marks.Len(), w.cur.Report.Config.CommandTimesS)
	}
	onUI(func() { w.redoMarker() })
	await(t, ch, 1)
	onUI(func() { v.SetMarkers(w.marks.Times(), 0) })
	onUI(func() { v.TypedKey(&fyne.KeyEvent{Name: fyne.KeyDelete}) })
	await(t, ch, 1)
	if w.marks.Len() != 0 {
		t.Fatalf("after Delete: %d marker(s), want 0", w.marks.Len())
	}
}

// Dropping a folder opens its recordings: the first in the view, all in
// the comparison, which then compares two recordings.
func TestDropFolderAndCompare(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"b-prop.wav", "a-prop.wav"} {
		if err := os.WriteFile(filepath.Join(dir, n), assets.DemoWAV, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("not audio"), 0o644); err != nil {
		t.Fatal(err)
	}
	web, err := storage.ParseURI("https://example.invalid/x.wav")
	if err != nil {
		t.Fatal(err)
	}
	got := droppedPaths([]fyne.URI{storage.NewFileURI(dir), web})
	want := []string{filepath.Join(dir, "a-prop.wav"), filepath.Join(dir, "b-prop.wav")}
	if !slices.Equal(got, want) {
		t.Fatalf("dropped paths: got %v, want %v", got, want)
	}

	w, ch := newTestWindow(t)
	onUI(func() { w.HandleDrop([]fyne.URI{storage.NewFileURI(dir)}) })
	await(t, ch, 2) // the analysis view and the comparison
	w.wait()
	if w.cur.Path != want[0] {
		t.Errorf("current recording: got %q, want %q", w.cur.Path, want[0])
	}
	p := w.compare
	if len(p.recs) != 2 {
		t.Fatalf("comparison holds %d recording(s), want 2", len(p.recs))
	}
	for _, r := range p.recs {
		if r.Err != nil {
			t.Fatalf("%s: %v", r.Path, r.Err)
		}
	}
	if p.cmp == nil || len(p.cells) < 2 {
		t.Fatalf("no comparison table: verdict %q", p.verdict.Text)
	}
	if h := p.cells[0]; h[1] != "a-prop" || h[2] != "b-prop" {
		t.Errorf("comparison header: got %v, want labels a-prop, b-prop", h)
	}
	p.relabel(1, "three-blade")
	if p.cells[0][2] != "three-blade" {
		t.Errorf("relabel: header %v", p.cells[0])
	}
	t.Logf("compare: %d row(s); verdicts: %v", len(p.cells)-1, p.cmp.Verdicts)
	p.remove(0)
	if p.cmp != nil || len(p.recs) != 1 {
		t.Errorf("after removing one of two: %d recording(s), comparison %v", len(p.recs), p.cmp != nil)
	}

	// Nothing usable dropped: a message, no crash.
	onUI(func() { w.HandleDrop([]fyne.URI{storage.NewFileURI(filepath.Join(dir, "missing.wav"))}) })
	if !strings.Contains(w.status.Text, "Nothing to open") {
		t.Errorf("status after an empty drop: %q", w.status.Text)
	}
}

// A settings change reruns the analysis; starting a second run at once
// cancels the first, so only the newest result is shown.
func TestSettingsRerunNewestWins(t *testing.T) {
	w, ch := openDemo(t)
	// The first run's progress may already be coming in: act under onUI.
	onUI(func() { w.panel.blades.SetSelected("3") })
	onUI(func() { w.panel.blades.SetSelected("2") })
	await(t, ch, 1)
	w.wait()
	if got := w.cur.Report.Config.Blades; got != 2 {
		t.Fatalf("shown result's blade count: got %d, want 2 (the newest setting)", got)
	}
	if s := loadSettings(w.prefs); s.Blades != 2 {
		t.Errorf("blade count in the preferences: got %d, want 2", s.Blades)
	}
	select {
	case <-ch:
		t.Error("a superseded run delivered a result")
	default:
	}
}

func TestExportAtomicNoOverwrite(t *testing.T) {
	w, _ := openDemo(t)
	dir := t.TempDir()
	for _, k := range exportKinds {
		path := filepath.Join(dir, "demo"+k.ext)
		if err := exportTo(path, k, w.cur.Report, false); err != nil {
			t.Errorf("%s: %v", k.name, err)
			continue
		}
		fi, err := os.Stat(path)
		if err != nil || fi.Size() == 0 {
			t.Errorf("%s: file missing or empty (%v)", k.name, err)
		}
		if err := exportTo(path, k, w.cur.Report, false); !errors.Is(err, export.ErrExists) {
			t.Errorf("%s: second export without force: got %v, want ErrExists", k.name, err)
		}
	}
	if err := exportTo(filepath.Join(dir, "x.csv"), exportKinds[0], nil, false); err == nil {
		t.Error("export without a report succeeded")
	}
}

func TestCursorReadout(t *testing.T) {
	w, _ := newTestWindow(t)
	w.cur = &recording{Report: &analysis.Report{Blades: 2}}
	w.showCursor(1.5, 400, modeSpectrogram, true)
	// 400 Hz as the shaft line is 24,000 rpm; as the blade-pass line of a
	// two-blade rotor 12,000 rpm (60 s per minute).
	for _, s := range []string{"t 1.500 s", "f 400.0 Hz", "shaft line 24000 rpm", "(2 blades) 12000 rpm"} {
		if !strings.Contains(w.readout.Text, s) {
			t.Errorf("readout %q lacks %q", w.readout.Text, s)
		}
	}
}

// The keyboard shortcuts reach their actions through the window's canvas.
func TestShortcuts(t *testing.T) {
	w, _ := newTestWindow(t)
	c, ok := w.win.Canvas().(interface{ TypedShortcut(fyne.Shortcut) })
	if !ok {
		t.Skip("test canvas does not take shortcuts")
	}
	w.view.SetData(fixtureReport(t), nil, false)
	c.TypedShortcut(shortcut(fyne.Key2, 0))
	if w.view.Mode() != modeRPM {
		t.Error("Ctrl+2 did not switch to the rpm view")
	}
	c.TypedShortcut(shortcut(fyne.Key1, 0))
	if w.view.Mode() != modeSpectrogram {
		t.Error("Ctrl+1 did not switch back to the spectrogram")
	}
	before := w.view.Viewport()
	c.TypedShortcut(shortcut(fyne.KeyEqual, 0))
	if in := w.view.Viewport(); !(in.T1-in.T0 < before.T1-before.T0) {
		t.Errorf("Ctrl+= did not zoom in: span %g → %g s", before.T1-before.T0, in.T1-in.T0)
	}
	c.TypedShortcut(shortcut(fyne.Key0, 0))
	if back := w.view.Viewport(); back.T0 != before.T0 || back.T1 != before.T1 {
		t.Errorf("Ctrl+0 did not show the whole recording: [%g, %g], want [%g, %g]", back.T0, back.T1, before.T0, before.T1)
	}
	w.cur = &recording{Report: fixtureReport(t)}
	c.TypedShortcut(shortcut(fyne.KeyRight, 0))
	if w.selStep != 0 {
		t.Errorf("Ctrl+Right: selected step %d, want 0", w.selStep)
	}
}
