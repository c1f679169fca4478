package ui

import (
	"io"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"whirlfit/analysis"
	"whirlfit/analysis/figure"
)

// figureKind selects one of the core's figures.
type figureKind int

const (
	figSpectrogram figureKind = iota
	figRPM
)

// buildFigure builds the same figure the command line's plot command
// draws; view, when not nil, limits the spectrogram to what the window
// shows.
func buildFigure(kind figureKind, rep *analysis.Report, view *figure.View) (*plot.Plot, error) {
	if kind == figRPM {
		return figure.RPMPlot(rep, figure.Options{})
	}
	return figure.SpectrogramPlot(rep, figure.Options{View: view})
}

// figureWriter returns an export writer for a figure in format ("png",
// "svg", "pdf") at the core's default figure size.
func figureWriter(kind figureKind, format string) func(io.Writer, *analysis.Report) error {
	return func(w io.Writer, rep *analysis.Report) error {
		p, err := buildFigure(kind, rep, nil)
		if err != nil {
			return err
		}
		wt, err := p.WriterTo(vg.Length(figure.DefaultWidthIn)*vg.Inch, vg.Length(figure.DefaultHeightIn)*vg.Inch, format)
		if err != nil {
			return err
		}
		_, err = wt.WriteTo(w)
		return err
	}
}
