package analysis

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// StepFit is a fitted step: enough to redraw its model and 95 % band.
// Speeds are in rpm, times in seconds from the start of the recording.
type StepFit struct {
	// FromS and ToS bound the stretch of track the fit used.
	FromS, ToS float64
	// CommandS is the command time (NaN when not known), OnsetS the
	// response start tc + θ.
	CommandS, OnsetS float64
	// RPMBefore and DeltaRPM are r0 and Δ; TauS the time constant.
	RPMBefore, DeltaRPM, TauS float64

	k   fopdtKernel
	cov [numPar][numPar]float64 // over (r0 Hz, Δ Hz, t0 s, ln τ)
	tq  float64                 // t quantile of the intervals
}

// Model returns the fitted true speed at tS: r0 before the onset,
// r0 + Δ·(1 − e^{−(t − onset)/τ}) after it.
func (f *StepFit) Model(tS float64) float64 {
	return f.RPMBefore + f.DeltaRPM*fopdtTrue(tS, f.OnsetS, f.TauS)
}

// SeenModel returns the fitted curve as the track sees it: the model
// averaged through the analysis window's kernel. This is what was compared
// with the track samples.
func (f *StepFit) SeenModel(tS float64) float64 {
	ft := f.k.prepare(f.TauS)
	G, _, _ := f.k.seen(tS-f.OnsetS, &ft)
	return f.RPMBefore + f.DeltaRPM*G
}

// Band returns the pointwise 95 % confidence band of the true curve at ts
// (delta method on the parameter covariance, same t quantile as the
// reported intervals).
func (f *StepFit) Band(ts []float64) (lo, hi []float64) {
	lo = make([]float64, len(ts))
	hi = make([]float64, len(ts))
	r0 := ShaftHz(f.RPMBefore)
	dl := ShaftHz(f.DeltaRPM)
	for i, t := range ts {
		u := (t - f.OnsetS) / f.TauS
		var g [numPar]float64
		g[parR0] = 1
		if u > 0 {
			e := math.Exp(-u)
			g[parDelta] = 1 - e
			g[parT0] = -dl * e / f.TauS
			g[parLnTau] = -dl * e * u
		}
		v := 0.0
		for a := 0; a < numPar; a++ {
			for b := 0; b < numPar; b++ {
				v += g[a] * f.cov[a][b] * g[b]
			}
		}
		m := r0 + dl*fopdtTrue(t, f.OnsetS, f.TauS)
		h := f.tq * math.Sqrt(math.Max(v, 0))
		lo[i], hi[i] = RPM(m-h), RPM(m+h)
	}
	return lo, hi
}

