package analysis

import (
	"context"
	"fmt"
	"math"
	"slices"

	"whirlfit/dsp"
)

// A second harmonic source — another rotor, a fan — can hold the search
// path when its comb explains the frame as well as the motor's: salience is
// whitened log magnitude clamped at zCap, so it measures how comb-like the
// lines are, not how loud. A rotor at a lower speed puts more of its
// blade-pass harmonics into the band where rotor tones are strong, and a
// quieter one can then outscore the motor. The motor under test is the
// rotor at the microphone (common practice: the microphone is placed at
// the test stand), so of two distinct combs the louder one is taken.
//
// louderSource solves a second path on the salience from which every
// candidate whose comb shares the first path's lines has been removed (the
// first path's speed, its integer multiples and fractions), and compares
// the two combs' power where both are voiced: each comb's second strongest
// blade-pass harmonic, so that a whine tone on one of its positions does
// not make a comb. The second source wins when its comb is clearly the
// louder (sourceMargin), or when the first path is steady and the second
// steps while not much quieter (sourceSteady…sourceStepQuieter); a second
// path steadier than the first (mains hum, a whine tone) never does. The
// winner's path is solved once more without the other source, which the
// first path may have followed only in part, and returned with a warning;
// nil when the first path stands.
const (
	// sourceMargin is the least median power ratio, in nepers of power
	// (ln 2 = 3 dB), by which the second comb must be louder; it must be
	// louder by half that in three frames out of four as well (a first
	// path that follows the motor in part leaves the second elsewhere
	// there).
	sourceMargin = math.Ln2
	// sourceRelTol is the relative distance from a ratio of the first
	// path within which a candidate counts as the same source.
	sourceRelTol = 0.012
	// sourceEvery thins the frames on which the power is compared;
	// sourceMinFrames is the least number of such frames with both paths
	// voiced, and sourceMinShare the share of the first path's voiced
	// frames in which the second must be voiced too.
	sourceEvery     = 4
	sourceMinFrames = 12
	sourceMinShare  = 0.5
	// sourceMinSalience is the least ratio of the second path's median
	// salience to the first's where both are voiced.
	sourceMinSalience = 0.5
	// A first path whose 10–90 % spread of ln f is below sourceSteady
	// gives way to a second whose spread exceeds sourceStepping, whose
	// salience is at least sourceStepSalience of the first's and whose
	// comb is at most sourceStepQuieter (nepers of power, 10 dB) quieter.
	sourceSteady       = 0.03
	sourceStepping     = 0.10
	sourceStepSalience = 0.25
	sourceStepQuieter  = 2.3
)

