package figure

import (
	"image/color"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Style is the look shared by every whirlfit figure, on screen and in
// files. Colours over the spectrogram are chosen to stand out against the
// Whirl map (dark violet to yellow); colours on white panels for the rpm
// and comparison figures.
type Style struct {
	// TextSize is the base font size; the title is 1.15 times larger.
	TextSize vg.Length
	// LineWidth is for fits and tracks; MarkerWidth for step markers.
	LineWidth, MarkerWidth vg.Length

	// Over the spectrogram.
	Ridge, Shaft, Fit, Marker color.NRGBA
	// Band is the 95 % band's fill (translucent).
	Band color.NRGBA

	// On white panels.
	TrackPoints, PanelFit, PanelBand, PanelMarker color.NRGBA
	// Series colours the files of a comparison in order.
	Series []color.NRGBA
}

// DefaultStyle is the one style of whirlfit's figures.
var DefaultStyle = Style{
	TextSize:    11,
	LineWidth:   1.6,
	MarkerWidth: 1,
	Ridge:       color.NRGBA{R: 255, G: 255, B: 255, A: 230},
	Shaft:       color.NRGBA{R: 170, G: 220, B: 255, A: 220},
	Fit:         color.NRGBA{R: 255, G: 64, B: 129, A: 255},
	Band:        color.NRGBA{R: 255, G: 64, B: 129, A: 90},
	Marker:      color.NRGBA{R: 255, G: 255, B: 255, A: 200},
	TrackPoints: color.NRGBA{R: 90, G: 90, B: 110, A: 255},
	PanelFit:    color.NRGBA{R: 200, G: 30, B: 80, A: 255},
	PanelBand:   color.NRGBA{R: 200, G: 30, B: 80, A: 60},
	PanelMarker: color.NRGBA{R: 120, G: 120, B: 120, A: 255},
	// Okabe & Ito's colour-universal-design palette (2008), readable
	// with the common colour-vision deficiencies.
	Series: []color.NRGBA{
		{R: 0, G: 114, B: 178, A: 255},   // blue
		{R: 213, G: 94, B: 0, A: 255},    // vermilion
		{R: 0, G: 158, B: 115, A: 255},   // bluish green
		{R: 204, G: 121, B: 167, A: 255}, // reddish purple
		{R: 86, G: 180, B: 233, A: 255},  // sky blue
		{R: 230, G: 159, B: 0, A: 255},   // orange
	},
}

// series returns the colour of file i, repeating the list.
func (s *Style) series(i int) color.NRGBA { return s.Series[i%len(s.Series)] }

// newPlot returns an empty plot with the style's fonts.
func (s *Style) newPlot() *plot.Plot {
	p := plot.New()
	p.Title.TextStyle.Font.Size = s.TextSize * 1.15
	p.Title.Padding = s.TextSize / 2
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font.Size = s.TextSize
		ax.Tick.Label.Font.Size = s.TextSize * 0.9
	}
	p.Legend.TextStyle.Font.Size = s.TextSize * 0.9
	p.X.Tick.Marker = shortTicks{}
	p.Y.Tick.Marker = shortTicks{}
	return p
}

func (s *Style) line(c color.Color, w vg.Length, dashed bool) draw.LineStyle {
	ls := draw.LineStyle{Color: c, Width: w}
	if dashed {
		ls.Dashes = []vg.Length{4, 3}
	}
	return ls
}

// shortTicks are gonum/plot's default ticks with labels in the shortest
// form (500 rather than 500.00).
type shortTicks struct{}

func (shortTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'g', 6, 64)
		}
	}
	return ts
}