// fitPlan fits one planned step and assembles its report.
func fitPlan(tr *Track, k *fopdtKernel, hop float64, p *stepPlan, cfg StepConfig, stepNo uint64) (*StepResult, error) {
	opts := stepFitOpts{commandS: p.commandS, t0Lo: p.onsetLo, t0Hi: p.onsetHi, fixR0: p.standstill}
	d := stepDataFrom(tr, k, hop, p.fromS, p.toS)
	if d.n() < 8 {
		return nil, errNoFit
	}
	nSeen := d.n()
	nOut := dropForeignRuns(d) + despike(d)
	fit, err := fitFOPDT(d, opts)
	if err != nil {
		return nil, err
	}
	// Second pass: keep the settled stretch to a dozen time constants (a
	// long plateau adds drift, not information about τ), and leave out
	// samples the fit shows to be gross outliers (a tracker's harmonic
	// confusions), refitting until none is left.
	tau := math.Exp(fit.p[parLnTau])
	to := math.Min(p.toS, fit.p[parT0]+math.Max(postWindowTaus*tau, minPostWindowS))
	d2 := stepDataFrom(tr, k, hop, p.fromS, to)
	nSeen2 := d2.n()
	nOut2 := dropForeignRuns(d2) + despike(d2)
	if d2.n() >= 8 {
		if f2, err := fitFOPDT(d2, opts); err == nil {
			fit, d = f2, d2
			nSeen, nOut = nSeen2, nOut2
			p.toS = to
		}
	}
	for iter := 0; iter < 4; iter++ {
		dropped := dropOutliers(d, fit, nSeen/4-nOut)
		if dropped == 0 {
			break
		}
		nOut += dropped
		if fit, err = d.refit(fit, opts); err != nil {
			return nil, err
		}
	}

	free := fit.free
	// Correlation is looked for up to four window lengths (a tracker's own
	// smoothing and the rotor's speed wobble may reach beyond one).
	winLag := int(math.Ceil(k.spanS()/hop)) + 1
	maxLag := max(4*winLag, 24)
	cc, err := corrCovariance(fit.J, fit.resid, d.idx, maxLag, kernelAutocorr(tr.Kernel, tr.KernelDtS, hop, maxLag))
	if err != nil {
		return nil, err
	}
	tq := tQuantile975(cc.df)
	if cc.ridged {
		p.notes = append(p.notes, "the track does not determine every parameter (typically a time constant far below the analysis window's resolution); the undetermined interval spans the search range")
	}
	var cov [numPar][numPar]float64
	for a, qa := range free {
		for b, qb := range free {
			cov[qa][qb] = cc.cov.At(a, b)
		}
	}
	// A variance that overflowed (an undetermined direction) is an
	// unbounded interval, never a collapsed one.
	half := func(q int) float64 {
		v := cov[q][q]
		if !(v >= 0) || math.IsInf(v, 0) {
			return math.Inf(1)
		}
		return tq * math.Sqrt(v)
	}
	// Model-error floors, added in quadrature: the noise statistics cannot
	// see that a track is only approximately the window-averaged speed
	// (peak picking of a line swept within one frame, reverberation
	// holding the old speed). On the project's synthesizer these biases
	// reach a few per cent of τ and about a millisecond of onset at high
	// signal-to-noise ratio, where the statistical interval alone is far
	// narrower.
	withFloor := func(h, floor float64) float64 { return math.Hypot(h, floor) }
	hLnTau := withFloor(half(parLnTau), tauFloorRel)
	hT0 := withFloor(half(parT0), onsetFloorS)
	// Keep the covariance consistent with the floors for derived values
	// and the band: scale the variances, keep the correlations.
	for _, q := range []int{parLnTau, parT0} {
		h := half(q)
		want := hLnTau
		if q == parT0 {
			want = hT0
		}
		if h > 0 && !math.IsInf(h, 0) {
			f := want / h
			for b := 0; b < numPar; b++ {
				cov[q][b] *= f
				cov[b][q] *= f
			}
		}
	}
	var notes []string
	notes = append(notes, p.notes...)

	// Bootstrap cross-check: widen the analytic interval where the
	// bootstrap's is wider (rarely by much when the analytic one holds).
	lnTau := fit.p[parLnTau]
	tauLo, tauHi := math.Exp(lnTau-hLnTau), math.Exp(lnTau+hLnTau)
	// Tracker lag, on the early side only: a track whose line trails the
	// window-averaged speed near the onset only ever makes the onset look
	// later (reverberation is causal: it mixes in only speeds already
	// left; a line that sweeps within the frame is read where it was
	// strongest). Such a lag cannot be told from dead time. Where the
	// tracker itself saw the line smeared through the transition (its
	// error estimate well above the old plateau's), the early side allows
	// for a lag of up to a share of the window's time resolution (its
	// kernel's standard deviation), in quadrature.
	t0Lo, t0Hi := fit.p[parT0]-hT0, fit.p[parT0]+hT0
	if smearedOnset(tr, p, fit.p[parT0], math.Exp(fit.p[parLnTau]), k) {
		t0Lo = fit.p[parT0] - math.Hypot(hT0, onsetLagShare*k.sdS())
	}
	if cfg.Bootstrap > 0 {
		lower, upper := fitBounds(d, opts, free)
		scale := math.Sqrt(cc.scale * float64(d.n()) / math.Max(fit.rss, 1e-300))
		bs := blockBootstrap(d, fit, lower, upper, winLag, cfg.Bootstrap, scale, cfg.Seed^(stepNo*0x9e3779b97f4a7c15))
		if bs != nil {
			for c, q := range free {
				switch q {
				case parLnTau:
					blo, bhi := math.Exp(bs.lo[c]), math.Exp(bs.hi[c])
					if blo < tauLo/1.5 || bhi > tauHi*1.5 {
						notes = append(notes, fmt.Sprintf("the bootstrap interval of τ (%.4g–%.4g s) is much wider than the analytic one; both are merged", blo, bhi))
					}
					tauLo, tauHi = math.Min(tauLo, blo), math.Max(tauHi, bhi)
				case parT0:
					t0Lo, t0Hi = math.Min(t0Lo, bs.lo[c]), math.Max(t0Hi, bs.hi[c])
				}
			}
		}
	}

	// Local-influence check: the delete-a-block jackknife sees what the
	// residual statistics cannot, a few neighbouring samples (a stretch of
	// tracker trouble near the onset) that decide θ or τ on their own.
	// It widens only where it is well beyond the analytic half-width (on
	// clean tracks the two agree within their own scatter).
	if jk := blockJackknife(d, fit, opts, winLag); jk != nil {
		for c, q := range free {
			h := tq * jk[c].sd
			switch q {
			case parLnTau:
				if h > jackknifeWiden*hLnTau {
					tauLo, tauHi = math.Min(tauLo, math.Exp(lnTau-h)), math.Max(tauHi, math.Exp(lnTau+h))
				}
			case parT0:
				if h > jackknifeWidenOnset*hT0 {
					t0Lo, t0Hi = math.Min(t0Lo, fit.p[parT0]-h), math.Max(t0Hi, fit.p[parT0]+h)
				}
			}
		}
	}

	// Model check: the rise seen after the kernel has left the onset is a
	// plain exponential, and on its own (with r0 held) it fixes τ and, by
	// extrapolation, the onset. When the tracker lags or sharpens the
	// transition (reverberation holding the old line, a late hand-over
	// between lines) the two readings disagree by more than their noise;
	// the intervals then cover both.
	if tc := tailCheck(d, fit, opts, k, hop, maxLag); tc != nil {
		hT := math.Hypot(hT0, tc.hT0)
		hL := math.Hypot(hLnTau, tc.hLnTau)
		if math.Abs(tc.t0-fit.p[parT0]) > hT || math.Abs(tc.lnTau-lnTau) > hL {
			t0Lo, t0Hi = math.Min(t0Lo, tc.t0-tc.hT0), math.Max(t0Hi, tc.t0+tc.hT0)
			tauLo, tauHi = math.Min(tauLo, math.Exp(tc.lnTau-tc.hLnTau)), math.Max(tauHi, math.Exp(tc.lnTau+tc.hLnTau))
			notes = append(notes, fmt.Sprintf("the rise after the onset alone gives τ = %.4g s and an onset %.1f ms %s, against %.4g s from the whole step: the track's transition does not look like the window-averaged first-order curve (a lagging or jumping tracker); the intervals cover both", math.Exp(tc.lnTau), 1e3*math.Abs(tc.t0-fit.p[parT0]), map[bool]string{true: "later", false: "earlier"}[tc.t0 > fit.p[parT0]], math.Exp(lnTau)))
			// A tracker that holds the old line and catches the new one
			// late shows a transition sharper than the rotor's; the rise
			// after it is the better reading then (on the project's
			// synthesizer it was closer to the truth in 13 of 16 such
			// steps, and the whole-step reading in 3, by less).
			if tc.lnTau > lnTau {
				fit.p, lnTau = tc.p, tc.lnTau
				d.finish(fit)
				fit.rss = 0
				for _, r := range fit.resid {
					fit.rss += r * r
				}
				notes = append(notes, "the transition looks sharper than the rise after it; the values reported are those of the rise after it")
			}
		}
	}
	// Two readings of one rise that disagree widely (the fit and the
	// two-point estimate, which sees only the 28 % and 63 % crossings) mean
	// the track's shape is not the model's; cover both.
	if st, s0 := fit.smith[0], fit.smith[1]; smithDisagrees(st, math.Exp(lnTau), k) {
		tauLo, tauHi = math.Min(tauLo, st), math.Max(tauHi, st)
		t0Lo, t0Hi = math.Min(t0Lo, s0), math.Max(t0Hi, s0)
	}
	// Departure check: the track leaving the old level before the fitted
	// curve can (a stretch of lag, a tracker that stalled on the old or an
	// intermediate line and so pulled the fitted onset late) means the
	// onset may be as early as the one that lets the curve depart with the
	// track; the interval covers that reading too. It is one-sided: a
	// track that departs late (held by reverberation) says nothing here.
	if s := earlyDeparture(tr, fit, p, k, hop); s > 0 {
		t0Lo = math.Min(t0Lo, fit.p[parT0]-s-hT0)
		notes = append(notes, fmt.Sprintf("the track leaves the old speed %.1f ms before the fitted curve can; the onset interval covers an onset that much earlier", 1e3*s))
	}
	// A step the track shows as a jump (τ at the bottom of its range), or
	// whose onset ran to the end of its search, could have begun any time
	// after the command up to where the track moves.
	if p.hasCommand() && (lnTau <= math.Log(tauMinS)+1e-6 || p.onsetHi-fit.p[parT0] < 1e-4) {
		t0Lo = math.Min(t0Lo, p.commandS)
	}
	// A jump says only that τ is below what the window resolves (about
	// twice the kernel's sd); the curvature at the bound says nothing more.
	if lnTau <= math.Log(tauMinS)+1e-6 {
		tauHi = math.Max(tauHi, 2*k.sdS())
	}

	// A fit in which the change of speed is not told from none (a track
	// that stays flat through the step: the wrong line followed, or no
	// response) or in which some direction is undetermined says nothing of
	// τ or of the onset within their search ranges.
	if dh := tq * math.Sqrt(math.Max(cov[parDelta][parDelta], 0)); cc.ridged || !(math.Abs(fit.p[parDelta]) > dh) {
		tauLo, tauHi = tauMinS, tauMaxS
		t0Lo, t0Hi = math.Min(t0Lo, p.onsetLo), math.Max(t0Hi, p.onsetHi)
		if p.hasCommand() {
			t0Lo = math.Min(t0Lo, p.commandS)
		}
	}
	// An interval reaching past the search range says only that the data
	// cannot narrow it further; keep every bound finite (and JSON-safe).
	tauLo, tauHi = clampFinite(tauLo, tauMinS, tauMaxS), clampFinite(tauHi, tauMinS, tauMaxS)
	// (A start from standstill seen late may have its onset before the
	// first sample fitted.)
	tFirst := math.Min(p.fromS, p.onsetLo)
	t0Lo, t0Hi = clampFinite(t0Lo, tFirst, p.toS), clampFinite(t0Hi, tFirst, p.toS)
	r0, dl, t0 := fit.p[parR0], fit.p[parDelta], fit.p[parT0]
	tau = math.Exp(lnTau)
	res := &StepResult{Direction: Up, ResponseStartS: t0}
	if dl < 0 {
		res.Direction = Down
	}
	rpmEst := func(v float64, g [numPar]float64) Estimate {
		s := 0.0
		for a := 0; a < numPar; a++ {
			for b := 0; b < numPar; b++ {
				s += g[a] * cov[a][b] * g[b]
			}
		}
		h := tq * math.Sqrt(math.Max(s, 0))
		return Estimate{Value: RPM(v), CI95: [2]float64{RPM(v - h), RPM(v + h)}}
	}
	res.RPMBefore = rpmEst(r0, [numPar]float64{parR0: 1})
	res.RPMAfter = rpmEst(r0+dl, [numPar]float64{parR0: 1, parDelta: 1})
	res.DeltaRPM = rpmEst(dl, [numPar]float64{parDelta: 1})
	res.TauS = Estimate{Value: tau, CI95: [2]float64{tauLo, tauHi}}
	res.Rise1090S = Estimate{Value: tau * math.Log(9), CI95: [2]float64{tauLo * math.Log(9), tauHi * math.Log(9)}}
	res.BandwidthHz = Estimate{Value: 1 / (2 * math.Pi * tau), CI95: [2]float64{1 / (2 * math.Pi * tauHi), 1 / (2 * math.Pi * tauLo)}}
	lin := func(v float64, g [numPar]float64) *Estimate {
		s := 0.0
		for a := 0; a < numPar; a++ {
			for b := 0; b < numPar; b++ {
				s += g[a] * cov[a][b] * g[b]
			}
		}
		h := tq * math.Sqrt(math.Max(s, 0))
		return &Estimate{Value: v, CI95: [2]float64{v - h, v + h}}
	}
	if p.hasCommand() {
		c := p.commandS
		res.CommandS = &c
		th := t0 - c
		res.DeadTimeS = &Estimate{Value: th, CI95: [2]float64{math.Max(t0Lo-c, 0), math.Max(t0Hi-c, 0)}}
		res.T63S = lin(th+tau, [numPar]float64{parT0: 1, parLnTau: tau})
		res.T95S = lin(th+3*tau, [numPar]float64{parT0: 1, parLnTau: 3 * tau})
		// Never wider than the bounds of θ and τ together allow, never
		// negative.
		thLo, thHi := res.DeadTimeS.CI95[0], res.DeadTimeS.CI95[1]
		for n, e := range []*Estimate{res.T63S, res.T95S} {
			mult := float64(2*n + 1)
			e.CI95[0] = clampFinite(e.CI95[0], thLo+mult*tauLo, thHi+mult*tauHi)
			e.CI95[1] = clampFinite(e.CI95[1], thLo+mult*tauLo, thHi+mult*tauHi)
		}
		if p.onsetHi-t0 < 1e-4 && p.onsetHi > p.onsetLo {
			notes = append(notes, fmt.Sprintf("θ ended at the limit of its search (%.0f ms after the command); check the command time", 1e3*(p.onsetHi-c)))
		}
		if th < 1e-4 {
			notes = append(notes, "the response starts at (or before) the command time: θ is held at 0; check the command time")
		}
		if res.DeltaRPM.CI95[0] <= 0 && res.DeltaRPM.CI95[1] >= 0 {
			notes = append(notes, "no significant change of speed follows the command")
		}
	} else {
		notes = append(notes, "dead time needs the command time (give it, or record the command on a trigger channel); the response start is reported instead")
	}

	// Goodness of fit in rpm.
	m := make([]float64, d.n())
	d.model(m, nil, &fit.p, free)
	ss := 0.0
	for i := range m {
		e := d.y[i] - m[i]/d.sw[i]
		ss += e * e
	}
	res.ResidualRMSRPM = RPM(math.Sqrt(ss / float64(d.n())))
	res.R2 = 1 - fit.rss/math.Max(fit.tss, 1e-300)

	if res.R2 < poorR2 || res.ResidualRMSRPM > poorRelativeRMS*math.Abs(RPM(dl)) {
		notes = append(notes, fmt.Sprintf("poor fit: R² = %.3f, residual RMS %.0f rpm for a change of %.0f rpm", res.R2, res.ResidualRMSRPM, math.Abs(RPM(dl))))
	}
	if after := p.toS - t0; after < settledTaus*tau {
		notes = append(notes, fmt.Sprintf("only %.0f ms (%.1f τ) of track follow the response start before the next step or the end; at least %d τ are needed to see it settle", after*1e3, after/tau, settledTaus))
	}
	if lnTau <= math.Log(tauMinS)+1e-6 || lnTau >= math.Log(tauMaxS)-1e-6 {
		notes = append(notes, "τ ended at the limit of its search range; the step may not be first-order")
	}
	if tauLo > 0 && tauHi/tauLo > 3 {
		notes = append(notes, fmt.Sprintf("τ is poorly determined (95 %% interval %.4g–%.4g s)", tauLo, tauHi))
	}
	if st := fit.smith[0]; smithDisagrees(st, tau, k) {
		notes = append(notes, fmt.Sprintf("the two-point estimate (Smith: 28.3 %%/63.2 %%) gives τ = %.4g s against the fitted %.4g s; check the step's shape (the intervals cover both)", st, tau))
	}
	if nOut > nSeen/20 {
		notes = append(notes, fmt.Sprintf("%d of %d track samples left out of the fit as outliers", nOut, nSeen))
	}
	if notes == nil {
		notes = []string{}
	}
	res.Warnings = notes

	sf := &StepFit{FromS: p.fromS, ToS: p.toS, CommandS: p.commandS, OnsetS: t0,
		RPMBefore: RPM(r0), DeltaRPM: RPM(dl), TauS: tau, k: *k, cov: cov, tq: tq}
	res.Fit = sf
	return res, nil
}

