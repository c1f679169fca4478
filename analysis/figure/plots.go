package figure

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"whirlfit/analysis"
	"whirlfit/analysis/compare"
	"whirlfit/dsp"
)

// Ridge selects which tracked lines the spectrogram figure draws.
type Ridge int

const (
	// RidgeBoth draws the blade-pass line and the shaft line.
	RidgeBoth Ridge = iota
	// RidgeBladePass draws only the blade-pass line.
	RidgeBladePass
	// RidgeShaft draws only the shaft line.
	RidgeShaft
	// RidgeNone draws no tracked line.
	RidgeNone
)

// Options tunes a figure; the zero value means defaults.
type Options struct {
	// Style is nil for DefaultStyle.
	Style *Style
	// View is the spectrogram's visible part and colour scale; nil
	// chooses DefaultView.
	View *View
	// Ridge selects the tracked lines drawn over the spectrogram.
	Ridge Ridge
	// KHz shows frequency in kHz instead of Hz; by default kHz is used when
	// the view reaches 2 kHz.
	KHz *bool
	// Title replaces the first line of the title block (the file name).
	Title string
	// NoFit leaves out the fitted models and bands.
	NoFit bool
	// FromCommand measures comparison time from the command; false (the
	// default) from the response start of each step. Steps without a
	// command time always use the response start.
	FromCommand bool
}

func (o *Options) style() *Style {
	if o.Style != nil {
		return o.Style
	}
	return &DefaultStyle
}

// TitleBlock returns the lines of a report's title: the file, the blade
// count, and τ and θ with their intervals for each step (at most four,
// then a count of the rest).
func TitleBlock(rep *analysis.Report, first string) string {
	if first == "" {
		first = filepath.Base(rep.File)
		if rep.File == "" {
			first = "recording"
		}
	}
	lines := []string{first}
	head := fmt.Sprintf("%d blades", rep.Blades)
	if len(rep.Steps) == 0 {
		head += " · no step found"
	}
	lines = append(lines, head)
	const most = 4
	for i, s := range rep.Steps {
		if i == most {
			lines = append(lines, fmt.Sprintf("… and %d more steps", len(rep.Steps)-most))
			break
		}
		at := s.ResponseStartS
		if s.CommandS != nil {
			at = *s.CommandS
		}
		l := fmt.Sprintf("%s at %.2f s: τ = %s", s.Direction, at, pm(s.TauS, 1e3, "ms"))
		if s.DeadTimeS != nil {
			l += ", θ = " + pm(*s.DeadTimeS, 1e3, "ms")
		} else {
			l += ", θ needs the command time"
		}
		lines = append(lines, l)
	}
	return strings.Join(lines, "\n")
}

// pm formats an estimate as "v ± u unit" the way the tables do
// (compare.FormatPM).
func pm(e analysis.Estimate, scale float64, unit string) string {
	return compare.FormatPM(e, scale, unit)
}

// SpectrogramPlot builds the spectrogram figure of a report: the
// magnitudes in dB (colour bar at the right), the tracked blade-pass and
// shaft lines, each step's fitted model as the track sees it (on the
// blade-pass line) with its 95 % band, step markers at the command times
// (or response starts), and the title block.
func SpectrogramPlot(rep *analysis.Report, opt Options) (*plot.Plot, error) {
	return spectrogramPlot(rep, opt, nil)
}

// layers records the data a builder drew, for tests that compare a figure
// with the analysis numbers.
type layers struct {
	lines   []plotter.XYs // ridge segments, shaft segments
	seen    []plotter.XYs // fitted curves as the track sees them
	truth   []plotter.XYs
	band    []plotter.XYs // band polygons
	markers []float64
}

