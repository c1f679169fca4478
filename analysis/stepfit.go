package analysis

import (
	"errors"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// stepData is the stretch of a track that one step is fitted on.
type stepData struct {
	t   []float64 // sample times, s
	y   []float64 // shaft frequency, Hz
	sw  []float64 // √weight of each sample (mean weight 1)
	idx []int     // sample index on the track's uniform frame grid
	hop float64   // frame hop, s
	k   *fopdtKernel
}

func (d *stepData) n() int { return len(d.t) }

// Parameter order of a FOPDT fit: r0 and Δ in Hz, onset t0 = tc + θ in s,
// ln τ (τ in s). Fitting ln τ keeps τ positive and makes its interval
// asymmetric, as it is at low signal-to-noise ratio.
const (
	parR0 = iota
	parDelta
	parT0
	parLnTau
	numPar
)

// stepFitOpts constrains one fit.
type stepFitOpts struct {
	// commandS is the command time (NaN when unknown); with it the onset
	// is kept at or after the command (θ ≥ 0).
	commandS float64
	// t0Lo..t0Hi is the range searched for the onset.
	t0Lo, t0Hi float64
	// fixR0 holds r0 at r0 (a start from standstill, where the speed
	// before the step is 0 and not seen by the tracker).
	fixR0 bool
	r0    float64
}

// stepFitOut is the least-squares solution of one step.
type stepFitOut struct {
	p     [numPar]float64
	free  []int       // indices of fitted parameters
	resid []float64   // weighted residuals √w·(y − m)
	J     *mat.Dense  // weighted model Jacobian over the free parameters
	rss   float64     // Σ resid²
	tss   float64     // weighted total sum of squares about the mean
	smith [2]float64  // two-point (Smith 1972) τ and t0; NaN if not found
	lm    LMResult    // the polishing run
	prof  []profPoint // profile of RSS over the onset (for diagnostics)
}

type profPoint struct{ t0, tau, rss float64 }

// Bounds of the τ search. 0.3 ms is far below any rotor's mechanical time
// constant; 2 s is far above (common practice for small propellers).
const (
	tauMinS = 3e-4
	tauMaxS = 2.0
)

// profileSamples bounds the samples the profile search uses; maxStarts
// the grid points polished.
const (
	profileSamples = 200
	maxStarts      = 6
)

// errNoFit is returned when a step has too little data to fit.
var errNoFit = errors.New("analysis: too few track samples to fit the step")

// model writes the seen model and (when J != nil) its Jacobian over free
// parameters; sqrt weights are applied to both.
func (d *stepData) model(dst []float64, J *mat.Dense, p *[numPar]float64, free []int) {
	tau := math.Exp(p[parLnTau])
	ft := d.k.prepare(tau)
	for i, t := range d.t {
		G, dGds, dGdtau := d.k.seen(t-p[parT0], &ft)
		dst[i] = d.sw[i] * (p[parR0] + p[parDelta]*G)
		if J == nil {
			continue
		}
		for c, q := range free {
			var v float64
			switch q {
			case parR0:
				v = 1
			case parDelta:
				v = G
			case parT0:
				v = -p[parDelta] * dGds
			case parLnTau:
				v = p[parDelta] * tau * dGdtau
			}
			J.Set(i, c, d.sw[i]*v)
		}
	}
}

// linSolve returns r0, Δ and the RSS of the weighted linear fit of y on
// [1, G] (or of y − r0 on G when r0 is fixed).
func (d *stepData) linSolve(G []float64, fixR0 bool, r0 float64) (float64, float64, float64) {
	var s11, s1g, sgg, s1y, sgy, syy float64
	for i := range G {
		w := d.sw[i] * d.sw[i]
		y := d.y[i]
		if fixR0 {
			y -= r0
		}
		s11 += w
		s1g += w * G[i]
		sgg += w * G[i] * G[i]
		s1y += w * y
		sgy += w * G[i] * y
		syy += w * y * y
	}
	if fixR0 {
		if sgg <= 0 {
			return r0, 0, syy
		}
		delta := sgy / sgg
		return r0, delta, syy - delta*sgy
	}
	det := s11*sgg - s1g*s1g
	if det <= 1e-12*s11*sgg || det <= 0 {
		m := s1y / s11
		return m, 0, syy - m*s1y
	}
	a := (sgg*s1y - s1g*sgy) / det
	b := (s11*sgy - s1g*s1y) / det
	return a, b, math.Max(syy-a*s1y-b*sgy, 0)
}

// fitFOPDT fits one step: a profile over a grid of onsets and time
// constants with r0 and Δ solved linearly at each point (variable
// projection, Golub & Pereyra 1973, from memory), then Levenberg–Marquardt
// on all parameters from the best grid points and from the Smith (1972)
// two-point estimate.
func fitFOPDT(d *stepData, o stepFitOpts) (*stepFitOut, error) {
	n := d.n()
	if n < 8 {
		return nil, errNoFit
	}
	free := []int{parR0, parDelta, parT0, parLnTau}
	if o.fixR0 {
		free = free[1:]
	}
	if len(free) >= n-2 {
		return nil, errNoFit
	}
	out := &stepFitOut{free: free}

	// Profile grid, on at most profileSamples samples (every stride-th):
	// it only has to land Levenberg–Marquardt in the right basin.
	stride := max(1, (n+profileSamples-1)/profileSamples)
	var pt []int
	for i := 0; i < n; i += stride {
		pt = append(pt, i)
	}
	span := o.t0Hi - o.t0Lo
	dt0 := math.Max(d.hop, span/80)
	nt0 := int(span/dt0) + 1
	lastT := d.t[n-1]
	tauHi := math.Min(tauMaxS, math.Max(4*(lastT-o.t0Lo), 10*d.hop))
	const ntau = 22
	taus := make([]float64, ntau)
	for j := range taus {
		taus[j] = tauMinS * math.Pow(tauHi/tauMinS, float64(j)/(ntau-1))
	}
	G := make([]float64, n)
	// The profile runs on the running median of five samples: a monotone
	// transition is its own running median, while a tracker that flips
	// between lines sample by sample no longer drags the search away.
	ym := runningMedian5(d.y)
	sub := &stepData{y: make([]float64, len(pt)), sw: make([]float64, len(pt))}
	for c, i := range pt {
		sub.y[c], sub.sw[c] = ym[i], d.sw[i]
	}
	Gs := make([]float64, len(pt))
	// Grid points and polished starts are ranked by a truncated square
	// loss, Σ min(r², (c·s)²) with s the track's own noise: a stretch
	// where the tracker followed another line (a run of samples far off
	// the curve, often with small error estimates) then costs a fixed
	// amount per sample instead of pulling the onset and τ towards it
	// (a redescending M-estimate in the sense of P. J. Huber, Robust
	// Statistics, Wiley 1981; from memory).
	cut := robustCut(d)
	best := make([]profPoint, 0, nt0*ntau)
	for _, tau := range taus {
		ft := d.k.prepare(tau)
		for q := 0; q < nt0; q++ {
			t0 := o.t0Lo + float64(q)*dt0
			for c, i := range pt {
				Gs[c] = d.k.seenG(d.t[i]-t0, &ft)
			}
			a, b, rss := sub.linSolve(Gs, o.fixR0, o.r0)
			if cut > 0 {
				rss = 0
				for c := range Gs {
					r := sub.sw[c] * (sub.y[c] - a - b*Gs[c])
					rss += math.Min(r*r, cut)
				}
			}
			best = append(best, profPoint{t0, tau, rss})
		}
	}
	out.prof = best
	sorted := append([]profPoint(nil), best...)
	sort.Slice(sorted, func(a, b int) bool { return sorted[a].rss < sorted[b].rss })

	// Starting points: the best grid points that are distinct from each
	// other (in onset by more than two grid steps or in τ by a factor of
	// 1.6), plus the two-point estimate; Levenberg–Marquardt from each, the
	// lowest sum of squares wins. A track with a stretch of trouble can
	// make the best grid point a false basin.
	starts := []profPoint{sorted[0]}
	for _, c := range sorted[1:] {
		far := true
		for _, s := range starts {
			if math.Abs(c.t0-s.t0) <= 2*dt0 && math.Abs(math.Log(c.tau/s.tau)) < 0.5 {
				far = false
				break
			}
		}
		if far {
			starts = append(starts, c)
			if len(starts) == maxStarts {
				break
			}
		}
	}
	out.smith = [2]float64{math.NaN(), math.NaN()}
	if tau, t0, ok := smithTwoPoint(d, o); ok {
		out.smith = [2]float64{tau, t0}
		if t0 >= o.t0Lo && t0 <= o.t0Hi {
			starts = append(starts, profPoint{t0: t0, tau: tau})
		}
	}

	lower, upper := fitBounds(d, o, free)

	bestRSS := math.Inf(1)
	for _, s := range starts {
		ft := d.k.prepare(s.tau)
		for i, t := range d.t {
			G[i], _, _ = d.k.seen(t-s.t0, &ft)
		}
		r0, delta, _ := d.linSolve(G, o.fixR0, o.r0)
		p := [numPar]float64{r0, delta, s.t0, math.Log(s.tau)}
		if !math.IsNaN(o.commandS) && p[parT0] < o.commandS {
			p[parT0] = o.commandS
		}
		res, J, err := d.polish(p, free, lower, upper)
		if err != nil && !errors.Is(err, ErrNoProgress) {
			continue
		}
		loss := res.RSS
		if cut > 0 {
			q := p
			for c, k := range free {
				q[k] = res.P[c]
			}
			loss = d.truncatedLoss(&q, free, cut)
		}
		if loss < bestRSS {
			bestRSS = loss
			for c, q := range free {
				p[q] = res.P[c]
			}
			out.p, out.J, out.lm, out.rss = p, J, res, res.RSS
		}
	}
	if out.J == nil {
		return nil, errors.New("analysis: the step fit did not converge")
	}
	d.finish(out)
	return out, nil
}

// robustCutK is c of the truncated loss, in noise standard deviations.
const robustCutK = 4

// robustCut returns (c·s)² for the truncated loss, s being the track's
// noise from differences one analysis window apart; 0 when it cannot be
// measured (then plain least squares ranks the fits).
func robustCut(d *stepData) float64 {
	lag := max(1, int(math.Ceil(d.k.spanS()/d.hop)))
	s := robustNoise(d.y, lag)
	if !(s > 0) || math.IsInf(s, 0) {
		return 0
	}
	return (robustCutK * s) * (robustCutK * s)
}

// truncatedLoss is Σ min(r², cut) of the weighted residuals under p.
func (d *stepData) truncatedLoss(p *[numPar]float64, free []int, cut float64) float64 {
	m := make([]float64, d.n())
	d.model(m, nil, p, free)
	loss := 0.0
	for i := range m {
		r := d.sw[i]*d.y[i] - m[i]
		loss += math.Min(r*r, cut)
	}
	return loss
}

// finish fills the residuals and total sum of squares of a solution.
func (d *stepData) finish(out *stepFitOut) {
	n := d.n()
	out.resid = make([]float64, n)
	d.model(out.resid, nil, &out.p, out.free)
	var sw2, swy float64
	for i := range out.resid {
		out.resid[i] = d.sw[i]*d.y[i] - out.resid[i]
		sw2 += d.sw[i] * d.sw[i]
		swy += d.sw[i] * d.sw[i] * d.y[i]
	}
	mean := swy / sw2
	out.tss = 0
	for i := range d.y {
		v := d.sw[i] * (d.y[i] - mean)
		out.tss += v * v
	}
}

// refit polishes a previous solution on changed data (a few samples left
// out) without repeating the profile search.
func (d *stepData) refit(prev *stepFitOut, o stepFitOpts) (*stepFitOut, error) {
	if d.n() <= len(prev.free)+2 {
		return nil, errNoFit
	}
	lower, upper := fitBounds(d, o, prev.free)
	res, J, err := d.polish(prev.p, prev.free, lower, upper)
	if err != nil && !errors.Is(err, ErrNoProgress) {
		return nil, err
	}
	out := &stepFitOut{p: prev.p, free: prev.free, J: J, rss: res.RSS, lm: res, smith: prev.smith}
	for c, q := range prev.free {
		out.p[q] = res.P[c]
	}
	d.finish(out)
	return out, nil
}

// polish runs Levenberg–Marquardt on the free parameters from p.
func (d *stepData) polish(p [numPar]float64, free []int, lower, upper []float64) (LMResult, *mat.Dense, error) {
	n := d.n()
	m := make([]float64, n)
	pp := p
	setFree := func(x []float64) {
		for c, q := range free {
			pp[q] = x[c]
		}
	}
	prob := LMProblem{
		N: n, P: len(free),
		Residuals: func(dst, x []float64) {
			setFree(x)
			d.model(m, nil, &pp, free)
			for i := range dst {
				dst[i] = d.sw[i]*d.y[i] - m[i]
			}
		},
		Jacobian: func(dst *mat.Dense, x []float64) {
			setFree(x)
			d.model(m, dst, &pp, free)
		},
	}
	x0 := make([]float64, len(free))
	for c, q := range free {
		x0[c] = p[q]
	}
	// The onset moves in absolute time (seconds from the start of the
	// recording); limit its steps to the kernel span instead of to a
	// fraction of its value.
	res, err := LevenbergMarquardt(prob, x0, &LMSettings{Lower: lower, Upper: upper, MaxIter: 100, StepTol: 1e-9, MaxRelStep: -1})
	J := mat.NewDense(n, len(free), nil)
	setFree(res.P)
	d.model(m, J, &pp, free)
	return res, J, err
}

// smithTwoPoint estimates τ and the onset from the times the track first
// crosses 28.3 % and 63.2 % of the change: τ = 1.5·(t63 − t28),
// t0 = t63 − τ (C. L. Smith, Digital Computer Process Control, Intext 1972,
// from memory; −ln(1 − 0.283) ≈ 1/3). It is a starting value and a
// cross-check, not the reported answer, and ignores the window smoothing.
func smithTwoPoint(d *stepData, o stepFitOpts) (tau, t0 float64, ok bool) {
	n := d.n()
	// Levels: medians of the samples before the search range and of the
	// last quarter of the stretch.
	var pre, post []float64
	for i, t := range d.t {
		if t < o.t0Lo {
			pre = append(pre, d.y[i])
		}
		if i >= n-n/4 {
			post = append(post, d.y[i])
		}
	}
	if len(post) < 2 {
		return 0, 0, false
	}
	r0 := o.r0
	if !o.fixR0 {
		if len(pre) < 2 {
			return 0, 0, false
		}
		r0 = median(pre)
	}
	r1 := median(post)
	dr := r1 - r0
	if dr == 0 {
		return 0, 0, false
	}
	cross := func(frac float64) (float64, bool) {
		for i := 1; i < n; i++ {
			if d.t[i] < o.t0Lo {
				continue
			}
			a := (d.y[i-1] - r0) / dr
			b := (d.y[i] - r0) / dr
			if a < frac && b >= frac {
				return d.t[i-1] + (frac-a)/(b-a)*(d.t[i]-d.t[i-1]), true
			}
		}
		return 0, false
	}
	t28, ok1 := cross(0.283)
	t63, ok2 := cross(0.632)
	if !ok1 || !ok2 || t63 <= t28 {
		return 0, 0, false
	}
	tau = 1.5 * (t63 - t28)
	return tau, t63 - tau, tau > tauMinS
}

// runningMedian5 returns the running median of five samples (shorter at
// the ends).
func runningMedian5(y []float64) []float64 {
	out := make([]float64, len(y))
	win := make([]float64, 0, 5)
	for i := range y {
		win = win[:0]
		for j := max(0, i-2); j <= min(len(y)-1, i+2); j++ {
			win = append(win, y[j])
		}
		out[i] = median(win)
	}
	return out
}

func median(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	m := len(s) / 2
	if len(s)%2 == 1 {
		return s[m]
	}
	return (s[m-1] + s[m]) / 2
}
