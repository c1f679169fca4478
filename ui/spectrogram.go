package ui

import (
	"image"
	"image/color"
	"math"
	"strconv"
	"sync"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"whirlfit/analysis"
	"whirlfit/analysis/figure"
	"whirlfit/dsp"
)

// plotMode selects what the plot shows.
type plotMode int

const (
	// modeSpectrogram shows the spectrogram with the ridge and the fits
	// drawn at their blade-pass and shaft frequencies.
	modeSpectrogram plotMode = iota
	// modeRPM shows rpm over time: the track and the fitted curves.
	modeRPM
)

// Plot margins in device-independent units: room for the frequency labels
// on the left, the time axis (which is also the marker strip) below, and
// the colour bar on the right.
const (
	marginL      = 64
	marginR      = 72
	marginT      = 22
	marginB      = 40
	barWidth     = 14
	tickLen      = 5
	markerGrabPx = 6 // how close (units) a press must be to grab a marker
)

// Overlay colours, fixed so that they read on every colour of the map and
// on the light and dark backgrounds of the rpm view.
var (
	colRidge     = color.RGBA{R: 255, G: 255, B: 255, A: 255}
	colFit       = color.RGBA{R: 235, G: 60, B: 150, A: 255}
	colBand      = color.RGBA{R: 235, G: 60, B: 150, A: 60}
	colStep      = color.RGBA{R: 255, G: 200, B: 40, A: 255}
	colMarker    = color.NRGBA{R: 40, G: 200, B: 255, A: 255}
	colMarkerSel = color.NRGBA{R: 255, G: 120, B: 20, A: 255}
	colSelection = color.NRGBA{R: 255, G: 255, B: 255, A: 50}
	// colOutside shades the time outside the analysis interval; colEdge
	// draws the interval's two ends.
	colOutside = color.NRGBA{R: 0, G: 0, B: 0, A: 130}
	colEdge    = color.NRGBA{R: 255, G: 255, B: 255, A: 170}
)

// dimmed is a marker colour at the opacity used for markers outside the
// analysis interval (kept, but not fitted).
func dimmed(c color.NRGBA) color.NRGBA {
	const dimAlpha = 90 // of 255; reads as "switched off" on every map colour
	c.A = dimAlpha
	return c
}

// stepCurve is one fitted step drawn as rpm over time with its 95 % band.
// The window fills it from the core; the view only draws it.
type stepCurve struct {
	TimeS, RPM, Lo, Hi []float64
}

// SpectrogramView draws a recording's spectrogram (or its rpm over time)
// with axes, a colour bar, the tracked ridge, the fitted steps and the
// command-time markers, and turns pointer and key input into zoom, pan,
// selection and marker edits. The plot image is rendered only when the
// view, the data or the size change; moving the pointer redraws nothing
// but the readout.
type SpectrogramView struct {
	widget.BaseWidget

	// Callbacks, called on the UI goroutine. Any may be nil.
	OnCursor       func(tS, y float64, mode plotMode, inside bool) // y: Hz or rpm
	OnAddMarker    func(tS float64)
	OnMoveMarker   func(i int, tS float64, first, done bool)
	OnRemoveMarker func(i int)
	OnSelectMarker func(i int)
	OnViewChanged  func()
	// OnAnalyseSpan asks for the selected span to become the analysis
	// interval; OnAnalyseWhole for the whole recording again.
	OnAnalyseSpan  func(fromS, toS float64)
	OnAnalyseWhole func()

	mu       sync.Mutex // guards what draw reads
	spec     *dsp.Spectrogram
	track    *analysis.Track
	curves   []stepCurve
	steps    []analysis.StepResult
	blades   int
	mode     plotMode
	vp, full viewport
	gen      int // bumped when the data change

	markerTimes []float64
	selMarker   int
	// interval is the analysis interval (zero: none); durS the recording's
	// length, which closes an interval open to the end.
	interval span
	durS     float64

	img    *image.RGBA
	imgKey drawKey

	// Interaction state.
	mod       fyne.KeyModifier
	drag      dragKind
	dragIdx   int
	dragStart fyne.Position
	sel       *selection
}

type drawKey struct {
	w, h int
	vp   viewport
	gen  int
	mode plotMode
}

type dragKind int

const (
	dragNone dragKind = iota
	dragMarker
	dragSelect
	dragPan
)

// selection is a rectangle the user dragged on the plot, in data units.
type selection struct{ t0, t1, y0, y1 float64 }

var (
	_ fyne.Widget            = (*SpectrogramView)(nil)
	_ fyne.Tappable          = (*SpectrogramView)(nil)
	_ fyne.SecondaryTappable = (*SpectrogramView)(nil)
	_ fyne.Draggable         = (*SpectrogramView)(nil)
	_ fyne.Scrollable        = (*SpectrogramView)(nil)
	_ fyne.Focusable         = (*SpectrogramView)(nil)
	_ desktop.Hoverable      = (*SpectrogramView)(nil)
	_ desktop.Mouseable      = (*SpectrogramView)(nil)
	_ fyne.WidgetRenderer    = (*spectrogramRenderer)(nil)
)

