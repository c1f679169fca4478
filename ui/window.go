package ui

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/data/binding"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"whirlfit/analysis"
	"whirlfit/assets"
	"whirlfit/dsp"
)

// DemoName is the name the embedded demo recording is shown under.
const DemoName = "demo.wav (built in)"

// recording is one opened file and its latest analysis.
type recording struct {
	Path   string // "" for the demo
	Label  string
	Audio  *dsp.Audio
	Report *analysis.Report
	Err    error
}

func (r *recording) name() string {
	if r.Path == "" {
		return DemoName
	}
	return filepath.Base(r.Path)
}

// Window is whirlfit's main window: the plot of one recording with its
// settings and results, and the comparison of several recordings.
type Window struct {
	app   fyne.App
	win   fyne.Window
	prefs fyne.Preferences

	settings Settings
	cur      *recording
	marks    markers
	selStep  int

	analysisJob job

	view       *SpectrogramView
	results    *resultsTable
	panel      *settingsPanel
	ivPanel    *intervalPanel
	compare    *comparePanel
	fileLabel  *widget.Label
	readout    *widget.Label
	status     *widget.Label
	progress   binding.Float
	warnBtn    *widget.Button
	progBar    *widget.ProgressBar
	cancelBtn  *widget.Button
	modeRadio  *widget.RadioGroup
	dbLo       *widget.Slider
	dbHi       *widget.Slider
	tabs       *container.AppTabs
	recentMenu *fyne.MenuItem

	// afterApply, when set, is called on the UI goroutine after an
	// analysis result has been shown (tests use it).
	afterApply func()
	// afterPreview, when set, is called after a new recording's preview
	// spectrogram has been shown (benchmarks use it).
	afterPreview func()
}

// New builds the main window's content in win (menus, shortcuts, drop
// handling) and returns it; call Open or OpenDemo to load something.
func New(a fyne.App, win fyne.Window) *Window {
	w := &Window{app: a, win: win, prefs: a.Preferences(), selStep: -1}
	w.settings = loadSettings(w.prefs)
	w.build()
	return w
}

