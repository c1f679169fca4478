package main

import (
	"context"
	"flag"
	"fmt"
	"io"

	"whirlfit/analysis/control"
)

func init() {
	register(command{
		name:    "model",
		summary: "control-loop blocks: transfer function, discrete equivalent, phase lag",
		run:     runModel,
	})
}

// runModel is 'whirlfit model FILE'.
func runModel(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("model", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var af analysisFlags
	af.register(fs)
	loopHz := fs.Float64("loop-hz", control.DefaultLoopHz, "control-loop rate in `Hz` for the zero-order-hold discrete equivalent")
	atHz := fs.Float64("at-hz", control.DefaultAtHz, "`frequency` in Hz at which magnitude and phase lag are given")
	lpfHz := fs.Float64("sensor-lpf-hz", control.DefaultSensorLPFHz, "cut-off in `Hz` of the first-order sensor low-pass 1/(s/ωc + 1); 0 or negative leaves it out")
	throttle := fs.String("throttle", "", "throttle `levels` of the plateaus in time order, comma-separated (one more than the steps, e.g. 0.2,0.5,0.3); without them K = 1 (normalised)")
	format := fs.String("format", "text", "output `style`: text or json")
	fs.Usage = usageFunc(fs, stderr, "whirlfit model [OPTIONS] FILE", `
For each step: the motor block K·e^(−θs)/(τs + 1) with its 95 % intervals; its
zero-order-hold equivalent at the loop rate (a = e^(−T/τ), b = K(1 − a), θ as
whole samples plus a fraction by the modified z-transform) and difference
equation; magnitude (dB) and phase lag (degrees, −atan(ωτ) − ωθ) at -at-hz;
the sensor low-pass and the combined lag; a SIMC PI starting point.`)
	files, status, ok := parseInterleaved(fs, args)
	if !ok {
		return status
	}
	cfg, err := af.config()
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: model: %v\n", err)
		return 2
	}
	levels, err := parseList(*throttle, "-throttle")
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: model: %v\n", err)
		return 2
	}
	switch {
	case len(files) != 1:
		fmt.Fprintln(stderr, "whirlfit: model needs exactly one file (try 'whirlfit model -help')")
		return 2
	case !(*loopHz > 0) || !(*atHz > 0):
		fmt.Fprintln(stderr, "whirlfit: model: -loop-hz and -at-hz must be positive")
		return 2
	case *format != "text" && *format != "json":
		fmt.Fprintf(stderr, "whirlfit: model: -format must be text or json, not %q\n", *format)
		return 2
	}
	lpf := *lpfHz
	if lpf == 0 {
		lpf = -1 // 0 would mean "default" to control.Config
	}
	res := analyseFiles(ctx, files, cfg, 1, newProgress(stderr, af.quiet))
	reps, status := reportErrors(stderr, "model", res)
	if status != 0 {
		return status
	}
	m, err := control.Build(reps[0], control.Config{LoopHz: *loopHz, AtHz: *atHz, SensorLPFHz: lpf, Throttle: levels})
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: model: %v\n", err)
		return 1
	}
	if *format == "json" {
		err = control.WriteJSON(stdout, []*control.Model{m})
	} else {
		err = m.WriteText(stdout)
	}
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: model: %v\n", err)
		return 1
	}
	return 0
}
