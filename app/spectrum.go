package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"text/tabwriter"

	"whirlfit/analysis"
	"whirlfit/dsp"
)

func init() {
	register(command{
		name:    "spectrum",
		summary: "averaged spectrum peaks of an interval, with their harmonic orders",
		run:     runSpectrum,
	})
}

// runSpectrum is 'whirlfit spectrum --from S --to S [--blades N] FILE'.
func runSpectrum(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("spectrum", flag.ContinueOnError)
	fs.SetOutput(stderr)
	from := fs.Float64("from", 0, "start of the interval, `seconds` from the start of the recording")
	to := fs.Float64("to", 0, "end of the interval, `seconds` (0 = the end of the recording)")
	blades := fs.Int("blades", 0, "propeller blade `count`, to mark the blade-pass lines (0 = unknown)")
	npeaks := fs.Int("peaks", 12, "number of strongest peaks to list")
	nfft := fs.Int("nfft", 0, "segment length in `samples`, a power of two (0 = about 0.17 s)")
	var ch channelFlag
	fs.Var(&ch, "channel", "channel to analyse, numbered from 1, or mix (the mean of all channels)")
	fs.Usage = usageFunc(fs, stderr, "whirlfit spectrum --from S --to S [--blades N] [--channel K|mix] FILE", `
Averages the spectrum of one steady interval (Welch, Hann segments overlapping
by half) and lists its strongest peaks: frequency (Hz), level (dB re full
scale²/Hz) and the shaft order h the harmonic comb assigns (h × shaft frequency;
multiples of the blade count are blade-pass lines).`)
	file, status, ok := parseOne(fs, args)
	if !ok {
		return status
	}
	if *blades < 0 || *npeaks < 1 || *from < 0 || (*to != 0 && *to <= *from) {
		fmt.Fprintln(stderr, "whirlfit: spectrum: need --blades ≥ 0, --peaks ≥ 1 and 0 ≤ --from < --to")
		return 2
	}
	sig, _, err := loadSignal(file, ch.n)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: spectrum: %v\n", err)
		return 1
	}
	end := *to
	if end == 0 {
		end = sig.DurationS()
	}
	if err := ctx.Err(); err != nil {
		fmt.Fprintf(stderr, "whirlfit: spectrum: %v\n", err)
		return 1
	}
	avg, err := dsp.AverageSpectrum(sig, *from, end, *nfft)
	if err != nil {
		fmt.Fprintf(stderr, "whirlfit: spectrum: %s: %v\n", file, err)
		return 1
	}
	rd := analysis.ReadSpectrumPeaks(avg.Peaks(*npeaks), *blades, 40, 0.45*sig.SampleRate/float64(max(*blades, 1)))
	fmt.Fprintf(stdout, "%s: %.3f–%.3f s, %d segments of %d samples (%.2f Hz bins)\n", file, avg.FromS, avg.ToS, avg.Segments, avg.NFFT, avg.BinHz())
	if rd.ShaftHz > 0 {
		fmt.Fprintf(stdout, "shaft %.3f Hz = %.0f rpm", rd.ShaftHz, analysis.RPM(rd.ShaftHz))
		if *blades > 0 {
			fmt.Fprintf(stdout, ", blade-pass %.3f Hz", analysis.BladePassHz(rd.ShaftHz, *blades))
		}
		fmt.Fprintln(stdout)
	} else {
		fmt.Fprintln(stdout, "no harmonic comb found among the peaks")
	}
	tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "Hz\tdB\tharmonic\t")
	for _, l := range rd.Lines {
		h := "-"
		if l.Order > 0 {
			h = fmt.Sprintf("h=%d", l.Order)
			if l.BladePass {
				h += " (blade-pass)"
			}
		}
		fmt.Fprintf(tw, "%.2f\t%.1f\t%s\t\n", l.Hz, l.DB, h)
	}
	if err := tw.Flush(); err != nil {
		fmt.Fprintf(stderr, "whirlfit: spectrum: %v\n", err)
		return 1
	}
	return 0
}