// NewSpectrogramView returns an empty view; SetData gives it a recording.
func NewSpectrogramView() *SpectrogramView {
	v := &SpectrogramView{selMarker: -1}
	v.vp.View = figure.DefaultView(nil, 0, nil)
	v.vp.R0, v.vp.R1 = 0, 10000
	v.full = v.vp
	v.ExtendBaseWidget(v)
	return v
}

// SetData shows a new analysis. keepView keeps the current zoom (a refit
// of the same recording); otherwise the view resets to the default one.
func (v *SpectrogramView) SetData(rep *analysis.Report, curves []stepCurve, keepView bool) {
	v.mu.Lock()
	if rep == nil {
		v.spec, v.track, v.steps, v.curves, v.blades, v.durS = nil, nil, nil, nil, 0, 0
	} else {
		v.spec, v.track, v.steps, v.curves, v.blades, v.durS = rep.Spectrogram, rep.Track, rep.Steps, curves, rep.Blades, rep.DurationS
	}
	full := viewport{View: figure.DefaultView(v.spec, v.blades, v.track)}
	full.R0, full.R1 = rpmRange(v.track, v.curves)
	if v.spec != nil {
		// The full view reaches to the Nyquist frequency; the default view
		// is the part where the rotor lines are.
		full.F1 = v.spec.BinHz(float64(v.spec.Bins - 1))
	}
	def := full
	def.View = figure.DefaultView(v.spec, v.blades, v.track)
	keep := keepView && v.full.View.Valid() && v.gen > 0
	v.full = full
	if !keep {
		v.vp = def
	} else {
		v.vp.R0, v.vp.R1 = clampRange(v.vp.R0, v.vp.R1, full.R0, full.R1)
	}
	v.gen++
	v.mu.Unlock()
	v.Refresh()
}

// rpmRange is the rpm axis that holds the whole track and the fits.
func rpmRange(tr *analysis.Track, curves []stepCurve) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	if tr != nil {
		for i := range tr.TimeS {
			if r := tr.RPMAt(i); finite(r) {
				lo, hi = math.Min(lo, r), math.Max(hi, r)
			}
		}
	}
	// The fitted curves stay within the track's range; their bands can
	// reach far beyond it at a poorly located onset and do not set it.
	for _, c := range curves {
		for _, r := range c.RPM {
			if finite(r) {
				lo, hi = math.Min(lo, r), math.Max(hi, r)
			}
		}
	}
	if math.IsInf(lo, 0) {
		return 0, 10000
	}
	pad := math.Max(0.08*(hi-lo), minSpanR)
	return math.Max(0, lo-pad), hi + pad
}

// SetMarkers shows the command-time markers; sel is the selected one or -1.
func (v *SpectrogramView) SetMarkers(times []float64, sel int) {
	v.mu.Lock()
	v.markerTimes = append(v.markerTimes[:0], times...)
	v.selMarker = sel
	v.mu.Unlock()
	v.Refresh()
}

// SetInterval shows the analysis interval: the time outside it is shaded
// and the markers there are dimmed. The zero span shows none.
func (v *SpectrogramView) SetInterval(iv span) {
	v.mu.Lock()
	v.interval = iv
	v.mu.Unlock()
	v.Refresh()
}

// SelectedSpan returns the time span of the selection rectangle, limited
// to the recording; ok is false when there is no selection.
func (v *SpectrogramView) SelectedSpan() (fromS, toS float64, ok bool) {
	v.mu.Lock()
	defer v.mu.Unlock()
	if v.sel == nil {
		return 0, 0, false
	}
	fromS, toS = math.Max(v.sel.t0, 0), v.sel.t1
	if v.durS > 0 {
		toS = math.Min(toS, v.durS)
	}
	return fromS, toS, true
}

// outside reports whether time t lies outside the analysis interval. v.mu
// held.
func (v *SpectrogramView) outside(t float64) bool {
	iv := v.interval
	if iv.whole() {
		return false
	}
	return t < iv.FromS || (iv.ToS > 0 && t > iv.ToS)
}

// SetMode switches between the spectrogram and the rpm view.
func (v *SpectrogramView) SetMode(m plotMode) {
	v.mu.Lock()
	v.mode = m
	v.sel = nil
	v.mu.Unlock()
	v.Refresh()
}

// Mode returns what the view shows.
func (v *SpectrogramView) Mode() plotMode {
	v.mu.Lock()
	defer v.mu.Unlock()
	return v.mode
}

// SetLevels sets the colour scale, in dB.
func (v *SpectrogramView) SetLevels(lo, hi float64) {
	if hi <= lo {
		return
	}
	v.mu.Lock()
	v.vp.DBLo, v.vp.DBHi = lo, hi
	v.mu.Unlock()
	v.Refresh()
}