// jackknifeWiden is how far beyond the analytic half-width the jackknife's
// must reach before it widens an interval.
// The onset sits at a kink of the model, where the jackknife is known to
// overstate the spread (as for a median); it must reach further.
const (
	jackknifeWiden      = 1.5
	jackknifeWidenOnset = 3
)

// maxJackknifeBlocks bounds the refits of blockJackknife.
const maxJackknifeBlocks = 32

type jackSD struct{ sd float64 }

// blockJackknife is the delete-a-group jackknife over contiguous blocks of
// at least block samples (M. H. Quenouille 1956 and J. W. Tukey 1958 for the
// jackknife, H. R. Künsch 1989 for blocks of dependent data; from memory):
// each block is left out in turn, the fit polished from the full solution,
// and var = (g − 1)/g · Σ (θ_j − θ̄)². It returns the standard deviation of
// each free parameter, or nil with fewer than eight blocks.
func blockJackknife(d *stepData, fit *stepFitOut, o stepFitOpts, block int) []jackSD {
	n := d.n()
	L := max(block, (n+maxJackknifeBlocks-1)/maxJackknifeBlocks)
	g := n / L
	if g < 8 {
		return nil
	}
	lower, upper := fitBounds(d, o, fit.free)
	np := len(fit.free)
	vals := make([][]float64, np)
	sub := &stepData{hop: d.hop, k: d.k}
	for j := 0; j < g; j++ {
		lo, hi := j*L, (j+1)*L
		if j == g-1 {
			hi = n
		}
		sub.t, sub.y, sub.sw, sub.idx = sub.t[:0], sub.y[:0], sub.sw[:0], sub.idx[:0]
		for i := 0; i < n; i++ {
			if i >= lo && i < hi {
				continue
			}
			sub.t = append(sub.t, d.t[i])
			sub.y = append(sub.y, d.y[i])
			sub.sw = append(sub.sw, d.sw[i])
			sub.idx = append(sub.idx, d.idx[i])
		}
		if sub.n() <= np+2 {
			return nil
		}
		res, _, err := sub.polish(fit.p, fit.free, lower, upper)
		if err != nil && !res.Converged && !errors.Is(err, ErrNoProgress) {
			continue
		}
		for c := range fit.free {
			vals[c] = append(vals[c], res.P[c])
		}
	}
	m := len(vals[0])
	if m < g-1 || m < 8 {
		return nil
	}
	out := make([]jackSD, np)
	for c := range vals {
		mean := 0.0
		for _, v := range vals[c] {
			mean += v
		}
		mean /= float64(m)
		ss := 0.0
		for _, v := range vals[c] {
			ss += (v - mean) * (v - mean)
		}
		out[c].sd = math.Sqrt(float64(m-1) / float64(m) * ss)
	}
	return out
}

