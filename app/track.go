package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"strconv"
	"strings"

	"whirlfit/analysis"
	"whirlfit/analysis/export"
	"whirlfit/dsp"
)

func init() {
	register(command{
		name:    "track",
		summary: "rpm over time as CSV (time_s,rpm,shaft_hz,blade_pass_hz,confidence)",
		run:     runTrack,
	})
}

// channelFlag is a --channel value: a 1-based channel number or "mix".
type channelFlag struct{ n int } // 0 = mix

func (c *channelFlag) String() string {
	if c.n == 0 {
		return "mix"
	}
	return strconv.Itoa(c.n)
}

func (c *channelFlag) Set(s string) error {
	if strings.EqualFold(s, "mix") {
		c.n = 0
		return nil
	}
	n, err := strconv.Atoi(s)
	if err != nil || n < 1 {
		return fmt.Errorf("want a channel number from 1 or \"mix\", not %q", s)
	}
	c.n = n
	return nil
}

// loadSignal decodes path and returns the channel asked for (1-based, 0 =
// mix of all channels) with the decoder's warnings.
func loadSignal(path string, channel int) (dsp.Signal, []string, error) {
	a, err := dsp.DecodeFile(path)
	if err != nil {
		return dsp.Signal{}, nil, err
	}
	if channel > len(a.Channels) {
		return dsp.Signal{}, nil, fmt.Errorf("%s has %d channel(s); channel %d does not exist", path, len(a.Channels), channel)
	}
	ch := dsp.Mix
	if channel > 0 {
		ch = channel - 1
	}
	sig, err := a.Signal(ch)
	return sig, a.Warnings, err
}

// parseOne parses flags that may come before or after one file argument.
func parseOne(fs *flag.FlagSet, args []string) (file string, status int, ok bool) {
	var files []string
	for {
		if err := fs.Parse(args); err != nil {
			if err == flag.ErrHelp {
				return "", 0, false
			}
			return "", 2, false
		}
		if fs.NArg() == 0 {
			break
		}
		files = append(files, fs.Arg(0))
		args = fs.Args()[1:]
	}
	if len(files) != 1 {
		fmt.Fprintf(fs.Output(), "whirlfit: %s needs exactly one file (try 'whirlfit %s -help')\n", fs.Name(), fs.Name())
		return "", 2, false
	}
	return files[0], 0, true
}

// runTrack is 'whirlfit track [options] FILE'.
func runTrack(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("track", flag.ContinueOnError)
	fs.SetOutput(stderr)
	blades := fs.Int("blades", 0, "propeller blade `count` (0 = estimate it from the harmonic comb, with a warning)")
	var ch channelFlag
	fs.Var(&ch, "channel", "channel to analyse, numbered from 1, or mix (the mean of all channels)")
	out := fs.String("out", "", "write the CSV to `PATH` (atomically) instead of standard output")
	force := fs.Bool("force", false, "overwrite the --out file if it exists")
	minHz := fs.Float64("min-shaft-hz", 0, "lowest shaft frequency searched, `Hz` (0 = 40 Hz)")
	maxHz := fs.Float64("max-shaft-hz", 0, "highest shaft frequency searched, `Hz` (0 = 1000 Hz, lowered to what the sample rate shows)")
	fs.Usage = usageFunc(fs, stderr, "whirlfit track [--blades N] [--channel K|mix] [--out PATH] [--force] FILE", `
Tracks the rotor speed and writes one CSV row per frame:
  time_s,rpm,shaft_hz,blade_pass_hz,confidence
time_s is the frame centre (s), rpm = 60 × shaft_hz, blade_pass_hz = blades ×
shaft_hz, confidence 0–1. Frames without a motor leave the fields after time_s
empty. Warnings go to standard error.`)
	file, status, ok := parseOne(fs, args)
	if !ok {
		return status
	}
	if *blades < 0 {
		fmt.Fprintf(stderr, "whirlfit: track: --blades must be 0 or more, not %d\n", *blades)
		return 2
	}
	sig, warns, err := loadSignal(file, ch.n)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: track: %v\n", err)
		return 1
	}
	cfg := analysis.TrackConfig{Blades: *blades, MinShaftHz: *minHz, MaxShaftHz: *maxHz}
	tr, _, err := analysis.TrackSignal(ctx, sig, cfg, nil)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: track: %s: %v\n", file, err)
		return 1
	}
	for _, w := range append(warns, tr.Warnings...) {
		fmt.Fprintf(stderr, "whirlfit: warning: %s: %s\n", file, w)
	}
	write := func(w io.Writer) error { return export.WriteTrackCSV(w, tr) }
	if *out == "" {
		err = write(stdout)
	} else {
		err = export.WriteFileAtomic(*out, *force, write)
	}
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: track: %v\n", err)
		return 1
	}
	return 0
}