// Levels returns the colour scale, in dB.
func (v *SpectrogramView) Levels() (lo, hi float64) {
	v.mu.Lock()
	defer v.mu.Unlock()
	return v.vp.DBLo, v.vp.DBHi
}

// Viewport returns what is in view.
func (v *SpectrogramView) Viewport() viewport {
	v.mu.Lock()
	defer v.mu.Unlock()
	return v.vp
}

// ShowTime centres the time axis on t without changing the zoom.
func (v *SpectrogramView) ShowTime(t float64) {
	v.mu.Lock()
	span := v.vp.T1 - v.vp.T0
	v.vp.T0, v.vp.T1 = clampRange(t-span/2, t+span/2, v.full.T0, v.full.T1)
	v.mu.Unlock()
	v.viewChanged()
}

// Zoom scales the time range (and, when both is set, the vertical range)
// by factor about the centre of the view; factor < 1 zooms in.
func (v *SpectrogramView) Zoom(factor float64, both bool) {
	v.mu.Lock()
	c := (v.vp.T0 + v.vp.T1) / 2
	v.zoomAt(factor, c, math.NaN(), both)
	v.mu.Unlock()
	v.viewChanged()
}

// zoomAt zooms about time c and vertical value y (NaN = centre). v.mu held.
func (v *SpectrogramView) zoomAt(factor, c, y float64, both bool) {
	v.vp.T0, v.vp.T1 = zoomRange(v.vp.T0, v.vp.T1, c, factor, v.full.T0, v.full.T1, minSpanS)
	if !both {
		return
	}
	if v.mode == modeRPM {
		if math.IsNaN(y) {
			y = (v.vp.R0 + v.vp.R1) / 2
		}
		v.vp.R0, v.vp.R1 = zoomRange(v.vp.R0, v.vp.R1, y, factor, v.full.R0, v.full.R1, minSpanR)
		return
	}
	if math.IsNaN(y) {
		y = (v.vp.F0 + v.vp.F1) / 2
	}
	v.vp.F0, v.vp.F1 = zoomRange(v.vp.F0, v.vp.F1, y, factor, v.full.F0, v.full.F1, minSpanHz)
}

// Pan moves the view by the given fractions of its width and height.
func (v *SpectrogramView) Pan(fx, fy float64) {
	v.mu.Lock()
	d := fx * (v.vp.T1 - v.vp.T0)
	v.vp.T0, v.vp.T1 = panRange(v.vp.T0, v.vp.T1, d, v.full.T0, v.full.T1)
	if v.mode == modeRPM {
		d := fy * (v.vp.R1 - v.vp.R0)
		v.vp.R0, v.vp.R1 = panRange(v.vp.R0, v.vp.R1, d, v.full.R0, v.full.R1)
	} else {
		d := fy * (v.vp.F1 - v.vp.F0)
		v.vp.F0, v.vp.F1 = panRange(v.vp.F0, v.vp.F1, d, v.full.F0, v.full.F1)
	}
	v.mu.Unlock()
	v.viewChanged()
}

// ResetView returns to the default view (levels are kept).
func (v *SpectrogramView) ResetView() {
	v.mu.Lock()
	lo, hi := v.vp.DBLo, v.vp.DBHi
	v.vp.View = figure.DefaultView(v.spec, v.blades, v.track)
	v.vp.DBLo, v.vp.DBHi = lo, hi
	v.vp.R0, v.vp.R1 = v.full.R0, v.full.R1
	v.sel = nil
	v.mu.Unlock()
	v.viewChanged()
}

// ResetVertical shows the whole vertical range of the current mode,
// keeping the time range.
func (v *SpectrogramView) ResetVertical() {
	v.mu.Lock()
	def := figure.DefaultView(v.spec, v.blades, v.track)
	v.vp.F0, v.vp.F1 = def.F0, def.F1
	v.vp.R0, v.vp.R1 = v.full.R0, v.full.R1
	v.mu.Unlock()
	v.viewChanged()
}

// ZoomToSelection zooms to the rectangle last dragged; it reports whether
// there was one.
func (v *SpectrogramView) ZoomToSelection() bool {
	v.mu.Lock()
	s := v.sel
	v.sel = nil
	if s == nil || s.t1-s.t0 <= 0 {
		v.mu.Unlock()
		return false
	}
	v.vp.T0, v.vp.T1 = clampRange(s.t0, math.Max(s.t1, s.t0+minSpanS), v.full.T0, v.full.T1)
	if v.mode == modeRPM {
		v.vp.R0, v.vp.R1 = clampRange(s.y0, math.Max(s.y1, s.y0+minSpanR), v.full.R0, v.full.R1)
	} else {
		v.vp.F0, v.vp.F1 = clampRange(s.y0, math.Max(s.y1, s.y0+minSpanHz), v.full.F0, v.full.F1)
	}
	v.mu.Unlock()
	v.viewChanged()
	return true
}

