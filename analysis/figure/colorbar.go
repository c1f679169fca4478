package figure

import (
	"fmt"
	"image"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// colorBar draws the Whirl scale from lo to hi dB in the right margin of
// the plot it is added to. Its glyph box reserves that margin, so the data
// area shrinks to make room (gonum/plot pads for glyph boxes).
type colorBar struct {
	lo, hi float64
	label  string
}

// Colour-bar geometry.
const (
	barGap   = 8  // points between the data area and the bar
	barWidth = 12 // points
	barTicks = 4  // tick length in points
)

func (cb *colorBar) labelWidth(p *plot.Plot) vg.Length {
	sty := p.Y.Tick.Label
	w := sty.Width(cb.label)
	for _, t := range (plot.DefaultTicks{}).Ticks(cb.lo, cb.hi) {
		if t.Label != "" {
			w = max(w, sty.Width(t.Label))
		}
	}
	return w
}

func (cb *colorBar) Plot(c draw.Canvas, p *plot.Plot) {
	x0 := c.Max.X + barGap
	r := vg.Rectangle{Min: vg.Point{X: x0, Y: c.Min.Y}, Max: vg.Point{X: x0 + barWidth, Y: c.Max.Y}}
	// One pixel column, 256 rows, top = hi; the canvas scales it.
	img := image.NewRGBA(image.Rect(0, 0, 1, len(Whirl)))
	for i := range Whirl {
		img.SetRGBA(0, len(Whirl)-1-i, Whirl[i])
	}
	c.DrawImage(r, img)
	ls := draw.LineStyle{Color: p.Y.Color, Width: p.Y.LineStyle.Width}
	c.StrokeLines(ls, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}, r.Min})
	sty := p.Y.Tick.Label
	sty.XAlign, sty.YAlign = draw.XLeft, draw.YCenter
	span := cb.hi - cb.lo
	for _, t := range (plot.DefaultTicks{}).Ticks(cb.lo, cb.hi) {
		if t.Label == "" || t.Value < cb.lo || t.Value > cb.hi {
			continue
		}
		y := r.Min.Y + vg.Length((t.Value-cb.lo)/span)*(r.Max.Y-r.Min.Y)
		c.StrokeLine2(ls, r.Max.X, y, r.Max.X+barTicks, y)
		c.FillText(sty, vg.Point{X: r.Max.X + barTicks + 2, Y: y}, t.Label)
	}
	sty.YAlign = draw.YBottom
	c.FillText(sty, vg.Point{X: r.Min.X, Y: r.Max.Y + 3}, cb.label)
}

// GlyphBoxes reserves the bar's margin: a box at the right edge of the
// data area as wide as gap, bar, ticks and labels.
func (cb *colorBar) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	w := barGap + barWidth + barTicks + 2 + cb.labelWidth(p)
	return []plot.GlyphBox{{X: 1, Y: 0.5, Rectangle: vg.Rectangle{Min: vg.Point{X: 0, Y: 0}, Max: vg.Point{X: w, Y: 0}}}}
}

func (cb *colorBar) String() string { return fmt.Sprintf("colour bar %g…%g dB", cb.lo, cb.hi) }