// tailResult is the model check of tailCheck: onset and ln τ from the rise
// after the onset, with their 95 % half-widths.
type tailResult struct {
	t0, lnTau, hT0, hLnTau float64
	p                      [numPar]float64
}

// tailCheck refits a step on the samples past the kernel's reach of the
// fitted onset, r0 held at its fitted value. It returns nil when that
// stretch holds too little of the rise to say anything (a fast step, a
// short window).
func tailCheck(d *stepData, fit *stepFitOut, o stepFitOpts, k *fopdtKernel, hop float64, maxLag int) *tailResult {
	tau := math.Exp(fit.p[parLnTau])
	from := fit.p[parT0] + k.right + hop
	if tau < 3*hop || d.n() == 0 || d.t[d.n()-1]-from < 3*tau {
		return nil
	}
	// The rise left after from must be a fair share of the change.
	if math.Exp(-(from-fit.p[parT0])/tau) < 0.3 {
		return nil
	}
	td := &stepData{hop: d.hop, k: d.k}
	for i, t := range d.t {
		if t >= from {
			td.t = append(td.t, t)
			td.y = append(td.y, d.y[i])
			td.sw = append(td.sw, d.sw[i])
			td.idx = append(td.idx, d.idx[i])
		}
	}
	if td.n() < 16 {
		return nil
	}
	to := o
	to.fixR0, to.r0 = true, fit.p[parR0]
	to.t0Hi = math.Min(o.t0Hi+tau, from)
	to.t0Lo = math.Min(o.t0Lo, to.t0Hi)
	tf, err := fitFOPDT(td, to)
	if err != nil {
		return nil
	}
	cc, err := corrCovariance(tf.J, tf.resid, td.idx, maxLag, kernelAutocorr(nil, 0, hop, maxLag))
	if err != nil || cc.ridged {
		return nil
	}
	tq := tQuantile975(cc.df)
	var hT, hL float64
	for c, q := range tf.free {
		switch q {
		case parT0:
			hT = tq * math.Sqrt(cc.cov.At(c, c))
		case parLnTau:
			hL = tq * math.Sqrt(cc.cov.At(c, c))
		}
	}
	if !(hT > 0) || !(hL > 0) || math.IsInf(hT, 0) || math.IsInf(hL, 0) {
		return nil
	}
	return &tailResult{t0: tf.p[parT0], lnTau: tf.p[parLnTau], hT0: math.Hypot(hT, onsetFloorS), hLnTau: math.Hypot(hL, tauFloorRel), p: tf.p}
}

