package ui

import (
	"fmt"
	"image"
	"image/color"
	"math"

	"fyne.io/fyne/v2/theme"
	"gonum.org/v1/plot"

	"whirlfit/analysis"
)

// canvasPainter draws overlays into the plot image in its pixel grid: time
// runs across the columns, the vertical value (Hz or rpm) up the rows.
type canvasPainter struct {
	img  *image.RGBA
	vp   viewport
	mode plotMode
}

func (c canvasPainter) size() (w, h float64) {
	b := c.img.Bounds()
	return float64(b.Dx()), float64(b.Dy())
}

func (c canvasPainter) px(t float64) float64 {
	w, _ := c.size()
	return (t - c.vp.T0) / (c.vp.T1 - c.vp.T0) * w
}

func (c canvasPainter) py(y float64) float64 {
	_, h := c.size()
	lo, hi := c.vp.F0, c.vp.F1
	if c.mode == modeRPM {
		lo, hi = c.vp.R0, c.vp.R1
	}
	return (hi - y) / (hi - lo) * h
}

// scale is the device pixels per unit, so overlays keep their width on
// high-density screens.
func (c canvasPainter) scale() int { return max(1, c.img.Bounds().Dy()/600) }

// lines returns the vertical values at which an rpm is drawn: in the
// spectrogram at the shaft and blade-pass frequencies, in the rpm view at
// the rpm itself.
func (c canvasPainter) lines(rpm float64, blades int) []float64 {
	if c.mode == modeRPM {
		return []float64{rpm}
	}
	shaft := analysis.ShaftHz(rpm)
	if blades > 1 {
		return []float64{shaft, analysis.BladePassHz(shaft, blades)}
	}
	return []float64{shaft}
}

// drawOverlays draws the fit bands, the ridge, the fitted curves and the
// detected step starts.
func (c canvasPainter) drawOverlays(tr *analysis.Track, curves []stepCurve, steps []analysis.StepResult, blades int) {
	s := c.scale()
	for _, cv := range curves {
		for k := range c.lines(0, blades) {
			c.band(cv, blades, k)
		}
	}
	if tr != nil {
		ridge := colRidge
		if c.mode == modeRPM {
			ridge = toRGBA(themeForeground())
		}
		for i := range tr.TimeS {
			if !tr.Valid(i) {
				continue
			}
			x := c.px(tr.TimeS[i])
			for _, y := range c.lines(tr.RPMAt(i), blades) {
				c.dot(x, c.py(y), s, ridge)
			}
		}
	}
	for _, cv := range curves {
		for k := range c.lines(0, blades) {
			var px, py float64
			for i := range cv.TimeS {
				x, y := c.px(cv.TimeS[i]), c.py(c.lines(cv.RPM[i], blades)[k])
				if i > 0 {
					c.line(px, py, x, y, s+1, colFit)
				}
				px, py = x, y
			}
		}
	}
	_, h := c.size()
	for _, st := range steps {
		x := c.px(st.ResponseStartS)
		c.triangle(x, 0, float64(6*s), colStep)
		c.dashed(x, 0, h, s, colStep)
	}
}

// band fills the 95 % band of curve cv on line k (a vertical span per
// column between the band's edges).
func (c canvasPainter) band(cv stepCurve, blades, k int) {
	w, h := c.size()
	for i := 1; i < len(cv.TimeS); i++ {
		x0, x1 := c.px(cv.TimeS[i-1]), c.px(cv.TimeS[i])
		for x := int(math.Floor(x0)); x <= int(math.Ceil(x1)); x++ {
			if x < 0 || float64(x) >= w || x1 <= x0 {
				continue
			}
			f := (float64(x) - x0) / (x1 - x0)
			f = math.Min(math.Max(f, 0), 1)
			lo := cv.Lo[i-1] + f*(cv.Lo[i]-cv.Lo[i-1])
			hi := cv.Hi[i-1] + f*(cv.Hi[i]-cv.Hi[i-1])
			ya, yb := c.py(c.lines(hi, blades)[k]), c.py(c.lines(lo, blades)[k])
			if !finite(ya) || !finite(yb) {
				continue
			}
			// Clip to the image so that a very wide band costs no more
			// than the image's height.
			ya, yb = math.Max(ya, -1), math.Min(yb, h+1)
			for y := int(math.Floor(ya)) - 1; y <= int(math.Ceil(yb))+1; y++ {
				if y >= 0 && float64(y) < h {
					blend(c.img, x, y, colBand)
				}
			}
		}
	}
}