// Select sets the selection rectangle in data units (for keyboard use and
// tests); y is Hz or rpm by mode.
func (v *SpectrogramView) Select(t0, t1, y0, y1 float64) {
	v.mu.Lock()
	v.sel = &selection{math.Min(t0, t1), math.Max(t0, t1), math.Min(y0, y1), math.Max(y0, y1)}
	v.mu.Unlock()
	v.Refresh()
}

func (v *SpectrogramView) viewChanged() {
	v.Refresh()
	if v.OnViewChanged != nil {
		v.OnViewChanged()
	}
}

// plotRect is the plot area inside the widget, in units.
func (v *SpectrogramView) plotRect() (pos fyne.Position, size fyne.Size) {
	s := v.Size()
	w := float32(math.Max(1, float64(s.Width-marginL-marginR)))
	h := float32(math.Max(1, float64(s.Height-marginT-marginB)))
	return fyne.NewPos(marginL, marginT), fyne.NewSize(w, h)
}

// dataAt converts a widget position to time and vertical value. v.mu held.
func (v *SpectrogramView) dataAt(p fyne.Position) (t, y float64) {
	pos, size := v.plotRect()
	fx := float64((p.X - pos.X) / size.Width)
	fy := float64((p.Y - pos.Y) / size.Height)
	t = v.vp.T0 + fx*(v.vp.T1-v.vp.T0)
	lo, hi := v.yRange()
	y = hi - fy*(hi-lo)
	return t, y
}

// xOf converts a time to a widget x position. v.mu held.
func (v *SpectrogramView) xOf(t float64) float32 {
	pos, size := v.plotRect()
	return pos.X + float32((t-v.vp.T0)/(v.vp.T1-v.vp.T0))*size.Width
}

// yOf converts a vertical value to a widget y position. v.mu held.
func (v *SpectrogramView) yOf(y float64) float32 {
	pos, size := v.plotRect()
	lo, hi := v.yRange()
	return pos.Y + float32((hi-y)/(hi-lo))*size.Height
}

// yRange is the vertical axis's range. v.mu held.
func (v *SpectrogramView) yRange() (lo, hi float64) {
	if v.mode == modeRPM {
		return v.vp.R0, v.vp.R1
	}
	return v.vp.F0, v.vp.F1
}

type region int

const (
	regionNone region = iota
	regionPlot
	regionTimeAxis
)

func (v *SpectrogramView) regionOf(p fyne.Position) region {
	pos, size := v.plotRect()
	if p.X < pos.X || p.X > pos.X+size.Width {
		return regionNone
	}
	switch {
	case p.Y >= pos.Y && p.Y <= pos.Y+size.Height:
		return regionPlot
	case p.Y > pos.Y+size.Height && p.Y <= v.Size().Height:
		return regionTimeAxis
	}
	return regionNone
}

// markerAt returns the marker within grab distance of x, or -1. v.mu held.
func (v *SpectrogramView) markerAt(x float32) int {
	best, bi := float32(markerGrabPx), -1
	for i, t := range v.markerTimes {
		if d := float32(math.Abs(float64(v.xOf(t) - x))); d <= best {
			best, bi = d, i
		}
	}
	return bi
}

// MouseDown records the modifiers for the tap that follows.
func (v *SpectrogramView) MouseDown(e *desktop.MouseEvent) { v.mod = e.Modifier }

// MouseUp is part of desktop.Mouseable.
func (v *SpectrogramView) MouseUp(*desktop.MouseEvent) {}

// Tapped places a marker when the tap is on the time axis, or on the plot
// with Shift, Ctrl or Cmd held; a tap near a marker selects it.
func (v *SpectrogramView) Tapped(e *fyne.PointEvent) {
	if c := fyne.CurrentApp().Driver().CanvasForObject(v); c != nil {
		c.Focus(v)
	}
	mod := v.mod
	v.mod = 0
	r := v.regionOf(e.Position)
	v.mu.Lock()
	i := v.markerAt(e.Position.X)
	t, _ := v.dataAt(e.Position)
	inTime := t >= v.full.T0 && t <= v.full.T1
	v.sel = nil
	v.mu.Unlock()
	switch {
	case r == regionNone:
		return
	case i >= 0:
		if v.OnSelectMarker != nil {
			v.OnSelectMarker(i)
		}
	case inTime && (r == regionTimeAxis || mod&(fyne.KeyModifierShift|fyne.KeyModifierControl|fyne.KeyModifierSuper) != 0):
		if v.OnAddMarker != nil {
			v.OnAddMarker(t)
		}
	default:
		if v.OnSelectMarker != nil {
			v.OnSelectMarker(-1)
		}
	}
	v.Refresh()
}