// smithDisagrees reports whether the two-point τ differs from the fitted
// one by more than a factor 1.6, for a step slow enough (τ above three
// kernel sds) that the two-point reading, which ignores the window, should
// agree.
func smithDisagrees(st, tau float64, k *fopdtKernel) bool {
	return !math.IsNaN(st) && st > 0 && tau > 3*k.sdS() && (st > 1.6*tau || st < tau/1.6)
}

// clampFinite limits v to [lo, hi] (NaN becomes lo).
func clampFinite(v, lo, hi float64) float64 {
	if math.IsNaN(v) {
		return lo
	}
	return math.Min(math.Max(v, lo), hi)
}

// Floors of the 95 % half-widths for what the noise does not show (see
// fitPlan): 2 % of τ (on ln τ) and 1 ms of onset (the tracker's timing on
// the project's synthesizer; invented tracks without it still keep θ
// coverage below 99 %).
const (
	tauFloorRel = 0.02
	onsetFloorS = 0.001
)

// onsetLagShare is the tracker lag the early side of the onset interval
// allows for, in kernel standard deviations, where the line was smeared
// through the transition: the tracker's median error estimate over the
// first τ (at most a window span) after the onset at least smearRatio times
// that over the plateau before the search range (see fitPlan).
const (
	onsetLagShare = 0.5
	smearRatio    = 2
)