func (tk *tracker) louderSource(ctx context.Context, sal []float32, rp ridgePath, comb *combTable, blades int) ([]int32, string, error) {
	T, K := rp.T, rp.K
	p1 := tk.path
	voiced1 := 0
	for _, k := range p1 {
		if k >= 0 {
			voiced1++
		}
	}
	if voiced1 < sourceMinFrames*sourceEvery {
		return nil, "", nil
	}
	// Candidates of the same source: the path's speed times m or 1/m.
	B := max(blades, 1)
	tol := int(math.Ceil(sourceRelTol / comb.logStep))
	var offs []int
	for m := 1; m <= max(4, B); m++ {
		o := int(math.Round(math.Log(float64(m)) / comb.logStep))
		offs = append(offs, o)
		if m > 1 {
			offs = append(offs, -o)
		}
	}
	var lo float32
	for _, v := range sal {
		lo = min(lo, v)
	}
	excl := lo - 1 - rp.switchCost
	// each calls fn with the index in sal of every candidate of the source
	// at candidate src[t] (−1: none), frame by frame.
	each := func(src []int32, fn func(i int)) {
		for t, k1 := range src {
			if k1 < 0 {
				continue
			}
			for _, o := range offs {
				for k := max(0, int(k1)+o-tol); k <= min(K-1, int(k1)+o+tol); k++ {
					fn(t*K + k)
				}
			}
		}
	}
	// without solves a path on the salience from which that source has
	// been taken out; the salience is changed in place and put back (a
	// copy of a long recording's would cost tens of megabytes).
	var saved []float32
	without := func(src []int32) []int32 {
		saved = saved[:0]
		each(src, func(i int) { saved, sal[i] = append(saved, sal[i]), excl })
		rp.force = nil
		p := rp.solve(sal)
		j := 0
		each(src, func(i int) {
			if sal[i] == excl { // not put back yet (ranges may overlap)
				sal[i] = saved[j]
			}
			j++
		})
		return p
	}
	p2 := without(p1)

	both := 0
	for t := range p2 {
		if p2[t] >= 0 && p1[t] >= 0 {
			both++
		}
	}
	if float64(both) < sourceMinShare*float64(voiced1) || both < sourceMinFrames*sourceEvery {
		return nil, "", nil
	}
	sp1, sp2 := lnSpread(p1, comb.logStep), lnSpread(p2, comb.logStep)
	if sp2 < 0.5*sp1 {
		return nil, "", nil
	}
	// A steady first path beside a second that steps: the motor under test
	// is the one whose speed is being stepped.
	steps := sp1 < sourceSteady && sp2 > sourceStepping
	// The second path must be a comb about as clear as the first.
	var v1, v2 []float32
	for t := range p2 {
		if p1[t] >= 0 && p2[t] >= 0 {
			v1 = append(v1, sal[t*K+int(p1[t])])
			v2 = append(v2, sal[t*K+int(p2[t])])
		}
	}
	m1, m2 := dsp.SelectK(v1, len(v1)/2), dsp.SelectK(v2, len(v2)/2)
	if m2 < sourceMinSalience*m1 && !(steps && m2 >= sourceStepSalience*m1) {
		return nil, "", nil
	}

	// The two combs' power ratio on every sourceEvery-th search frame.
	sc := tk.search
	cfg := dsp.STFTConfig{FrameLen: sc.FrameLen, Hop: sc.Hop * sourceEvery, FFTLen: sc.FFTLen, Window: sc.Window, Workers: sc.Workers}.Resolve(tk.fs)
	nf := cfg.NumFrames(len(tk.x))
	diff := make([]float64, nf)
	ok := make([]bool, nf)
	binHz := tk.fs / float64(sc.FFTLen)
	bins := sc.Bins()
	combPower := func(re, im []float32, f float64) float64 {
		// The second strongest blade-pass harmonic: a comb has several
		// lines, a whine tone one.
		var top, second float32
		for m := 1; m <= combHarmonics; m++ {
			b := int(float64(m*B)*f/binHz + 0.5)
			if b < 1 || b+1 >= bins {
				break
			}
			var p float32
			for j := b - 1; j <= b+1; j++ {
				p = max(p, re[j]*re[j]+im[j]*im[j])
			}
			if p > top {
				top, second = p, top
			} else if p > second {
				second = p
			}
		}
		return float64(second)
	}
	err := cfg.Process(ctx, tk.x, tk.fs, func(w, i int, re, im []float32) {
		t := i * sourceEvery
		if t >= T || p1[t] < 0 || p2[t] < 0 {
			return
		}
		a, b := combPower(re, im, tk.grid[p1[t]]), combPower(re, im, tk.grid[p2[t]])
		if a > 0 && b > 0 {
			diff[i], ok[i] = math.Log(b/a), true
		}
	}, nil)
	if err != nil {
		return nil, "", fmt.Errorf("analysis: tracking: %w", err)
	}
	var d []float64
	for i, v := range diff {
		if ok[i] {
			d = append(d, v)
		}
	}
	if len(d) < sourceMinFrames {
		return nil, "", nil
	}
	slices.Sort(d)
	med := d[len(d)/2]
	f1, f2 := medianSpeed(p1, tk.grid), medianSpeed(p2, tk.grid)
	// The source to take out: the first path, except where the nearest
	// compared frame found it the louder comb (there it followed the
	// motor) — unless it is steady, when it is the other source throughout.
	other := p1
	if !steps {
		other = slices.Clone(p1)
		for t := range other {
			i := min(len(diff)-1, (t+sourceEvery/2)/sourceEvery)
			if ok[i] && diff[i] <= 0 {
				other[t] = -1
			}
		}
	}
	switch {
	case med > sourceMargin && d[len(d)/4] > sourceMargin/2 && m2 >= sourceMinSalience*m1:
		return without(other), fmt.Sprintf("two harmonic sources: the track follows the louder one (median %.0f rpm, %.0f dB above the other at median %.0f rpm); check that the motor under test is the loudest machine at the microphone",
			RPM(f2), 10*med/math.Ln10, RPM(f1)), nil
	case steps && med > -sourceStepQuieter:
		return without(other), fmt.Sprintf("two harmonic sources: the track follows the one whose speed changes (median %.0f rpm, %+.0f dB against the steady one at %.0f rpm); check that the motor under test is the one stepped",
			RPM(f2), 10*med/math.Ln10, RPM(f1)), nil
	}
	return nil, "", nil
}

// lnSpread returns the 10–90 % spread of ln f over the voiced frames of a
// path, in candidate steps times logStep.
func lnSpread(p []int32, logStep float64) float64 {
	var ks []int32
	for _, k := range p {
		if k >= 0 {
			ks = append(ks, k)
		}
	}
	if len(ks) < 2 {
		return 0
	}
	slices.Sort(ks)
	return float64(ks[len(ks)*9/10]-ks[len(ks)/10]) * logStep
}

// medianSpeed returns the median candidate frequency over a path's voiced
// frames.
func medianSpeed(p []int32, grid []float64) float64 {
	var ks []int32
	for _, k := range p {
		if k >= 0 {
			ks = append(ks, k)
		}
	}
	if len(ks) == 0 {
		return 0
	}
	slices.Sort(ks)
	return grid[ks[len(ks)/2]]
}