// TappedSecondary opens the context menu of contextItems.
func (v *SpectrogramView) TappedSecondary(e *fyne.PointEvent) {
	c := fyne.CurrentApp().Driver().CanvasForObject(v)
	if c == nil {
		return
	}
	widget.ShowPopUpMenuAtPosition(fyne.NewMenu("", v.contextItems(e.Position)...), c, e.AbsolutePosition)
}

// contextItems are the context menu's entries at p: remove the marker
// under the pointer (or add one there), zoom to the selection or analyse
// it, analyse the whole recording again, reset the view.
func (v *SpectrogramView) contextItems(p fyne.Position) []*fyne.MenuItem {
	v.mu.Lock()
	i := v.markerAt(p.X)
	t, _ := v.dataAt(p)
	hasSel := v.sel != nil
	hasInterval := !v.interval.whole()
	v.mu.Unlock()
	var items []*fyne.MenuItem
	if i >= 0 {
		items = append(items, fyne.NewMenuItem("Remove marker", func() {
			if v.OnRemoveMarker != nil {
				v.OnRemoveMarker(i)
			}
		}))
	} else if v.regionOf(p) != regionNone {
		items = append(items, fyne.NewMenuItem("Add command marker here", func() {
			if v.OnAddMarker != nil {
				v.OnAddMarker(t)
			}
		}))
	}
	if hasSel {
		items = append(items, fyne.NewMenuItem("Zoom to selection", func() { v.ZoomToSelection() }))
		if v.OnAnalyseSpan != nil {
			items = append(items, fyne.NewMenuItem("Analyse the selected span", func() {
				if t0, t1, ok := v.SelectedSpan(); ok {
					v.OnAnalyseSpan(t0, t1)
				}
			}))
		}
	}
	if hasInterval && v.OnAnalyseWhole != nil {
		items = append(items, fyne.NewMenuItem("Analyse the whole recording", v.OnAnalyseWhole))
	}
	return append(items, fyne.NewMenuItem("Reset view", v.ResetView))
}

// Dragged moves a marker (when the drag starts on one), pans (on the time
// axis) or draws a selection rectangle (on the plot).
func (v *SpectrogramView) Dragged(e *fyne.DragEvent) {
	v.mu.Lock()
	if v.drag == dragNone {
		start := e.Position.Subtract(e.Dragged)
		v.dragStart = start
		if i := v.markerAt(start.X); i >= 0 {
			v.drag, v.dragIdx = dragMarker, i
		} else if v.regionOf(start) == regionTimeAxis {
			v.drag = dragPan
		} else {
			v.drag = dragSelect
		}
		v.mu.Unlock()
		if v.drag == dragMarker {
			v.moveMarker(e.Position, true, false)
		}
		v.mu.Lock()
	}
	switch v.drag {
	case dragMarker:
		v.mu.Unlock()
		v.moveMarker(e.Position, false, false)
		return
	case dragPan:
		_, size := v.plotRect()
		d := -float64(e.Dragged.DX/size.Width) * (v.vp.T1 - v.vp.T0)
		v.vp.T0, v.vp.T1 = panRange(v.vp.T0, v.vp.T1, d, v.full.T0, v.full.T1)
		v.mu.Unlock()
		v.viewChanged()
		return
	case dragSelect:
		t0, y0 := v.dataAt(v.dragStart)
		t1, y1 := v.dataAt(e.Position)
		v.sel = &selection{math.Min(t0, t1), math.Max(t0, t1), math.Min(y0, y1), math.Max(y0, y1)}
	}
	v.mu.Unlock()
	v.Refresh()
}

func (v *SpectrogramView) moveMarker(p fyne.Position, first, done bool) {
	v.mu.Lock()
	t, _ := v.dataAt(p)
	t = math.Min(math.Max(t, v.full.T0), v.full.T1)
	i := v.dragIdx
	v.mu.Unlock()
	if v.OnMoveMarker != nil {
		v.OnMoveMarker(i, t, first, done)
	}
}

// DragEnd finishes a marker move (which then refits) or a selection.
func (v *SpectrogramView) DragEnd() {
	v.mu.Lock()
	kind := v.drag
	v.drag = dragNone
	v.mu.Unlock()
	if kind == dragMarker && v.OnMoveMarker != nil {
		v.mu.Lock()
		i := v.dragIdx
		t := math.NaN()
		if i >= 0 && i < len(v.markerTimes) {
			t = v.markerTimes[i]
		}
		v.mu.Unlock()
		if !math.IsNaN(t) {
			v.OnMoveMarker(i, t, false, true)
		}
	}
	v.Refresh()
}

