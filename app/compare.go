package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"strings"

	"whirlfit/analysis"
	"whirlfit/analysis/compare"
	"whirlfit/analysis/figure"
)

func init() {
	register(command{
		name:    "compare",
		summary: "put recordings side by side (propellers, settings): table, differences, verdict",
		run:     runCompare,
	})
}

// runCompare is 'whirlfit compare FILE...'.
func runCompare(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("compare", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var af analysisFlags
	af.register(fs)
	labels := fs.String("labels", "", "comma-separated `names` of the files in order (default A,B,C,…)")
	format := fs.String("format", "text", "output `style`: text (tables and verdicts), csv (long form) or json")
	plotPath := fs.String("plot", "", "save the overlay of normalised step responses to `PATH` (.png, .svg or .pdf)")
	plotStep := fs.String("plot-step", "up1", "matched `step` the figure overlays: up1, up2, …, down1, …")
	fromCommand := fs.Bool("from-command", false, "in the figure, measure time from the command (when known) instead of the response start")
	force := fs.Bool("force", false, "overwrite an existing figure file")
	fs.Usage = usageFunc(fs, stderr, "whirlfit compare [OPTIONS] FILE FILE...", `
Analyses each recording and matches their steps by direction and order (the
k-th up step of each file, the k-th down step, …). For each matched step it
shows τ and θ (ms), 10–90 % rise (ms), bandwidth (Hz) and rpm before and after,
each ± its 95 % interval, every file's difference from the first, whether the
intervals overlap, and a verdict in words ("no clear difference" when they do).`)
	files, status, ok := parseInterleaved(fs, args)
	if !ok {
		return status
	}
	cfg, err := af.config()
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
		return 2
	}
	if *format != "text" && *format != "csv" && *format != "json" {
		fmt.Fprintf(stderr, "whirlfit: compare: -format must be text, csv or json, not %q\n", *format)
		return 2
	}
	which, err := parsePlotStep(*plotStep)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
		return 2
	}
	files, err = expandInputs(files)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
		return 1
	}
	if len(files) < 2 {
		fmt.Fprintln(stderr, "whirlfit: compare needs at least two files (try 'whirlfit compare -help')")
		return 2
	}
	var names []string
	if *labels != "" {
		for _, l := range strings.Split(*labels, ",") {
			names = append(names, strings.TrimSpace(l))
		}
		if len(names) != len(files) {
			fmt.Fprintf(stderr, "whirlfit: compare: %d labels for %d files\n", len(names), len(files))
			return 2
		}
	} else {
		names = compare.DefaultLabels(len(files))
	}
	if err := checkOutputs(*force, *plotPath); err != nil {
		fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
		return 1
	}
	res := analyseFiles(ctx, files, cfg, af.workers, newProgress(stderr, af.quiet))
	reps, status := reportErrors(stderr, "compare", res)
	// Keep the labels of the files that were analysed.
	var kept []string
	for i, r := range res {
		if r.Err == nil {
			kept = append(kept, names[i])
		}
	}
	if len(reps) < 2 {
		fmt.Fprintln(stderr, "whirlfit: compare: fewer than two recordings could be analysed")
		return 1
	}
	c, err := compare.Compare(reps, kept)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
		return 1
	}
	switch *format {
	case "csv":
		err = c.WriteCSV(stdout)
	case "json":
		err = c.WriteJSON(stdout)
	default:
		err = c.WriteText(stdout)
	}
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
		return 1
	}
	if *plotPath != "" {
		p, err := figure.ComparePlotStep(reps, kept, which, figure.Options{FromCommand: *fromCommand})
		if err == nil {
			err = figure.Save(p, *plotPath, figure.DefaultWidthIn, figure.DefaultHeightIn, *force)
		}
		if err != nil {
			fmt.Fprintf(stderr, "whirlfit: compare: %v\n", err)
			status = 1
		}
	}
	return status
}

// parsePlotStep reads "up1", "down2", ….
func parsePlotStep(s string) (figure.CompareStep, error) {
	for _, d := range []analysis.Direction{analysis.Up, analysis.Down} {
		if rest, ok := strings.CutPrefix(s, string(d)); ok {
			var n int
			if _, err := fmt.Sscanf(rest, "%d", &n); err == nil && n >= 1 && fmt.Sprint(n) == rest {
				return figure.CompareStep{Direction: d, Order: n}, nil
			}
		}
	}
	return figure.CompareStep{}, fmt.Errorf("-plot-step must be up or down and a step number from 1 (up1, down2, …), not %q", s)
}