func spectrogramPlot(rep *analysis.Report, opt Options, ly *layers) (*plot.Plot, error) {
	s := rep.Spectrogram
	if s == nil || s.Frames == 0 {
		return nil, fmt.Errorf("figure: %s: no spectrogram in the report", rep.File)
	}
	st := opt.style()
	v := DefaultView(s, rep.Blades, rep.Track)
	if opt.View != nil {
		v = *opt.View
	}
	if !v.Valid() {
		return nil, fmt.Errorf("figure: empty view %+v", v)
	}
	khz := v.F1 >= 2000
	if opt.KHz != nil {
		khz = *opt.KHz
	}
	fs, unit := 1.0, "Hz"
	if khz {
		fs, unit = 1e-3, "kHz"
	}
	p := st.newPlot()
	p.Title.Text = TitleBlock(rep, opt.Title)
	p.X.Label.Text = "time (s)"
	p.Y.Label.Text = fmt.Sprintf("frequency (%s)", unit)
	p.X.Min, p.X.Max = v.T0, v.T1
	p.Y.Min, p.Y.Max = v.F0*fs, v.F1*fs
	p.Add(&specImage{s: s, v: v, fscale: fs})
	p.Add(&colorBar{lo: v.DBLo, hi: v.DBHi, label: "dBFS"})

	blades := max(rep.Blades, 1)
	if tr := rep.Track; tr != nil && opt.Ridge != RidgeNone {
		if opt.Ridge == RidgeBoth || opt.Ridge == RidgeShaft {
			addSegments(p, tr, func(i int) float64 { return tr.ShaftHz[i] * fs }, st.line(st.Shaft, st.LineWidth*0.6, true), v, ly)
		}
		if opt.Ridge == RidgeBoth || opt.Ridge == RidgeBladePass {
			addSegments(p, tr, func(i int) float64 { return tr.BladePassHzAt(i) * fs }, st.line(st.Ridge, st.LineWidth*0.6, true), v, ly)
		}
	}
	toHz := func(rpm float64) float64 { return analysis.BladePassHz(analysis.ShaftHz(rpm), blades) * fs }
	for i := range rep.Steps {
		c := curveOf(rep, i)
		addMarker(p, c, v.F0*fs, v.F1*fs, st.line(st.Marker, st.MarkerWidth, true), ly)
		if !opt.NoFit {
			if err := addFit(p, c, toHz, st.Fit, st.Band, st.LineWidth, ly); err != nil {
				return nil, err
			}
		}
	}
	return p, nil
}

// RPMPlot builds rpm against time: the track's samples, each step's model
// as the track sees it (solid) and the true fitted model (dashed) with its
// 95 % band, step markers and the title block. With step > 0 only that
// step's stretch is shown (a panel of a per-step figure).
func RPMPlot(rep *analysis.Report, opt Options) (*plot.Plot, error) {
	return rpmPlot(rep, opt, 0, nil)
}

// RPMStepPlots returns one RPMPlot panel per step (empty when there are
// none), for SaveGrid.
func RPMStepPlots(rep *analysis.Report, opt Options) ([]*plot.Plot, error) {
	var ps []*plot.Plot
	for i := range rep.Steps {
		p, err := rpmPlot(rep, opt, i+1, nil)
		if err != nil {
			return nil, err
		}
		ps = append(ps, p)
	}
	return ps, nil
}