// Scrolled zooms the time axis about the pointer; a horizontal scroll pans.
func (v *SpectrogramView) Scrolled(e *fyne.ScrollEvent) {
	v.mu.Lock()
	if e.Scrolled.DY != 0 {
		t, y := v.dataAt(e.Position)
		f := math.Pow(zoomStep, -float64(e.Scrolled.DY)/10)
		v.zoomAt(f, t, y, false)
	}
	if e.Scrolled.DX != 0 {
		_, size := v.plotRect()
		d := -float64(e.Scrolled.DX/size.Width) * (v.vp.T1 - v.vp.T0)
		v.vp.T0, v.vp.T1 = panRange(v.vp.T0, v.vp.T1, d, v.full.T0, v.full.T1)
	}
	v.mu.Unlock()
	v.viewChanged()
}

// MouseIn is part of desktop.Hoverable.
func (v *SpectrogramView) MouseIn(e *desktop.MouseEvent) { v.MouseMoved(e) }

// MouseMoved reports the data under the pointer through OnCursor.
func (v *SpectrogramView) MouseMoved(e *desktop.MouseEvent) {
	if v.OnCursor == nil {
		return
	}
	v.mu.Lock()
	t, y := v.dataAt(e.Position)
	mode := v.mode
	v.mu.Unlock()
	v.OnCursor(t, y, mode, v.regionOf(e.Position) == regionPlot)
}

// MouseOut clears the readout.
func (v *SpectrogramView) MouseOut() {
	if v.OnCursor != nil {
		v.OnCursor(0, 0, v.Mode(), false)
	}
}

// FocusGained is part of fyne.Focusable.
func (v *SpectrogramView) FocusGained() {}

// FocusLost is part of fyne.Focusable.
func (v *SpectrogramView) FocusLost() {}

// TypedRune zooms with + and -, and resets with 0.
func (v *SpectrogramView) TypedRune(r rune) {
	switch r {
	case '+', '=':
		v.Zoom(1/zoomStep, false)
	case '-', '_':
		v.Zoom(zoomStep, false)
	case '0':
		v.ResetView()
	case 'z':
		v.ZoomToSelection()
	}
}

// TypedKey pans with the arrow keys, zooms to the selection with Return
// and removes the selected marker with Delete or Backspace.
func (v *SpectrogramView) TypedKey(e *fyne.KeyEvent) {
	const panStep = 0.2 // of the view per key press
	switch e.Name {
	case fyne.KeyLeft:
		v.Pan(-panStep, 0)
	case fyne.KeyRight:
		v.Pan(panStep, 0)
	case fyne.KeyUp:
		v.Pan(0, panStep)
	case fyne.KeyDown:
		v.Pan(0, -panStep)
	case fyne.KeyPageUp:
		v.Zoom(1/zoomStep, true)
	case fyne.KeyPageDown:
		v.Zoom(zoomStep, true)
	case fyne.KeyReturn, fyne.KeyEnter:
		v.ZoomToSelection()
	case fyne.KeyDelete, fyne.KeyBackspace:
		v.mu.Lock()
		i := v.selMarker
		v.mu.Unlock()
		if i >= 0 && v.OnRemoveMarker != nil {
			v.OnRemoveMarker(i)
		}
	}
}

// CreateRenderer is part of fyne.Widget.
func (v *SpectrogramView) CreateRenderer() fyne.WidgetRenderer {
	r := &spectrogramRenderer{v: v}
	r.plot = canvas.NewRaster(v.draw)
	r.plot.ScaleMode = canvas.ImageScalePixels
	r.bar = canvas.NewRaster(v.drawBar)
	r.bar.ScaleMode = canvas.ImageScalePixels
	r.frame = canvas.NewRectangle(color.Transparent)
	r.frame.StrokeWidth = 1
	r.strip = canvas.NewRectangle(color.Transparent)
	r.selRect = canvas.NewRectangle(colSelection)
	r.selRect.StrokeColor = color.NRGBA{R: 255, G: 255, B: 255, A: 200}
	r.selRect.StrokeWidth = 1
	r.shadeL = canvas.NewRectangle(colOutside)
	r.shadeR = canvas.NewRectangle(colOutside)
	r.Refresh()
	return r
}

// draw renders the plot image at w×h device pixels, reusing the last image
// when nothing it depends on changed.
func (v *SpectrogramView) draw(w, h int) image.Image {
	v.mu.Lock()
	defer v.mu.Unlock()
	key := drawKey{w: w, h: h, vp: v.vp, gen: v.gen, mode: v.mode}
	if v.img != nil && key == v.imgKey {
		return v.img
	}
	if v.img == nil || v.img.Bounds().Dx() != w || v.img.Bounds().Dy() != h {
		v.img = image.NewRGBA(image.Rect(0, 0, w, h))
	}
	v.imgKey = key
	c := canvasPainter{img: v.img, vp: v.vp, mode: v.mode}
	if v.mode == modeSpectrogram {
		figure.RenderSpectrogram(v.img, v.spec, v.vp.View)
	} else {
		bg := toRGBA(theme.Color(theme.ColorNameInputBackground))
		bg.A = 255
		fillImage(v.img, bg)
		c.grid(toRGBA(theme.Color(theme.ColorNameSeparator)))
	}
	c.drawOverlays(v.track, v.curves, v.steps, v.blades)
	return v.img
}