func (c canvasPainter) dot(x, y float64, r int, col color.RGBA) {
	w, h := c.size()
	if !finite(x) || !finite(y) || x < -float64(r) || y < -float64(r) || x > w+float64(r) || y > h+float64(r) {
		return
	}
	xi, yi := int(x), int(y)
	for dy := -r + 1; dy < r; dy++ {
		for dx := -r + 1; dx < r; dx++ {
			set(c.img, xi+dx, yi+dy, col)
		}
	}
	if r == 1 {
		set(c.img, xi, yi, col)
	}
}

// line draws a straight segment of the given width (Bresenham, widened).
func (c canvasPainter) line(x0, y0, x1, y1 float64, width int, col color.RGBA) {
	w, h := c.size()
	if !finite(x0) || !finite(y0) || !finite(x1) || !finite(y1) {
		return
	}
	if (x0 < 0 && x1 < 0) || (x0 > w && x1 > w) {
		return
	}
	if (y0 < 0 && y1 < 0) || (y0 > h && y1 > h) {
		return
	}
	n := int(math.Max(math.Abs(x1-x0), math.Abs(y1-y0))) + 1
	n = min(n, 1<<16)
	for i := 0; i <= n; i++ {
		f := float64(i) / float64(n)
		c.dot(x0+f*(x1-x0), y0+f*(y1-y0), (width+1)/2, col)
	}
}

func (c canvasPainter) dashed(x, y0, y1 float64, width int, col color.RGBA) {
	dash := 6 * width
	for y := int(y0); y < int(y1); y += 2 * dash {
		for yy := y; yy < y+dash && yy < int(y1); yy++ {
			for dx := 0; dx < width; dx++ {
				blend(c.img, int(x)+dx, yy, color.RGBA{R: col.R, G: col.G, B: col.B, A: 160})
			}
		}
	}
}

// triangle draws a downward-pointing marker with its tip at (x, y+size).
func (c canvasPainter) triangle(x, y, size float64, col color.RGBA) {
	for dy := 0; dy < int(size); dy++ {
		half := int(size) - dy
		for dx := -half; dx <= half; dx++ {
			set(c.img, int(x)+dx, int(y)+dy, col)
		}
	}
}

// grid draws light lines at the major ticks of the rpm view.
func (c canvasPainter) grid(col color.RGBA) {
	w, h := c.size()
	if c.vp.R1 > c.vp.R0 {
		for _, tk := range (plot.DefaultTicks{}).Ticks(c.vp.R0, c.vp.R1) {
			if tk.Label == "" {
				continue
			}
			y := int(c.py(tk.Value))
			for x := 0; x < int(w); x++ {
				set(c.img, x, y, col)
			}
		}
	}
	if c.vp.T1 > c.vp.T0 {
		for _, tk := range (plot.DefaultTicks{}).Ticks(c.vp.T0, c.vp.T1) {
			if tk.Label == "" {
				continue
			}
			x := int(c.px(tk.Value))
			for y := 0; y < int(h); y++ {
				set(c.img, x, y, col)
			}
		}
	}
}

func set(img *image.RGBA, x, y int, c color.RGBA) {
	if image.Pt(x, y).In(img.Rect) {
		img.SetRGBA(x, y, c)
	}
}

// blend paints c over the pixel with c's alpha (c not premultiplied).
func blend(img *image.RGBA, x, y int, c color.RGBA) {
	if !image.Pt(x, y).In(img.Rect) {
		return
	}
	o := img.PixOffset(x, y)
	p := img.Pix[o : o+4 : o+4]
	a := uint32(c.A)
	mix := func(dst uint8, src uint8) uint8 { return uint8((uint32(dst)*(255-a) + uint32(src)*a) / 255) }
	p[0], p[1], p[2] = mix(p[0], c.R), mix(p[1], c.G), mix(p[2], c.B)
	p[3] = 255
}

func fillImage(img *image.RGBA, c color.RGBA) {
	for i := 0; i < len(img.Pix); i += 4 {
		img.Pix[i], img.Pix[i+1], img.Pix[i+2], img.Pix[i+3] = c.R, c.G, c.B, c.A
	}
}

func toRGBA(c color.Color) color.RGBA {
	r, g, b, a := c.RGBA()
	if a == 0 {
		return color.RGBA{}
	}
	// Un-premultiply to straight 8-bit values.
	return color.RGBA{R: uint8(r * 255 / a), G: uint8(g * 255 / a), B: uint8(b * 255 / a), A: uint8(a >> 8)}
}

func formatDB(db float64) string { return fmt.Sprintf("%.0f", db) }

func themeForeground() color.Color { return theme.Color(theme.ColorNameForeground) }

func themeBackground() color.Color { return theme.Color(theme.ColorNameBackground) }

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
