package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"whirlfit/analysis"
	"whirlfit/analysis/compare"
	"whirlfit/analysis/export"
	"whirlfit/analysis/figure"
)

func init() {
	register(command{
		name:    "analyse",
		summary: "find the throttle steps and fit dead time and time constant, with 95 % intervals",
		run:     runAnalyse,
	})
}

// runAnalyse is 'whirlfit analyse FILE...'.
func runAnalyse(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("analyse", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var af analysisFlags
	af.register(fs)
	format := fs.String("format", "text", "output `style` on stdout: text (an aligned table) or json")
	rpmCSV := fs.String("rpm-csv", "", "write the rpm track as CSV to `PATH` (time_s,rpm,…)")
	summaryCSV := fs.String("summary-csv", "", "write one row per step per file as CSV to `PATH`")
	plotPath := fs.String("plot", "", "save the spectrogram figure to `PATH` (.png, .svg or .pdf)")
	force := fs.Bool("force", false, "overwrite existing output files")
	fs.Usage = usageFunc(fs, stderr, "whirlfit analyse [OPTIONS] FILE|FOLDER...", `
Tracks the rotor speed of each recording, finds every throttle step (or takes
them from -step-at or a trigger channel) and fits rpm(t) = r0 + Δ·(1 − e^(−(t − tc − θ)/τ)).
Per step: direction, command time (s), response start (s), dead time θ (ms),
time constant τ (ms), 10–90 % rise (ms), rpm before and after, bandwidth
1/(2πτ) (Hz) and R², each with its 95 % interval. Folders are searched for
recordings; files are analysed in parallel. With several files, -rpm-csv and
-plot write one file each, named PATH-<input name>.<ext>.

Exit status: 0 (also when no step is found: a warning says so), 1 when some
file could not be analysed (the others are still done), 2 on a usage error.`)
	args0, status, ok := parseInterleaved(fs, args)
	if !ok {
		return status
	}
	if *format != "text" && *format != "json" {
		fmt.Fprintf(stderr, "whirlfit: analyse: -format must be text or json, not %q\n", *format)
		return 2
	}
	cfg, err := af.config()
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
		return 2
	}
	if len(args0) == 0 {
		fmt.Fprintln(stderr, "whirlfit: analyse needs at least one file (try 'whirlfit analyse -help')")
		return 2
	}
	files, err := expandInputs(args0)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
		return 1
	}
	many := len(files) > 1
	outs := []string{*summaryCSV}
	for _, f := range files {
		for _, p := range []string{*rpmCSV, *plotPath} {
			if p != "" {
				outs = append(outs, perFilePath(p, f, many))
			}
		}
	}
	if err := checkOutputs(*force, outs...); err != nil {
		fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
		return 1
	}
	res := analyseFiles(ctx, files, cfg, af.workers, newProgress(stderr, af.quiet))
	reps, status := reportErrors(stderr, "analyse", res)

	for _, r := range reps {
		if len(r.Steps) == 0 {
			fmt.Fprintf(stderr, "whirlfit: analyse: %s: warning: no step found\n", r.File)
		}
		if *rpmCSV != "" && r.Track != nil {
			p := perFilePath(*rpmCSV, r.File, many)
			if err := export.WriteFileAtomic(p, *force, func(w io.Writer) error { return export.WriteTrackCSV(w, r.Track) }); err != nil {
				fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
				status = 1
			}
		}
		if *plotPath != "" {
			p := perFilePath(*plotPath, r.File, many)
			if err := savePlot(r, "spectrogram", p, figure.DefaultWidthIn, figure.DefaultHeightIn, *force); err != nil {
				fmt.Fprintf(stderr, "whirlfit: analyse: %s: %v\n", p, err)
				status = 1
			}
		}
	}
	if *summaryCSV != "" {
		if err := export.WriteFileAtomic(*summaryCSV, *force, func(w io.Writer) error { return export.WriteSummaryCSV(w, reps) }); err != nil {
			fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
			status = 1
		}
	}
	if *format == "json" {
		if err := export.WriteJSON(stdout, reps); err != nil {
			fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
			return 1
		}
		return status
	}
	for i, r := range reps {
		if i > 0 {
			fmt.Fprintln(stdout)
		}
		if err := writeReportText(stdout, r); err != nil {
			fmt.Fprintf(stderr, "whirlfit: analyse: %v\n", err)
			return 1
		}
	}
	return status
}

// writeReportText writes one report as an aligned table with units.
func writeReportText(w io.Writer, r *analysis.Report) error {
	fmt.Fprintf(w, "%s: %d blades, %g Hz, %.2f s, %d steps\n", r.File, r.Blades, r.SampleRateHz, r.DurationS, len(r.Steps))
	if len(r.Steps) > 0 {
		tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "step\tdir\tcommand (s)\tstart (s)\tθ (ms)\tτ (ms)\trise 10–90 (ms)\trpm before\trpm after\tbandwidth (Hz)\tRMS (rpm)\tR²\t")
		for i, s := range r.Steps {
			cmd, dead := "—", "—"
			if s.CommandS != nil {
				cmd = fmt.Sprintf("%.3f", *s.CommandS)
			}
			if s.DeadTimeS != nil {
				dead = pmPlain(*s.DeadTimeS, 1e3)
			}
			fmt.Fprintf(tw, "%d\t%s\t%s\t%.3f\t%s\t%s\t%s\t%s\t%s\t%s\t%.1f\t%.4f\t\n", i+1, s.Direction, cmd, s.ResponseStartS, dead,
				pmPlain(s.TauS, 1e3), pmPlain(s.Rise1090S, 1e3), pmPlain(s.RPMBefore, 1), pmPlain(s.RPMAfter, 1),
				pmPlain(s.BandwidthHz, 1), s.ResidualRMSRPM, s.R2)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
		for i, s := range r.Steps {
			for _, wn := range s.Warnings {
				fmt.Fprintf(w, "  step %d: warning: %s\n", i+1, wn)
			}
		}
	}
	for _, wn := range r.Warnings {
		fmt.Fprintf(w, "  warning: %s\n", wn)
	}
	if len(r.Steps) == 0 {
		fmt.Fprintln(w, "  warning: no step found")
	}
	_, err := fmt.Fprint(w, "")
	return err
}

// pmPlain is compare.FormatPM without the unit (it is in the header).
func pmPlain(e analysis.Estimate, scale float64) string {
	return strings.TrimSpace(compare.FormatPM(e, scale, ""))
}