func (w *Window) build() {
	w.view = NewSpectrogramView()
	w.view.OnCursor = w.showCursor
	w.view.OnAddMarker = w.addMarker
	w.view.OnMoveMarker = w.moveMarker
	w.view.OnRemoveMarker = w.removeMarker
	w.view.OnSelectMarker = func(i int) { w.view.SetMarkers(w.marks.Times(), i) }
	w.view.OnAnalyseSpan = func(from, to float64) { w.setInterval(span{FromS: from, ToS: to}) }
	w.view.OnAnalyseWhole = w.analyseWhole

	w.results = newResultsTable(w.selectStep)
	w.panel = newSettingsPanel(w.settings, w.settingsChanged)
	w.ivPanel = newIntervalPanel(w.submitInterval, w.analyseSelection, w.analyseWhole)
	w.compare = newComparePanel(w)

	w.fileLabel = widget.NewLabel("")
	w.fileLabel.TextStyle.Bold = true
	w.fileLabel.Truncation = fyne.TextTruncateEllipsis
	w.readout = widget.NewLabel(" ")
	w.readout.TextStyle.Monospace = true
	w.status = widget.NewLabel("")
	w.status.Wrapping = fyne.TextWrapWord
	w.progress = binding.NewFloat()
	w.progBar = widget.NewProgressBarWithData(w.progress)
	w.progBar.Hide()
	w.cancelBtn = widget.NewButtonWithIcon("Cancel", theme.CancelIcon(), w.cancelRun)
	w.cancelBtn.Hide()
	w.warnBtn = widget.NewButtonWithIcon("Warnings", theme.WarningIcon(), w.showWarnings)
	w.warnBtn.Hide()

	w.modeRadio = widget.NewRadioGroup([]string{"Spectrogram", "rpm"}, func(s string) {
		if s == "rpm" {
			w.view.SetMode(modeRPM)
		} else {
			w.view.SetMode(modeSpectrogram)
		}
	})
	w.modeRadio.Horizontal = true
	w.modeRadio.Required = true
	w.modeRadio.SetSelected("Spectrogram")

	// Colour scale: floor and top of the dB range.
	w.dbLo = widget.NewSlider(-160, 20)
	w.dbHi = widget.NewSlider(-160, 20)
	w.dbLo.Step, w.dbHi.Step = 1, 1
	levels := func(float64) {
		lo, hi := w.dbLo.Value, w.dbHi.Value
		if hi <= lo {
			return
		}
		w.view.SetLevels(lo, hi)
	}
	w.dbLo.OnChanged, w.dbHi.OnChanged = levels, levels

	zoomIn := widget.NewButtonWithIcon("", theme.ZoomInIcon(), func() { w.view.Zoom(1/zoomStep, false) })
	zoomOut := widget.NewButtonWithIcon("", theme.ZoomOutIcon(), func() { w.view.Zoom(zoomStep, false) })
	zoomSel := widget.NewButton("Zoom to selection", func() { w.view.ZoomToSelection() })
	zoomFit := widget.NewButtonWithIcon("", theme.ZoomFitIcon(), w.view.ResetView)
	prev := widget.NewButtonWithIcon("", theme.NavigateBackIcon(), func() { w.stepBy(-1) })
	next := widget.NewButtonWithIcon("", theme.NavigateNextIcon(), func() { w.stepBy(1) })

	toolbar := container.NewHBox(w.modeRadio, widget.NewSeparator(), zoomIn, zoomOut, zoomFit, zoomSel, widget.NewSeparator(), prev, next)
	levelsBox := widget.NewForm(
		widget.NewFormItem("Floor (dB)", w.dbLo),
		widget.NewFormItem("Top (dB)", w.dbHi))

	hint := widget.NewLabel("Click the time axis (or Shift-click the plot) to place a command marker; drag it to move; Delete or right-click removes it. With markers, exactly the marked steps are fitted. Drag on the plot to select, scroll to zoom; Analyse the selected span (Steps menu or right-click) fits only the steps in it.")
	hint.Wrapping = fyne.TextWrapWord
	hint.Importance = widget.LowImportance

	plotArea := container.NewBorder(container.NewVBox(w.fileLabel, toolbar), w.readout, nil, nil, w.view)
	copyBtn := widget.NewButtonWithIcon("Copy table", theme.ContentCopyIcon(), w.copyResults)
	resultsArea := container.NewBorder(
		container.NewBorder(nil, nil, widget.NewLabelWithStyle("Steps", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}), copyBtn),
		nil, nil, nil, w.results.table)
	split := container.NewVSplit(plotArea, resultsArea)
	split.Offset = 0.64

	side := container.NewVBox(
		widget.NewLabelWithStyle("Analysis settings", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
		w.panel.box,
		widget.NewSeparator(),
		widget.NewLabelWithStyle("Analysis interval", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
		w.ivPanel.box,
		widget.NewSeparator(),
		widget.NewLabelWithStyle("Colour scale", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
		levelsBox,
		widget.NewSeparator(),
		hint,
	)
	statusBar := container.NewBorder(nil, nil, nil, container.NewHBox(w.warnBtn, w.cancelBtn), container.NewVBox(w.progBar, w.status))
	analysisTab := container.NewBorder(nil, statusBar, nil, container.NewVScroll(container.NewPadded(side)), split)

	w.tabs = container.NewAppTabs(
		container.NewTabItem("Analysis", analysisTab),
		container.NewTabItem("Compare", w.compare.content),
	)
	w.win.SetContent(w.tabs)
	w.win.SetMainMenu(w.mainMenu())
	w.addShortcuts()
	w.win.SetOnDropped(func(_ fyne.Position, uris []fyne.URI) { w.HandleDrop(uris) })
	w.applyTheme(w.prefs.StringWithFallback(prefTheme, themeSystem))
}

// OpenDemo opens the embedded demo recording.
func (w *Window) OpenDemo() {
	w.load(&recording{Label: "demo"})
}

// Open opens the first file in the analysis view and, when there are
// several, puts all of them in the comparison.
func (w *Window) Open(paths []string) {
	if len(paths) == 0 {
		return
	}
	w.prefs.SetString(prefLastFolder, filepath.Dir(paths[0]))
	for _, p := range paths {
		addRecent(w.prefs, p)
	}
	w.refreshRecent()
	w.load(&recording{Path: paths[0], Label: labelFor(paths[0])})
	if len(paths) > 1 {
		w.compare.add(paths...)
		w.tabs.SelectIndex(1)
	}
}

func labelFor(path string) string {
	b := filepath.Base(path)
	return b[:len(b)-len(filepath.Ext(b))]
}

// forRecording adapts the configuration to the recording at path: the
// demo's propeller is known, so with the blade count left on auto the demo
// (path "") is analysed as what it is, as a user who knows the propeller
// would.
func forRecording(cfg analysis.Config, path string) analysis.Config {
	if path == "" && cfg.Blades == 0 {
		cfg.Blades, cfg.Track.Blades = assets.Demo.Blades, assets.Demo.Blades
	}
	return cfg
}

// decode reads a recording from disk, or the demo when path is empty.
func decode(path string) (*dsp.Audio, error) {
	if path == "" {
		return dsp.Decode("demo.wav", assets.DemoWAV)
	}
	return dsp.DecodeFile(path)
}

// load makes rec the current recording and analyses it.
func (w *Window) load(rec *recording) {
	w.cur = rec
	iv := loadInterval(w.prefs, rec.Path)
	w.marks.Reset(iv)
	w.selStep = -1
	w.view.SetMarkers(nil, -1)
	w.view.SetInterval(iv)
	w.ivPanel.set(iv)
	w.fileLabel.SetText(rec.name())
	w.win.SetTitle("whirlfit — " + rec.name())
	w.analyse(false)
}

// analyse runs the core on the current recording with the current settings
// and markers, in the background; keepView keeps the zoom (a refit).
func (w *Window) analyse(keepView bool) {
	rec := w.cur
	if rec == nil {
		return
	}
	cfg := forRecording(w.settings.Config(w.marks.Times()), rec.Path)
	iv := w.marks.Interval()
	cfg.FromS, cfg.ToS = iv.FromS, iv.ToS
	path := rec.Path
	audio := rec.Audio
	w.status.SetText("Analysing " + rec.name() + " …")
	w.progress.Set(0)
	w.progBar.Show()
	w.cancelBtn.Show()
	w.analysisJob.start(func(ctx context.Context, progress func(float64), partial func(any)) (any, error) {
		a := audio
		if a == nil {
			var err error
			if a, err = decode(path); err != nil {
				return nil, err
			}
			// A new recording: show its spectrogram at once, while the
			// tracker and the fit run.
			if spec, err := previewSpectrogram(ctx, a); err == nil {
				partial(preview{audio: a, spec: spec})
			}
		}
		rep, err := analysis.Run(ctx, a, cfg, stageProgress(progress))
		if rep != nil {
			rep.File = rec.name()
		}
		return runResult{audio: a, report: rep}, err
	}, func(f float64) { w.progress.Set(f) }, func(v any) {
		p, ok := v.(preview)
		if !ok {
			return
		}
		// Keep the decoded audio even if this run is superseded.
		rec.Audio = p.audio
		if rec == w.cur && rec.Report == nil {
			w.view.SetData(&analysis.Report{Spectrogram: p.spec, DurationS: p.audio.DurationS()}, nil, false)
			lo, hi := w.view.Levels()
			w.dbLo.SetValue(lo)
			w.dbHi.SetValue(hi)
			w.status.SetText("Tracking the rotor in " + rec.name() + " …")
			if w.afterPreview != nil {
				w.afterPreview()
			}
		}
	}, func(v any, err error) {
		res, _ := v.(runResult)
		w.apply(rec, res, err, keepView)
	})
}

// preview is a recording's display spectrogram, shown before its analysis.
type preview struct {
	audio *dsp.Audio
	spec  *dsp.Spectrogram
}

// previewFrames bounds the preview's frames: a few screen widths.
const previewFrames = 4000

// previewSpectrogram computes a display copy of the recording's
// spectrogram (the mix of its channels, default STFT) with the core's
// reducer, so that a long recording costs little memory.
func previewSpectrogram(ctx context.Context, a *dsp.Audio) (*dsp.Spectrogram, error) {
	sig, err := a.Signal(dsp.Mix)
	if err != nil {
		return nil, err
	}
	// No more frames than the preview keeps: a long recording's hop grows
	// instead of its frames being reduced afterwards.
	cfg := dsp.STFTConfig{}.Resolve(sig.SampleRate)
	cfg.Hop = max(cfg.Hop, len(sig.Samples)/previewFrames)
	r, err := dsp.NewReducer(cfg, sig.SampleRate, len(sig.Samples), previewFrames)
	if err != nil {
		return nil, err
	}
	if err := cfg.Process(ctx, sig.Samples, sig.SampleRate, r.Frame, nil); err != nil {
		return nil, err
	}
	return r.Spectrogram(), nil
}

// stageProgress maps the core's staged progress onto one 0–1 bar: the
// tracker takes most of the time, the fit the rest.
func stageProgress(p func(float64)) analysis.Progress {
	const trackShare = 0.9 // of the bar; common practice for the demo's timing
	return func(stage string, done, total int) {
		if total <= 0 {
			return
		}
		f := float64(done) / float64(total)
		if stage == "track" {
			p(trackShare * f)
		} else {
			p(trackShare + (1-trackShare)*f)
		}
	}
}

type runResult struct {
	audio  *dsp.Audio
	report *analysis.Report
}

// apply shows an analysis result; it runs on the UI goroutine.
func (w *Window) apply(rec *recording, res runResult, err error, keepView bool) {
	w.progBar.Hide()
	w.cancelBtn.Hide()
	if rec != w.cur {
		return
	}
	if res.audio != nil {
		rec.Audio = res.audio
	}
	rec.Err = err
	if err != nil && errors.Is(err, analysis.ErrInterval) && !w.marks.Interval().whole() {
		// The interval kept for this path does not fit the recording (the
		// file changed, or it was set before the length was known): say
		// so and analyse the whole recording. This corrects, it is not an
		// edit, so it stays out of the history.
		msg := strings.TrimPrefix(err.Error(), "analysis: ") + ".\n\nThe whole recording is analysed instead."
		w.marks.ReplaceInterval(span{})
		w.intervalChanged()
		dialog.ShowInformation("Interval not used", msg, w.win)
		return
	}
	if err != nil {
		if errors.Is(err, context.Canceled) {
			w.status.SetText("Analysis cancelled.")
		} else {
			w.status.SetText("Could not analyse " + rec.name() + ": " + err.Error())
		}
		if rec.Report == nil {
			w.view.SetData(nil, nil, false)
			w.results.set(nil)
		}
		w.done()
		return
	}
	rec.Report = res.report
	if a := rec.Audio; a != nil {
		w.panel.set(w.settings, len(a.Channels))
		w.fileLabel.SetText(fmt.Sprintf("%s — %s %s, %d bit, %d Hz, %d channel(s), %.1f s",
			rec.name(), a.Container, a.Codec, a.Bits, a.SampleRate, len(a.Channels), a.DurationS()))
	}
	if len(res.report.Warnings) > 0 {
		w.warnBtn.Show()
	} else {
		w.warnBtn.Hide()
	}
	w.view.SetData(res.report, stepCurves(res.report), keepView)
	if !keepView {
		lo, hi := w.view.Levels()
		w.dbLo.SetValue(lo)
		w.dbHi.SetValue(hi)
	}
	w.view.SetMarkers(w.marks.Times(), -1)
	w.results.set(res.report)
	w.status.SetText(summaryLine(res.report))
	w.done()
}

func (w *Window) done() {
	if w.afterApply != nil {
		w.afterApply()
	}
}

// summaryLine says in one line what the analysis found.
func summaryLine(r *analysis.Report) string {
	s := fmt.Sprintf("%s: %.1f s, %d blade(s), %d step(s) fitted", r.File, r.DurationS, r.Blades, len(r.Steps))
	if iv := (span{FromS: r.Config.FromS, ToS: r.Config.ToS}); !iv.whole() {
		s += " in " + intervalText(iv)
	}
	if len(r.Warnings) > 0 {
		s += fmt.Sprintf("; %d warning(s): %s", len(r.Warnings), r.Warnings[0])
		if len(r.Warnings) > 1 {
			s += " …"
		}
	}
	return s
}

func (w *Window) cancelRun() {
	w.analysisJob.stop()
	w.progBar.Hide()
	w.cancelBtn.Hide()
	w.status.SetText("Analysis cancelled.")
}

func (w *Window) settingsChanged(s Settings) {
	if s == w.settings {
		return
	}
	w.settings = s
	s.save(w.prefs)
	w.analyse(false)
	w.compare.reanalyse()
}

// Marker edits: each one refits at once.

func (w *Window) addMarker(t float64) {
	i := w.marks.Add(t)
	w.view.SetMarkers(w.marks.Times(), i)
	w.analyse(true)
}

func (w *Window) moveMarker(i int, t float64, first, done bool) {
	j := w.marks.Move(i, t, first)
	w.view.SetMarkers(w.marks.Times(), j)
	if done {
		w.analyse(true)
	}
}

func (w *Window) removeMarker(i int) {
	if w.marks.Remove(i) {
		w.view.SetMarkers(w.marks.Times(), -1)
		w.analyse(true)
	}
}

// undoMarker and redoMarker undo and redo the last marker or interval edit.
func (w *Window) undoMarker() {
	if w.marks.Undo() {
		w.intervalChanged()
	}
}

func (w *Window) redoMarker() {
	if w.marks.Redo() {
		w.intervalChanged()
	}
}

func (w *Window) clearMarkers() {
	if w.marks.Len() > 0 {
		w.marks.Set(nil)
		w.view.SetMarkers(nil, -1)
		w.analyse(true)
	}
}

// stepBy selects the next (+1) or previous (−1) step and brings it into view.
func (w *Window) stepBy(d int) {
	if w.cur == nil || w.cur.Report == nil || len(w.cur.Report.Steps) == 0 {
		return
	}
	n := len(w.cur.Report.Steps)
	i := w.selStep + d
	if w.selStep < 0 && d < 0 {
		i = n - 1
	}
	i = (i%n + n) % n
	w.results.table.Select(widget.TableCellID{Row: i + 1, Col: 0})
	w.selectStep(i)
}

func (w *Window) selectStep(i int) {
	if w.cur == nil || w.cur.Report == nil || i < 0 || i >= len(w.cur.Report.Steps) {
		return
	}
	w.selStep = i
	w.view.ShowTime(w.cur.Report.Steps[i].ResponseStartS)
}

// showCursor writes the readout for the point under the pointer: time,
// frequency, and the rpm that frequency means as the shaft line and as the
// blade-pass line.
func (w *Window) showCursor(t, y float64, mode plotMode, inside bool) {
	if !inside {
		w.readout.SetText(" ")
		return
	}
	if mode == modeRPM {
		w.readout.SetText(fmt.Sprintf("t %.3f s   %.0f rpm", t, y))
		return
	}
	blades := 0
	if w.cur != nil && w.cur.Report != nil {
		blades = w.cur.Report.Blades
	}
	txt := fmt.Sprintf("t %.3f s   f %.1f Hz   as shaft line %.0f rpm", t, y, analysis.RPM(y))
	if blades > 0 {
		txt += fmt.Sprintf("   as blade-pass line (%d blades) %.0f rpm", blades, analysis.RPM(shaftFromBladePass(y, blades)))
	}
	w.readout.SetText(txt)
}

// shaftFromBladePass inverts analysis.BladePassHz for one blade count.
func shaftFromBladePass(hz float64, blades int) float64 {
	return analysis.ShaftHzFromBladePass(hz, blades)
}

// showWarnings lists everything the analysis warned about.
func (w *Window) showWarnings() {
	if w.cur == nil || w.cur.Report == nil {
		return
	}
	var b strings.Builder
	for _, s := range w.cur.Report.Warnings {
		b.WriteString("• " + s + "\n")
	}
	for i, st := range w.cur.Report.Steps {
		for _, s := range st.Warnings {
			fmt.Fprintf(&b, "• step %d: %s\n", i+1, s)
		}
	}
	l := widget.NewLabel(b.String())
	l.Wrapping = fyne.TextWrapWord
	sc := container.NewVScroll(l)
	sc.SetMinSize(fyne.NewSize(560, 320))
	dialog.ShowCustom("Warnings — "+w.cur.name(), "Close", sc, w.win)
}

func (w *Window) copyResults() {
	if w.cur == nil || w.cur.Report == nil {
		return
	}
	w.app.Clipboard().SetContent(resultsText(w.cur.Report))
	w.status.SetText("Results copied to the clipboard.")
}

// Close saves the window size.
func (w *Window) Close() {
	w.analysisJob.stop()
	w.compare.job.stop()
	s := w.win.Canvas().Size()
	if s.Width > 0 && s.Height > 0 {
		w.prefs.SetFloat(prefWinW, float64(s.Width))
		w.prefs.SetFloat(prefWinH, float64(s.Height))
	}
}

// SavedSize returns the window size kept from the last run, or a default.
func SavedSize(p fyne.Preferences) fyne.Size {
	return fyne.NewSize(float32(p.FloatWithFallback(prefWinW, 1200)), float32(p.FloatWithFallback(prefWinH, 780)))
}

// wait blocks until background work has finished (tests).
func (w *Window) wait() {
	w.analysisJob.wait()
	w.compare.job.wait()
}