// smearedOnset reports whether the tracker's error estimates through the
// transition after onset t0 are at least smearRatio times those before the
// step's search range.
func smearedOnset(tr *Track, p *stepPlan, t0, tau float64, k *fopdtKernel) bool {
	if len(tr.SigmaHz) != tr.Len() {
		return false
	}
	var pre, at []float64
	end := t0 + math.Min(tau, k.spanS())
	for i, t := range tr.TimeS {
		s := tr.SigmaHz[i]
		if !tr.Valid(i) || !(s > 0) || math.IsInf(s, 0) {
			continue
		}
		if t >= p.fromS && t < p.onsetLo {
			pre = append(pre, s)
		}
		if t >= t0 && t <= end {
			at = append(at, s)
		}
	}
	if len(pre) < 4 || len(at) < 2 {
		return false
	}
	return median(at) >= smearRatio*median(pre)
}

// fitBounds returns the bounds Levenberg–Marquardt keeps the free
// parameters in: the onset within its search range (not before the command),
// τ within the search range.
func fitBounds(d *stepData, o stepFitOpts, free []int) (lower, upper []float64) {
	for _, q := range free {
		lo, hi := math.Inf(-1), math.Inf(1)
		switch q {
		case parT0:
			lo, hi = o.t0Lo-d.hop, o.t0Hi+d.hop
			if !math.IsNaN(o.commandS) {
				lo = o.commandS
			}
		case parLnTau:
			lo, hi = math.Log(tauMinS), math.Log(tauMaxS)
		}
		lower = append(lower, lo)
		upper = append(upper, hi)
	}
	return lower, upper
}