func rpmPlot(rep *analysis.Report, opt Options, step int, ly *layers) (*plot.Plot, error) {
	tr := rep.Track
	if tr == nil || tr.Len() == 0 {
		return nil, fmt.Errorf("figure: %s: no rpm track in the report", rep.File)
	}
	st := opt.style()
	p := st.newPlot()
	p.X.Label.Text = "time (s)"
	p.Y.Label.Text = "speed (rpm)"
	from, to := tr.TimeS[0], tr.TimeS[tr.Len()-1]
	if step > 0 {
		c := curveOf(rep, step-1)
		from, to = c.FromS, c.ToS
		s := rep.Steps[step-1]
		p.Title.Text = fmt.Sprintf("step %d (%s): τ = %s", step, s.Direction, pm(s.TauS, 1e3, "ms"))
		if s.DeadTimeS != nil {
			p.Title.Text += ", θ = " + pm(*s.DeadTimeS, 1e3, "ms")
		}
	} else {
		p.Title.Text = TitleBlock(rep, opt.Title)
	}
	var pts plotter.XYs
	for i := range tr.TimeS {
		if tr.Valid(i) && tr.TimeS[i] >= from && tr.TimeS[i] <= to {
			pts = append(pts, plotter.XY{X: tr.TimeS[i], Y: tr.RPMAt(i)})
		}
	}
	if len(pts) > 0 {
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: st.TrackPoints, Radius: 1.2, Shape: draw.CircleGlyph{}}
		p.Add(sc)
		p.Legend.Add("track", sc)
	}
	p.X.Min, p.X.Max = from, to
	ident := func(rpm float64) float64 { return rpm }
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, q := range pts {
		lo, hi = math.Min(lo, q.Y), math.Max(hi, q.Y)
	}
	for i := range rep.Steps {
		if step > 0 && i != step-1 {
			continue
		}
		c := curveOf(rep, i)
		if c.ToS < from || c.FromS > to {
			continue
		}
		if !opt.NoFit {
			if err := addFit(p, c, ident, st.PanelFit, st.PanelBand, st.LineWidth, ly); err != nil {
				return nil, err
			}
			if i == max(step-1, 0) {
				l, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}})
				l.LineStyle = st.line(st.PanelFit, st.LineWidth, false)
				p.Legend.Add("fit as tracked", l)
				lt, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}})
				lt.LineStyle = st.line(st.PanelFit, st.LineWidth*0.6, false)
				lt.LineStyle.Dashes = []vg.Length{2, 2}
				p.Legend.Add("fitted model", lt)
				pb, _ := plotter.NewPolygon(plotter.XYs{{X: 0, Y: 0}})
				pb.Color, pb.LineStyle.Width = st.PanelBand, 0
				p.Legend.Add("95 % band", pb)
			}
		}
		if !math.IsInf(lo, 0) {
			addMarker(p, c, lo-0.05*(hi-lo), hi+0.05*(hi-lo), st.line(st.PanelMarker, st.MarkerWidth, true), ly)
		}
	}
	// The first plateau sits low or high; the legend goes top left where
	// an up step's low plateau leaves room, unless the first step is down.
	p.Legend.Top = len(rep.Steps) == 0 || rep.Steps[max(step-1, 0)].Direction == analysis.Up
	p.Legend.Left = true
	p.Legend.XOffs, p.Legend.YOffs = st.TextSize, -st.TextSize/2
	if !p.Legend.Top {
		p.Legend.YOffs = st.TextSize / 2
	}
	return p, nil
}

// addSegments draws y(i) over the track's valid stretches as lines, each
// gap (no motor) breaking the line, within the view's time range.
func addSegments(p *plot.Plot, tr *analysis.Track, y func(i int) float64, ls draw.LineStyle, v View, ly *layers) {
	var seg plotter.XYs
	flush := func() {
		if len(seg) > 1 {
			l, err := plotter.NewLine(seg)
			if err == nil {
				l.LineStyle = ls
				p.Add(l)
				if ly != nil {
					ly.lines = append(ly.lines, seg)
				}
			}
		}
		seg = nil
	}
	for i := range tr.TimeS {
		t := tr.TimeS[i]
		yi := y(i)
		if !tr.Valid(i) || t < v.T0 || t > v.T1 || math.IsNaN(yi) || math.IsInf(yi, 0) {
			flush()
			continue
		}
		seg = append(seg, plotter.XY{X: t, Y: yi})
	}
	flush()
}

