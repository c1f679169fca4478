package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"whirlfit/dsp"
)

func init() {
	register(command{
		name:    "info",
		summary: "what a recording holds: format, rate, channels, length, levels",
		run:     runInfo,
	})
}

// infoRecord is one file's line of 'whirlfit info --format json'.
type infoRecord struct {
	File         string  `json:"file"`
	Format       string  `json:"format"`
	SampleRateHz int     `json:"sample_rate_hz"`
	Channels     int     `json:"channels"`
	Bits         int     `json:"bits"` // 0 for lossy codings
	DurationS    float64 `json:"duration_s"`
	PeakDBFS     float64 `json:"peak_dbfs"` // dsp.SilenceDBFS (−200) for silence
	RMSDBFS      float64 `json:"rms_dbfs"`
	Clipped      int     `json:"clipped"`

	sampleFormat string
}

// runInfo is 'whirlfit info FILE...'.
func runInfo(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("info", flag.ContinueOnError)
	fs.SetOutput(stderr)
	format := fs.String("format", "text", "output `style`: text (an aligned table) or json (one object per line)")
	fs.Usage = usageFunc(fs, stderr, "whirlfit info [-format text|json] FILE...", `
For each recording: container and codec, sample rate (Hz), channels, bits per
sample or sample format, duration (s), peak and RMS level (dBFS, over all
channels; silence reads -200 in JSON) and the number of clipped samples.`)
	// Options may come before, between or after the files.
	var files []string
	for {
		if err := fs.Parse(args); err != nil {
			if err == flag.ErrHelp {
				return 0
			}
			return 2
		}
		if fs.NArg() == 0 {
			break
		}
		files = append(files, fs.Arg(0))
		args = fs.Args()[1:]
	}
	if *format != "text" && *format != "json" {
		fmt.Fprintf(stderr, "whirlfit: info: -format must be text or json, not %q\n", *format)
		return 2
	}
	if len(files) == 0 {
		fmt.Fprintln(stderr, "whirlfit: info needs at least one file (try 'whirlfit info -help')")
		return 2
	}

	status := 0
	var records []infoRecord
	for _, f := range files {
		if err := ctx.Err(); err != nil {
			fmt.Fprintf(stderr, "whirlfit: info: %v\n", err)
			return 1
		}
		a, err := dsp.DecodeFile(f)
		if err != nil {
			fmt.Fprintf(stderr, "whirlfit: %v\n", err)
			status = 1
			continue
		}
		for _, w := range a.Warnings {
			fmt.Fprintf(stderr, "whirlfit: %s: warning: %s\n", f, w)
		}
		if a.NonFinite > 0 {
			fmt.Fprintf(stderr, "whirlfit: %s: warning: %d NaN or infinite samples replaced by 0\n", f, a.NonFinite)
		}
		records = append(records, describe(f, a))
	}

	if *format == "json" {
		enc := json.NewEncoder(stdout)
		for _, r := range records {
			if err := enc.Encode(r); err != nil {
				fmt.Fprintf(stderr, "whirlfit: info: %v\n", err)
				return 1
			}
		}
		return status
	}
	if len(records) == 0 {
		return status
	}
	tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "file\tformat\trate Hz\tchannels\tsample format\tduration s\tpeak dBFS\tRMS dBFS\tclipped")
	for _, r := range records {
		fmt.Fprintf(tw, "%s\t%s\t%d\t%d\t%s\t%.3f\t%s\t%s\t%d\n", r.File, r.Format, r.SampleRateHz, r.Channels,
			r.sampleFormat, r.DurationS, dbText(r.PeakDBFS), dbText(r.RMSDBFS), r.Clipped)
	}
	if err := tw.Flush(); err != nil {
		fmt.Fprintf(stderr, "whirlfit: info: %v\n", err)
		return 1
	}
	return status
}

// describe gathers what info reports about one decoded file.
func describe(file string, a *dsp.Audio) infoRecord {
	lv := dsp.Levels(a)
	format := a.Container
	if a.Codec != "" && a.Codec != a.Container {
		format += " " + a.Codec
	}
	sf := "-"
	switch {
	case a.Bits > 0 && strings.Contains(a.Codec, "float"):
		sf = fmt.Sprintf("%d-bit float", a.Bits)
	case a.Bits > 0:
		sf = fmt.Sprintf("%d-bit", a.Bits)
	}
	return infoRecord{
		File:         file,
		Format:       format,
		SampleRateHz: a.SampleRate,
		Channels:     len(a.Channels),
		Bits:         a.Bits,
		DurationS:    a.DurationS(),
		PeakDBFS:     lv.PeakDBFS,
		RMSDBFS:      lv.RMSDBFS,
		Clipped:      lv.Clipped,
		sampleFormat: sf,
	}
}

// dbText prints a level to 0.01 dB, and silence as -inf.
func dbText(db float64) string {
	if db <= dsp.SilenceDBFS {
		return "-inf"
	}
	return fmt.Sprintf("%.2f", db)
}
