package figure

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"whirlfit/analysis"
)

// CompareStep selects the matched step ComparePlot overlays: the Order-th
// (1-based) step of Direction in every file (steps are matched by
// direction and order, as in package compare). The zero value is the
// first up step.
type CompareStep struct {
	Direction analysis.Direction
	Order     int
}

// normalised returns the step's curve rescaled to 0 → 1 and the time
// origin: the command time when fromCommand is set and known, else the
// response start.
func normalised(c curve, fromCommand bool) (t0 float64, norm func(rpm float64) float64) {
	t0 = c.OnsetS
	if fromCommand && !math.IsNaN(c.CommandS) {
		t0 = c.CommandS
	}
	r0, d := c.R0, c.Delta
	if d == 0 {
		d = 1
	}
	return t0, func(rpm float64) float64 { return (rpm - r0) / d }
}

// ComparePlot overlays the normalised responses (0 before the step, 1
// after it) of one matched step from several reports: each file's track
// samples, its fitted model as the track sees it, and its 95 % band, time
// measured from the command (opt.FromCommand) or from the response start.
// labels name the files (A, B, … when nil).
func ComparePlot(reps []*analysis.Report, labels []string, opt Options) (*plot.Plot, error) {
	return ComparePlotStep(reps, labels, CompareStep{}, opt)
}

// ComparePlotStep is ComparePlot for a chosen matched step.
func ComparePlotStep(reps []*analysis.Report, labels []string, which CompareStep, opt Options) (*plot.Plot, error) {
	if len(reps) == 0 {
		return nil, fmt.Errorf("figure: no reports to compare")
	}
	if which.Direction == "" {
		which.Direction = analysis.Up
	}
	if which.Order <= 0 {
		which.Order = 1
	}
	st := opt.style()
	p := st.newPlot()
	p.Title.Text = fmt.Sprintf("normalised response, %s step %d", which.Direction, which.Order)
	origin := "response start"
	if opt.FromCommand {
		origin = "command"
	}
	p.X.Label.Text = fmt.Sprintf("time from %s (ms)", origin)
	p.Y.Label.Text = "fraction of the step"
	drawn := 0
	for fi, rep := range reps {
		label := fmt.Sprintf("%c", 'A'+fi%26)
		if fi < len(labels) {
			label = labels[fi]
		}
		idx := -1
		for i, n := 0, 0; i < len(rep.Steps); i++ {
			if rep.Steps[i].Direction == which.Direction {
				if n++; n == which.Order {
					idx = i
					break
				}
			}
		}
		if idx < 0 {
			continue
		}
		c := curveOf(rep, idx)
		t0, norm := normalised(c, opt.FromCommand)
		col := st.series(fi)
		ms := func(t float64) float64 { return (t - t0) * 1e3 }
		if !opt.NoFit && c.ToS > c.FromS {
			ts := sampleTimes(c.FromS, c.ToS, fitSamples)
			lo, hi := c.Band(ts)
			poly := make(plotter.XYs, 0, 2*len(ts))
			for i := range ts {
				a, b := norm(lo[i]), norm(hi[i])
				if finite(a) && finite(b) {
					poly = append(poly, plotter.XY{X: ms(ts[i]), Y: math.Min(a, b)})
				}
			}
			for i := len(ts) - 1; i >= 0; i-- {
				a, b := norm(lo[i]), norm(hi[i])
				if finite(a) && finite(b) {
					poly = append(poly, plotter.XY{X: ms(ts[i]), Y: math.Max(a, b)})
				}
			}
			if len(poly) > 2 {
				pg, err := plotter.NewPolygon(poly)
				if err != nil {
					return nil, err
				}
				bc := col
				bc.A = 55
				pg.Color, pg.LineStyle.Width = bc, 0
				p.Add(pg)
			}
			xy := make(plotter.XYs, len(ts))
			for i, t := range ts {
				xy[i] = plotter.XY{X: ms(t), Y: norm(c.Seen(t))}
			}
			l, err := plotter.NewLine(xy)
			if err != nil {
				return nil, fmt.Errorf("figure: %s: fitted curve: %w", rep.File, err)
			}
			l.LineStyle = draw.LineStyle{Color: col, Width: st.LineWidth}
			p.Add(l)
			s := rep.Steps[idx]
			name := fmt.Sprintf("%s: τ = %s", label, pm(s.TauS, 1e3, "ms"))
			if s.DeadTimeS != nil {
				name += ", θ = " + pm(*s.DeadTimeS, 1e3, "ms")
			}
			p.Legend.Add(name, l)
		}
		if tr := rep.Track; tr != nil {
			var pts plotter.XYs
			for i, t := range tr.TimeS {
				if tr.Valid(i) && t >= c.FromS && t <= c.ToS {
					pts = append(pts, plotter.XY{X: ms(t), Y: norm(tr.RPMAt(i))})
				}
			}
			if len(pts) > 0 {
				sc, err := plotter.NewScatter(pts)
				if err != nil {
					return nil, err
				}
				pc := col
				pc.A = 140
				sc.GlyphStyle = draw.GlyphStyle{Color: pc, Radius: vg.Length(1), Shape: draw.CircleGlyph{}}
				p.Add(sc)
			}
		}
		drawn++
	}
	if drawn == 0 {
		return nil, fmt.Errorf("figure: no file has %s step %d", which.Direction, which.Order)
	}
	p.Add(plotter.NewGrid())
	p.Legend.Top = false
	p.Legend.Left = false
	return p, nil
}
