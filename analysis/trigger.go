package analysis

import (
	"math"
	"sort"

	"whirlfit/dsp"
)

// Command times from a trigger line recorded on a second channel.
//
// Edges are the line's sharp level changes (lineEdges); a line-in's AC
// coupling, which lets the levels decay slowly after every change, does
// not matter. Then:
//
//   - a PWM line (40–600 rising edges per second, e.g. a servo-style pulse
//     train at 50–500 Hz) gives one command wherever its pulse width
//     changes: the rising edge of the first pulse with the new width;
//   - a plain step line gives every level change, and a short pulse
//     (< 50 ms) gives its leading edge only;
//   - a faster carrier (a tone switched on and off) is reduced to its
//     envelope first and treated as a step line;
//   - a channel whose samples jump by a quarter of its range at more than
//     5 % of all samples is noise, not a line, and gives nothing.

const (
	trigEdgeS       = 0.0005 // an edge is a change within this time
	trigMinEdgeSNR  = 12     // largest jump over the robust sd of jumps
	trigPulseMaxS   = 0.05
	trigPWMMinRate  = 40
	trigPWMMaxRate  = 600
	trigWidthMedian = 4 // pulses per side in the width change test
)

// TriggerEdges returns the command times (s, increasing) found on a
// trigger or PWM line, or nil when the line carries no edges.
func TriggerEdges(sig dsp.Signal) []float64 {
	fs := sig.SampleRate
	x := make([]float64, len(sig.Samples))
	for i, v := range sig.Samples {
		x[i] = float64(v)
	}
	if !(fs > 0) || len(x) < int(0.1*fs) {
		return nil
	}
	rises, falls := lineEdges(x, fs)
	if len(rises) == 0 && len(falls) == 0 {
		return nil
	}
	dur := float64(len(x)) / fs
	rate := activeRate(rises, dur)
	switch {
	case rate > trigPWMMaxRate:
		env, envFs := envelope(x, fs)
		r2, f2 := lineEdges(env, envFs)
		return stepEdges(r2, f2)
	case rate >= trigPWMMinRate:
		return pwmEdges(rises, falls, 1/fs)
	default:
		return stepEdges(rises, falls)
	}
}