// addMarker draws a vertical line at the command time (or at the response
// start when there is none) from y0 to y1.
func addMarker(p *plot.Plot, c curve, y0, y1 float64, ls draw.LineStyle, ly *layers) {
	t := c.CommandS
	if math.IsNaN(t) {
		t = c.OnsetS
	}
	if ly != nil {
		ly.markers = append(ly.markers, t)
	}
	l, err := plotter.NewLine(plotter.XYs{{X: t, Y: y0}, {X: t, Y: y1}})
	if err != nil {
		return
	}
	l.LineStyle = ls
	p.Add(l)
}

// fitSamples is the number of points along a drawn fit.
const fitSamples = 240

// addFit draws a step's band (filled), its seen model (solid) and its true
// model (dashed, thinner) with y = conv(rpm).
func addFit(p *plot.Plot, c curve, conv func(rpm float64) float64, line, band color.Color, width vg.Length, ly *layers) error {
	if !(c.ToS > c.FromS) {
		return nil
	}
	ts := sampleTimes(c.FromS, c.ToS, fitSamples)
	lo, hi := c.Band(ts)
	poly := make(plotter.XYs, 0, 2*len(ts))
	for i, t := range ts {
		if finite(lo[i]) {
			poly = append(poly, plotter.XY{X: t, Y: conv(lo[i])})
		}
	}
	for i := len(ts) - 1; i >= 0; i-- {
		if finite(hi[i]) {
			poly = append(poly, plotter.XY{X: ts[i], Y: conv(hi[i])})
		}
	}
	if len(poly) > 2 {
		pg, err := plotter.NewPolygon(poly)
		if err != nil {
			return err
		}
		pg.Color = band
		pg.LineStyle.Width = 0
		p.Add(pg)
		if ly != nil {
			ly.band = append(ly.band, poly)
		}
	}
	seen := make(plotter.XYs, len(ts))
	truth := make(plotter.XYs, len(ts))
	for i, t := range ts {
		seen[i] = plotter.XY{X: t, Y: conv(c.Seen(t))}
		truth[i] = plotter.XY{X: t, Y: conv(c.Model(t))}
	}
	if ly != nil {
		ly.seen = append(ly.seen, seen)
		ly.truth = append(ly.truth, truth)
	}
	for k, xy := range []plotter.XYs{truth, seen} {
		l, err := plotter.NewLine(xy)
		if err != nil {
			return fmt.Errorf("figure: fitted curve: %w", err)
		}
		l.LineStyle = draw.LineStyle{Color: line, Width: width}
		if k == 0 {
			l.LineStyle.Width = width * 0.6
			l.LineStyle.Dashes = []vg.Length{2, 2}
		}
		p.Add(l)
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// specImage draws the spectrogram view at the pixel size of the data area
// it is given (via RenderSpectrogram), so bins stay crisp at any output
// size. Vector outputs (SVG, PDF) get an image of 2 pixels per point.
type specImage struct {
	s      *dsp.Spectrogram
	v      View
	fscale float64
}

// rasterDPI is the image resolution used for vector outputs.
const rasterDPI = 144

func (si *specImage) Plot(c draw.Canvas, p *plot.Plot) {
	dpi := float64(rasterDPI)
	if d, ok := c.Canvas.(interface{ DPI() float64 }); ok {
		dpi = d.DPI()
	}
	// The axes' range may differ from the view when the caller changed
	// them: map the axes' range.
	v := si.v
	v.T0, v.T1 = p.X.Min, p.X.Max
	v.F0, v.F1 = p.Y.Min/si.fscale, p.Y.Max/si.fscale
	sz := c.Size()
	w := max(1, int(math.Round(sz.X.Points()*dpi/72)))
	h := max(1, int(math.Round(sz.Y.Points()*dpi/72)))
	img := image.NewRGBA(image.Rect(0, 0, w, h))
	RenderSpectrogram(img, si.s, v)
	c.DrawImage(c.Rectangle, img)
}

func (si *specImage) DataRange() (xmin, xmax, ymin, ymax float64) {
	return si.v.T0, si.v.T1, si.v.F0 * si.fscale, si.v.F1 * si.fscale
}
