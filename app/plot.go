package main

import (
	"context"
	"flag"
	"fmt"
	"io"

	"gonum.org/v1/plot"

	"whirlfit/analysis"
	"whirlfit/analysis/figure"
)

func init() {
	register(command{
		name:    "plot",
		summary: "save the spectrogram or rpm figure of a recording (PNG, SVG or PDF)",
		run:     runPlot,
	})
}

// plotKinds lists -kind's values.
var plotKinds = []string{"spectrogram", "rpm", "steps"}

// runPlot is 'whirlfit plot FILE --out fig.png'.
func runPlot(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("plot", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var af analysisFlags
	af.register(fs)
	out := fs.String("out", "", "figure file `PATH`; the extension chooses the format: .png, .svg, .pdf (also .jpg, .tif, .eps)")
	kind := fs.String("kind", "spectrogram", "`figure`: spectrogram (with track, fit and 95 % band), rpm (speed against time with fit and band) or steps (one rpm panel per step)")
	width := fs.Float64("width-in", figure.DefaultWidthIn, "figure width in `inches` (PNG at 96 dpi)")
	height := fs.Float64("height-in", figure.DefaultHeightIn, "figure height in `inches`")
	force := fs.Bool("force", false, "overwrite an existing figure file")
	fs.Usage = usageFunc(fs, stderr, "whirlfit plot [OPTIONS] FILE -out PATH", `
Analyses the recording and saves one figure: the spectrogram (dBFS colour
scale, tracked blade-pass and shaft lines, each step's fit as the track sees
it with its 95 % band, step markers, τ and θ in the title), or rpm against time.`)
	files, status, ok := parseInterleaved(fs, args)
	if !ok {
		return status
	}
	cfg, err := af.config()
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: plot: %v\n", err)
		return 2
	}
	switch {
	case len(files) != 1:
		fmt.Fprintln(stderr, "whirlfit: plot needs exactly one file (try 'whirlfit plot -help')")
		return 2
	case *out == "":
		fmt.Fprintln(stderr, "whirlfit: plot: -out PATH is required")
		return 2
	case !(*width > 0 && *height > 0):
		fmt.Fprintln(stderr, "whirlfit: plot: -width-in and -height-in must be positive")
		return 2
	}
	if !validKind(*kind) {
		fmt.Fprintf(stderr, "whirlfit: plot: -kind must be one of %v, not %q\n", plotKinds, *kind)
		return 2
	}
	if err := checkOutputs(*force, *out); err != nil {
		fmt.Fprintf(stderr, "whirlfit: plot: %v\n", err)
		return 1
	}
	res := analyseFiles(ctx, files, cfg, 1, newProgress(stderr, af.quiet))
	reps, status := reportErrors(stderr, "plot", res)
	if status != 0 {
		return status
	}
	if err := savePlot(reps[0], *kind, *out, *width, *height, *force); err != nil {
		fmt.Fprintf(stderr, "whirlfit: plot: %v\n", err)
		return 1
	}
	return 0
}

func validKind(k string) bool {
	for _, v := range plotKinds {
		if k == v {
			return true
		}
	}
	return false
}

// savePlot builds the figure of the given kind and saves it atomically.
func savePlot(rep *analysis.Report, kind, path string, widthIn, heightIn float64, force bool) error {
	var p *plot.Plot
	var err error
	switch kind {
	case "spectrogram":
		p, err = figure.SpectrogramPlot(rep, figure.Options{})
	case "rpm":
		p, err = figure.RPMPlot(rep, figure.Options{})
	case "steps":
		ps, err := figure.RPMStepPlots(rep, figure.Options{})
		if err != nil {
			return err
		}
		if len(ps) == 0 {
			return fmt.Errorf("%s: no step found, so there are no step panels", rep.File)
		}
		return figure.SaveGrid(ps, min(len(ps), 2), path, widthIn, heightIn, force)
	default:
		return fmt.Errorf("unknown figure kind %q", kind)
	}
	if err != nil {
		return err
	}
	return figure.Save(p, path, widthIn, heightIn, force)
}