// lineEdges returns the rising and falling edge times (s) of a line: places
// where it moves by more than 40 % of its largest jump within
// trigEdgeS. A coupling capacitor's slow decay after each edge is no
// edge, so an AC-coupled line works as well as a DC-coupled one. The edge
// time is where the line crosses halfway between its levels before and
// after, interpolated between samples.
func lineEdges(x []float64, fs float64) (rises, falls []float64) {
	n := len(x)
	L := max(1, int(math.Round(trigEdgeS*fs)))
	if n < 4*L {
		return nil, nil
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range x {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if !(hi-lo > 1e-4) {
		return nil, nil
	}
	// A line has flat levels and a few sharp edges; noise jumps all the
	// time. Refuse a signal whose successive samples often jump by a
	// quarter of its range.
	jumps := 0
	for i := 1; i < n; i++ {
		if math.Abs(x[i]-x[i-1]) > 0.25*(hi-lo) {
			jumps++
		}
	}
	if float64(jumps) > 0.05*float64(n) {
		return nil, nil
	}
	d := make([]float64, n)
	absd := make([]float64, 0, n/8+1)
	peak := 0.0
	for i := L; i < n; i++ {
		d[i] = x[i] - x[i-L]
		peak = math.Max(peak, math.Abs(d[i]))
		if i%8 == 0 {
			absd = append(absd, math.Abs(d[i]))
		}
	}
	noise := 1.4826 * median(absd)
	if peak < trigMinEdgeSNR*noise {
		return nil, nil
	}
	thr := 0.4 * peak
	for i := L; i < n; {
		if math.Abs(d[i]) <= thr {
			i++
			continue
		}
		up := d[i] > 0
		j := i
		for j < n && math.Abs(d[j]) > thr && (d[j] > 0) == up {
			j++
		}
		pre := x[max(0, i-L)]
		post := x[min(n-1, j-1)]
		mid := (pre + post) / 2
		t := float64(i) / fs
		for q := max(1, i-L); q < j; q++ {
			if (x[q-1]-mid)*(x[q]-mid) <= 0 && x[q] != x[q-1] {
				t = (float64(q-1) + (mid-x[q-1])/(x[q]-x[q-1])) / fs
				break
			}
		}
		if up {
			rises = append(rises, t)
		} else {
			falls = append(falls, t)
		}
		i = j
	}
	return rises, falls
}

// activeRate is the rising-edge rate over the span that has edges.
func activeRate(rises []float64, dur float64) float64 {
	if len(rises) < 3 {
		return 0
	}
	span := rises[len(rises)-1] - rises[0]
	if span <= 0 {
		return 0
	}
	return float64(len(rises)-1) / span
}

// stepEdges returns every level change; a pulse shorter than
// trigPulseMaxS contributes its leading edge only.
func stepEdges(rises, falls []float64) []float64 {
	type ev struct {
		t    float64
		rise bool
	}
	var evs []ev
	for _, t := range rises {
		evs = append(evs, ev{t, true})
	}
	for _, t := range falls {
		evs = append(evs, ev{t, false})
	}
	sort.Slice(evs, func(a, b int) bool { return evs[a].t < evs[b].t })
	var out []float64
	for i := 0; i < len(evs); i++ {
		out = append(out, evs[i].t)
		if i+1 < len(evs) && evs[i+1].t-evs[i].t < trigPulseMaxS {
			i++ // the trailing edge of a short pulse
		}
	}
	return out
}

// pwmEdges returns the rising edge of each pulse whose width differs from
// the pulses before it, where the width settles to a new value.
func pwmEdges(rises, falls []float64, sampleDt float64) []float64 {
	// Width of the pulse starting at each rising edge.
	var starts, widths []float64
	j := 0
	for _, r := range rises {
		for j < len(falls) && falls[j] <= r {
			j++
		}
		if j == len(falls) {
			break
		}
		starts = append(starts, r)
		widths = append(widths, falls[j]-r)
	}
	m := trigWidthMedian
	if len(widths) < 2*m+1 {
		return nil
	}
	// Jitter of the width from successive differences.
	// Jitter of the width about its running median of five.
	var dw []float64
	for i := 2; i+2 < len(widths); i++ {
		dw = append(dw, math.Abs(widths[i]-median(widths[i-2:i+3])))
	}
	jit := 1.4826 * median(dw)
	var periods []float64
	for i := 1; i < len(starts); i++ {
		periods = append(periods, starts[i]-starts[i-1])
	}
	period := median(periods)
	// Changes below 1.5 samples (sample-clock jitter of the recording) or
	// 0.2 % of the period are not commands.
	thr := math.Max(math.Max(8*jit, 0.002*period), 1.5*sampleDt)
	var out []float64
	for k := m; k+m <= len(widths); k++ {
		before := median(widths[k-m : k])
		after := median(widths[k : k+m])
		ch := after - before
		if math.Abs(ch) <= thr {
			continue
		}
		// The first pulse of the run that is nearer the new width.
		if math.Abs(widths[k]-before) < math.Abs(ch)/2 {
			continue
		}
		// A gap in the pulse train (line idle) is not a command.
		if starts[k]-starts[k-1] > 3*period {
			continue
		}
		if len(out) > 0 && starts[k]-out[len(out)-1] < float64(m)*period {
			continue
		}
		out = append(out, starts[k])
	}
	return out
}

const envBlockS = 0.002

// envelope returns the RMS of x over blocks of about envBlockS and its
// sample rate.
func envelope(x []float64, fs float64) ([]float64, float64) {
	blk := max(1, int(envBlockS*fs))
	var out []float64
	for i := 0; i+blk <= len(x); i += blk {
		s := 0.0
		for _, v := range x[i : i+blk] {
			s += v * v
		}
		out = append(out, math.Sqrt(s/float64(blk)))
	}
	return out, fs / float64(blk)
}