// drawBar renders the colour bar, hottest at the top.
func (v *SpectrogramView) drawBar(w, h int) image.Image {
	img := image.NewRGBA(image.Rect(0, 0, w, h))
	for y := 0; y < h; y++ {
		c := figure.Whirl.At(1 - float64(y)/float64(max(h-1, 1)))
		for x := 0; x < w; x++ {
			img.SetRGBA(x, y, c)
		}
	}
	return img
}

type spectrogramRenderer struct {
	v       *SpectrogramView
	plot    *canvas.Raster
	bar     *canvas.Raster
	frame   *canvas.Rectangle
	strip   *canvas.Rectangle
	selRect *canvas.Rectangle
	// shadeL and shadeR cover the plot left and right of the interval.
	shadeL, shadeR *canvas.Rectangle
	objects        []fyne.CanvasObject
	shown          drawKey // what the plot image last showed (size aside)
}

func (r *spectrogramRenderer) Destroy() {}

func (r *spectrogramRenderer) MinSize() fyne.Size {
	return fyne.NewSize(marginL+marginR+200, marginT+marginB+120)
}

func (r *spectrogramRenderer) Objects() []fyne.CanvasObject { return r.objects }

func (r *spectrogramRenderer) Layout(fyne.Size) { r.rebuild() }

// Refresh rebuilds the axes and markers; the plot image is refreshed (and
// its texture uploaded again) only when what it shows changed, so that
// moving a marker or a selection costs no image work.
func (r *spectrogramRenderer) Refresh() {
	r.rebuild()
	v := r.v
	v.mu.Lock()
	key := drawKey{vp: v.vp, gen: v.gen, mode: v.mode}
	v.mu.Unlock()
	if key != r.shown {
		r.shown = key
		canvas.Refresh(r.plot)
	}
}

// rebuild lays out the plot and rebuilds the axes, ticks, labels and
// markers for the current view.
func (r *spectrogramRenderer) rebuild() {
	v := r.v
	pos, size := v.plotRect()
	fg := theme.Color(theme.ColorNameForeground)
	small := theme.CaptionTextSize()

	r.plot.Move(pos)
	r.plot.Resize(size)
	r.frame.StrokeColor = theme.Color(theme.ColorNameSeparator)
	r.frame.Move(pos)
	r.frame.Resize(size)
	r.strip.FillColor = theme.Color(theme.ColorNameInputBackground)
	r.strip.Move(fyne.NewPos(pos.X, pos.Y+size.Height))
	r.strip.Resize(fyne.NewSize(size.Width, tickLen+small+4))
	r.bar.Move(fyne.NewPos(pos.X+size.Width+8, pos.Y))
	r.bar.Resize(fyne.NewSize(barWidth, size.Height))

	objs := []fyne.CanvasObject{r.strip, r.plot, r.frame, r.bar}

	v.mu.Lock()
	vp, mode := v.vp, v.mode
	marks := append([]float64(nil), v.markerTimes...)
	selM := v.selMarker
	sel := v.sel
	ylo, yhi := v.yRange()
	xOf, yOf := v.xOf, v.yOf
	hasData := v.spec != nil
	iv := v.interval
	if !iv.whole() && iv.ToS == 0 {
		iv.ToS = v.durS
	}
	outside := make([]bool, len(marks))
	for i, t := range marks {
		outside[i] = v.outside(t)
	}
	// The analysis interval: shade what lies outside it, within the plot.
	if !iv.whole() && vp.T1 > vp.T0 {
		left, right := pos.X, pos.X+size.Width
		x0 := min(max(xOf(iv.FromS), left), right)
		x1 := min(max(xOf(iv.ToS), left), right)
		if x0 > left {
			r.shadeL.Move(pos)
			r.shadeL.Resize(fyne.NewSize(x0-left, size.Height))
			objs = append(objs, r.shadeL, vline(x0, pos.Y, pos.Y+size.Height, colEdge))
		}
		if x1 < right {
			r.shadeR.Move(fyne.NewPos(x1, pos.Y))
			r.shadeR.Resize(fyne.NewSize(right-x1, size.Height))
			objs = append(objs, r.shadeR, vline(x1, pos.Y, pos.Y+size.Height, colEdge))
		}
	}
	// Time axis.
	if vp.T1 > vp.T0 {
		for _, tk := range ticks(vp.T0, vp.T1) {
			x := xOf(tk.Value)
			if x < pos.X-0.5 || x > pos.X+size.Width+0.5 {
				continue
			}
			l := tickLen
			if tk.Label == "" {
				l = tickLen / 2
			}
			objs = append(objs, vline(x, pos.Y+size.Height, pos.Y+size.Height+float32(l), fg))
			if tk.Label != "" {
				objs = append(objs, label(tk.Label, small, fg, x, pos.Y+size.Height+tickLen+1, alignCentre))
			}
		}
	}
	// Vertical axis.
	if yhi > ylo {
		for _, tk := range ticks(ylo, yhi) {
			y := yOf(tk.Value)
			if y < pos.Y-0.5 || y > pos.Y+size.Height+0.5 {
				continue
			}
			l := float32(tickLen)
			if tk.Label == "" {
				l = tickLen / 2
			}
			objs = append(objs, hline(pos.X-l, pos.X, y, fg))
			if tk.Label != "" {
				objs = append(objs, label(tk.Label, small, fg, pos.X-tickLen-2, y-small*0.7, alignRight))
			}
		}
	}
	// Markers.
	for i, t := range marks {
		x := xOf(t)
		if x < pos.X || x > pos.X+size.Width {
			continue
		}
		c, wdt := colMarker, float32(1.5)
		if i == selM {
			c, wdt = colMarkerSel, 2.5
		}
		if outside[i] {
			c = dimmed(c)
		}
		ln := canvas.NewLine(c)
		ln.StrokeWidth = wdt
		ln.Position1 = fyne.NewPos(x, pos.Y)
		ln.Position2 = fyne.NewPos(x, pos.Y+size.Height+tickLen+small+4)
		objs = append(objs, ln)
	}
	if sel != nil {
		x0, x1 := xOf(sel.t0), xOf(sel.t1)
		y0, y1 := yOf(sel.y1), yOf(sel.y0)
		r.selRect.Move(fyne.NewPos(x0, y0))
		r.selRect.Resize(fyne.NewSize(x1-x0, y1-y0))
		objs = append(objs, r.selRect)
	}
	v.mu.Unlock()

	// Axis titles and the colour bar's scale.
	tTitle := label("time (s)", small, fg, pos.X+size.Width/2, pos.Y+size.Height+tickLen+small+6, alignCentre)
	yName := "frequency (Hz)"
	if mode == modeRPM {
		yName = "rpm"
	}
	objs = append(objs, tTitle, label(yName, small, fg, 4, 2, alignLeft))
	if mode == modeSpectrogram && hasData {
		bx := pos.X + size.Width + 8 + barWidth + 3
		objs = append(objs,
			label(formatDB(vp.DBHi), small, fg, bx, pos.Y-2, alignLeft),
			label(formatDB(vp.DBLo), small, fg, bx, pos.Y+size.Height-small-4, alignLeft),
			label("dB", small, fg, bx, pos.Y+size.Height/2-small/2, alignLeft))
	} else {
		r.bar.Hide()
	}
	if mode == modeSpectrogram {
		r.bar.Show()
	}
	r.objects = objs
}