// outlierK is the residual, in robust standard deviations, beyond which a
// track sample counts as a gross outlier.
const outlierK = 8

// dropOutliers removes from d the samples whose weighted residual under fit
// lies beyond outlierK robust standard deviations (1.4826·MAD), the worst
// first and at most limit of them. It returns how many went.
func dropOutliers(d *stepData, fit *stepFitOut, limit int) int {
	if limit <= 0 || d.n() != len(fit.resid) {
		return 0
	}
	m := make([]float64, d.n())
	d.model(m, nil, &fit.p, fit.free)
	r := make([]float64, d.n())
	for i := range r {
		r[i] = d.sw[i]*d.y[i] - m[i]
	}
	lag := max(1, int(math.Ceil(d.k.spanS()/d.hop)))
	return d.dropBeyondK(r, limit, robustNoise(d.y, lag), fitOutlierK)
}

// fitOutlierK is the residual, in robust standard deviations, beyond which
// a sample counts as off the fitted curve. It is lower than outlierK: the
// fitted curve is a far better reference than a running median, and a
// run of samples on another line (the tracker's confusion, often with
// small error estimates) must not stay in to pull the onset.
const fitOutlierK = 5

// maxForeignRunS is the longest run of samples dropForeignRuns removes.
const maxForeignRunS = 0.25

// dropForeignRuns removes runs of samples that the track enters and leaves
// by jumps no change of speed could make: jumps sharper than the analysis
// window lets any step through (the kernel's largest mass within one hop
// times the step's whole size, with margin). Such a run is the tracker
// following another line for a while (mains hum, another machine), not
// the rotor. Only runs shorter than maxForeignRunS with genuine samples on
// both sides are removed. It returns how many samples went.
func dropForeignRuns(d *stepData) int {
	n := d.n()
	if n < 16 {
		return 0
	}
	head := median(d.y[:max(3, n/10)])
	tail := median(d.y[n-max(3, n/5):])
	diffs := make([]float64, 0, n-1)
	for i := 1; i < n; i++ {
		diffs = append(diffs, math.Abs(d.y[i]-d.y[i-1]))
	}
	noise := 1.4826 * median(diffs)
	maxJump := 1.5*math.Abs(tail-head)*d.k.maxMass(d.hop) + 8*noise
	if !(maxJump > 0) {
		return 0
	}
	// Segments split at impossible jumps (a gap of g hops allows g jumps).
	var cuts []int
	for i := 1; i < n; i++ {
		gap := math.Max(1, float64(d.idx[i]-d.idx[i-1]))
		if math.Abs(d.y[i]-d.y[i-1]) > maxJump*gap {
			cuts = append(cuts, i)
		}
	}
	if len(cuts) < 2 {
		return 0
	}
	drop := make([]bool, n)
	dropped := 0
	for c := 0; c+1 < len(cuts); c++ {
		a, b := cuts[c], cuts[c+1] // run a..b−1, entered and left by jumps
		if d.t[b-1]-d.t[a] > maxForeignRunS {
			continue
		}
		// The samples either side must be consistent with each other
		// across the run (the rotor went on; the tracker went elsewhere).
		gap := float64(d.idx[b] - d.idx[a-1])
		if math.Abs(d.y[b]-d.y[a-1]) > maxJump*gap {
			continue
		}
		for i := a; i < b; i++ {
			drop[i] = true
			dropped++
		}
		c++ // the run's closing jump cannot open another run
	}
	if dropped == 0 {
		return 0
	}
	keep := 0
	for i := 0; i < n; i++ {
		if drop[i] {
			continue
		}
		d.t[keep], d.y[keep], d.sw[keep], d.idx[keep] = d.t[i], d.y[i], d.sw[i], d.idx[i]
		keep++
	}
	d.t, d.y, d.sw, d.idx = d.t[:keep], d.y[:keep], d.sw[:keep], d.idx[:keep]
	return dropped
}

// despike removes samples that stand out from the running median of five
// neighbours (in sample order) by more than outlierK robust standard
// deviations of that difference, at most a quarter of them. A monotone
// stretch, however steep, is its own running median, so a fast transition
// is never touched. The scale is never below the track's own noise (from
// differences one analysis window apart): noise correlated over many frames
// is locally monotone too, so the differences from the running median are
// mostly exactly zero and their MAD alone would call every noise extreme a
// spike. It returns how many went.
func despike(d *stepData) int {
	n := d.n()
	if n < 8 {
		return 0
	}
	e := make([]float64, n)
	win := make([]float64, 0, 5)
	for i := range e {
		win = win[:0]
		for j := max(0, i-2); j <= min(n-1, i+2); j++ {
			win = append(win, d.y[j])
		}
		e[i] = d.sw[i] * (d.y[i] - median(win))
	}
	lag := max(1, int(math.Ceil(d.k.spanS()/d.hop)))
	return d.dropBeyond(e, n/4, robustNoise(d.y, lag))
}

