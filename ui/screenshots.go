package ui

import (
	"fmt"
	"image"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"time"

	"fyne.io/fyne/v2"

	"whirlfit/analysis/export"
)

// ScreenshotEnv, when set to a folder, makes the app write a PNG of each
// view into it and quit (scripts/screenshots.sh uses it under Xvfb).
const ScreenshotEnv = "WHIRLFIT_SCREENSHOTS"

// markerLeadS is how far before each detected response start the
// screenshot places a command marker (a plausible dead time for the picture).
const markerLeadS = 0.01

// settle is how long a screenshot waits for the window to repaint after a
// change; the software renderer under Xvfb needs a moment.
const settle = 1500 * time.Millisecond

// Screenshots drives the window through its views and writes one PNG per
// view into dir, then calls quit. capture writes the screen to a PNG file;
// nil captures the window's canvas. It runs on its own goroutine and
// reaches the window only through fyne.DoAndWait.
func Screenshots(w *Window, dir string, capture func(path string) error, quit func(), log io.Writer) {
	defer fyne.Do(quit)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		fmt.Fprintln(log, "whirlfit:", err)
		return
	}
	done := make(chan struct{}, 16)
	fyne.DoAndWait(func() {
		w.afterApply = func() {
			select {
			case done <- struct{}{}:
			default:
			}
		}
	})
	waitRun := func() {
		select {
		case <-done:
		case <-time.After(2 * time.Minute):
			fmt.Fprintln(log, "whirlfit: screenshots: analysis did not finish in time")
		}
		time.Sleep(settle)
	}
	if capture == nil {
		capture = func(path string) error {
			var img image.Image
			fyne.DoAndWait(func() { img = w.win.Canvas().Capture() })
			return export.WriteFileAtomic(path, true, func(out io.Writer) error { return png.Encode(out, img) })
		}
	}
	shot := func(name string) {
		path := filepath.Join(dir, name)
		if err := capture(path); err != nil {
			fmt.Fprintln(log, "whirlfit:", err)
			return
		}
		fmt.Fprintln(log, "wrote", path)
	}
	// Close the first-run note if it is up, so it does not cover the plot.
	time.Sleep(settle)
	fyne.DoAndWait(func() {
		for _, o := range w.win.Canvas().Overlays().List() {
			w.win.Canvas().Overlays().Remove(o)
		}
	})
	waitRun()
	fyne.DoAndWait(func() { w.applyTheme(themeLight) })
	time.Sleep(settle)
	shot("spectrogram.png")

	fyne.DoAndWait(func() {
		if w.cur != nil && w.cur.Report != nil && len(w.cur.Report.Steps) > 0 {
			st := w.cur.Report.Steps[0]
			w.view.mu.Lock()
			w.view.vp.T0, w.view.vp.T1 = clampRange(st.ResponseStartS-0.15, st.ResponseStartS+0.45, w.view.full.T0, w.view.full.T1)
			w.view.mu.Unlock()
			w.modeRadio.SetSelected("rpm")
			w.view.ResetVertical()
		}
	})
	time.Sleep(settle)
	shot("step-rpm.png")

	fyne.DoAndWait(func() {
		w.view.ResetView()
		w.modeRadio.SetSelected("rpm")
	})
	time.Sleep(settle)
	shot("rpm.png")

	// Command markers just before each detected response start, as a user
	// would place them, and the refit that follows.
	placed := false
	fyne.DoAndWait(func() {
		w.modeRadio.SetSelected("Spectrogram")
		if w.cur == nil || w.cur.Report == nil || len(w.cur.Report.Steps) == 0 {
			return
		}
		var times []float64
		for _, st := range w.cur.Report.Steps {
			times = append(times, st.ResponseStartS-markerLeadS)
		}
		w.marks.Set(times)
		w.view.SetMarkers(w.marks.Times(), -1)
		w.analyse(true)
		placed = true
	})
	if placed {
		waitRun()
		shot("markers.png")
		fyne.DoAndWait(w.clearMarkers)
		waitRun()
	}

	// An analysis interval around the middle of the recording, and back to
	// the whole of it.
	fyne.DoAndWait(func() {
		if w.cur != nil && w.cur.Audio != nil {
			d := w.cur.Audio.DurationS()
			w.setInterval(span{FromS: 0.2 * d, ToS: 0.6 * d})
		}
	})
	waitRun()
	shot("interval.png")
	fyne.DoAndWait(w.analyseWhole)
	waitRun()

	fyne.DoAndWait(func() {
		w.modeRadio.SetSelected("Spectrogram")
		w.compare.addCurrent()
		w.compare.recs[len(w.compare.recs)-1].Label = "this file"
		w.compare.recs = append(w.compare.recs, &recording{Label: "demo"})
		w.compare.refresh()
	})
	waitRun()
	shot("compare.png")

	fyne.DoAndWait(func() {
		w.tabs.SelectIndex(0)
		w.applyTheme(themeDark)
	})
	time.Sleep(settle)
	shot("dark.png")

	fyne.DoAndWait(func() { w.showFirstRunNote(false) })
	time.Sleep(settle)
	shot("first-run.png")
	fyne.DoAndWait(func() { w.applyTheme(themeSystem) })
}