// ticks returns gonum/plot's default ticks for [lo, hi] with the major
// labels written with as few decimals as their values need.
func ticks(lo, hi float64) []plot.Tick {
	if !finite(lo) || !finite(hi) || !(hi > lo) {
		return nil
	}
	tks := (plot.DefaultTicks{}).Ticks(lo, hi)
	var majors []float64
	for _, tk := range tks {
		if tk.Label != "" {
			majors = append(majors, tk.Value)
		}
	}
	// The fewest decimals (up to 6) that write every major value exactly.
	dec := 0
	for ; dec < 6; dec++ {
		exact := true
		for _, m := range majors {
			r, _ := strconv.ParseFloat(strconv.FormatFloat(m, 'f', dec, 64), 64)
			if math.Abs(r-m) > 1e-9*math.Max(1, math.Abs(m)) {
				exact = false
			}
		}
		if exact {
			break
		}
	}
	for i := range tks {
		if tks[i].Label != "" {
			tks[i].Label = strconv.FormatFloat(tks[i].Value, 'f', dec, 64)
		}
	}
	return tks
}

type textAlign int

const (
	alignLeft textAlign = iota
	alignCentre
	alignRight
)

func label(s string, sz float32, c color.Color, x, y float32, a textAlign) *canvas.Text {
	t := canvas.NewText(s, c)
	t.TextSize = sz
	m := t.MinSize()
	switch a {
	case alignCentre:
		x -= m.Width / 2
	case alignRight:
		x -= m.Width
	}
	t.Move(fyne.NewPos(x, y))
	t.Resize(m)
	return t
}

func vline(x, y0, y1 float32, c color.Color) *canvas.Line {
	l := canvas.NewLine(c)
	l.StrokeWidth = 1
	l.Position1, l.Position2 = fyne.NewPos(x, y0), fyne.NewPos(x, y1)
	return l
}

func hline(x0, x1, y float32, c color.Color) *canvas.Line {
	l := canvas.NewLine(c)
	l.StrokeWidth = 1
	l.Position1, l.Position2 = fyne.NewPos(x0, y), fyne.NewPos(x1, y)
	return l
}