// dropBeyond removes the samples whose e lies beyond outlierK·1.4826·MAD(e)
// from the median of e (the robust sd taken as at least floor), the largest
// first, at most limit.
func (d *stepData) dropBeyond(e []float64, limit int, floor float64) int {
	return d.dropBeyondK(e, limit, floor, outlierK)
}

// dropBeyondK is dropBeyond with the threshold k robust sds.
func (d *stepData) dropBeyondK(e []float64, limit int, floor, k float64) int {
	med := median(e)
	abs := make([]float64, len(e))
	for i := range e {
		abs[i] = math.Abs(e[i] - med)
	}
	mad := math.Max(1.4826*median(abs), floor)
	if !(mad > 0) {
		return 0
	}
	var bad []int
	for i, a := range abs {
		if a > k*mad {
			bad = append(bad, i)
		}
	}
	if len(bad) > limit {
		sort.Slice(bad, func(a, b int) bool { return abs[bad[a]] > abs[bad[b]] })
		bad = bad[:max(limit, 0)]
	}
	if len(bad) == 0 {
		return 0
	}
	drop := make([]bool, len(e))
	for _, i := range bad {
		drop[i] = true
	}
	keep := 0
	for i := range e {
		if drop[i] {
			continue
		}
		d.t[keep], d.y[keep], d.sw[keep], d.idx[keep] = d.t[i], d.y[i], d.sw[i], d.idx[i]
		keep++
	}
	d.t, d.y, d.sw, d.idx = d.t[:keep], d.y[:keep], d.sw[:keep], d.idx[:keep]
	return len(bad)
}

// Departure check: the track departs where it goes, and stays until the
// fitted curve departs (one sample excepted), departNoiseK noise standard
// deviations beyond the old level in the step's direction, over at least
// departK samples. The curve departs where it is departModelK deviations
// beyond: a track that rises slowly out of its noise crosses the higher
// limit early by chance, before the curve itself reaches it, and the
// check must not take that for an early onset.
const (
	departK      = 3
	departNoiseK = 3
	departModelK = 1
)

// earlyDeparture returns how much earlier than the fitted seen curve the
// track leaves the old level for good (s), or 0 when it does not do so by
// more than a hop. Both are read against the same per-sample noise (the
// larger of the tracker's error estimate and the robust spread of the
// samples before the search range), from the start of the search range
// less the kernel's reach.
func earlyDeparture(tr *Track, fit *stepFitOut, p *stepPlan, k *fopdtKernel, hop float64) float64 {
	r0, dl, t0 := fit.p[parR0], fit.p[parDelta], fit.p[parT0]
	if !(math.Abs(dl) > 0) || len(tr.SigmaHz) != tr.Len() {
		return 0
	}
	sg := math.Copysign(1, dl)
	from := p.onsetLo + k.left
	var pre []float64
	for i, t := range tr.TimeS {
		if t >= p.fromS && t < from && tr.Valid(i) {
			pre = append(pre, tr.ShaftHz[i])
		}
	}
	// The spread of the old level itself (median absolute deviation): the
	// track's errors are correlated over a window, so its level wanders
	// further than sample-to-sample noise suggests.
	floor := 0.0
	if len(pre) >= 8 {
		m := median(pre)
		for i := range pre {
			pre[i] = math.Abs(pre[i] - m)
		}
		floor = 1.4826 * median(pre)
	}
	lim := func(i int) float64 { return departNoiseK * math.Max(tr.SigmaHz[i], floor) }
	// The fitted curve's departure (it is monotone: the first run).
	ft := k.prepare(math.Exp(fit.p[parLnTau]))
	modelDep, last := math.NaN(), -1
	run := 0
	var start float64
	for i, t := range tr.TimeS {
		if t < from || t > p.toS || !tr.Valid(i) || !(lim(i) > 0) {
			continue
		}
		if sg*dl*k.seenG(t-t0, &ft) <= lim(i)*departModelK/departNoiseK {
			run = 0
			last = i
			continue
		}
		if run == 0 {
			start = t
		}
		if run++; run == departK {
			modelDep = start
			break
		}
	}
	if math.IsNaN(modelDep) || last < 0 {
		return 0
	}
	// The track's: the run of samples beyond the limit that reaches the
	// last one before the curve departs.
	n, misses := 0, 0
	trackDep := math.NaN()
	for i := last; i >= 0 && tr.TimeS[i] >= from; i-- {
		if tr.Valid(i) && lim(i) > 0 && sg*(tr.ShaftHz[i]-r0) > lim(i) {
			n++
			trackDep = tr.TimeS[i]
			continue
		}
		if misses++; misses > 1 {
			break
		}
	}
	if n < departK {
		return 0
	}
	if s := modelDep - trackDep; s > hop {
		return s
	}
	return 0
}
