package analysis

import (
	"fmt"
	"math"
	"slices"
	"sort"
)

// Step detection on a speed track.
//
// The track is median filtered (a few frames, which keeps edges and removes
// single-frame glitches), its noise level is measured robustly from
// differences one window length apart (where frame errors are nearly
// uncorrelated), and a two-window median difference
//
//	D_i = median(y_{i+1..i+W}) − median(y_{i−W..i−1})
//
// is scanned for runs that exceed a threshold (a robust change-point
// statistic: medians ignore a brief dropout or glitch). Each run's extreme
// is a candidate. For each candidate the plateau-to-plateau change is
// measured on windows pushed outwards until the change stops growing (a
// step saturates, a ramp keeps growing), the onset is located where the
// track leaves its plateau, and the candidate is kept when the change is
// well above the noise, at least MinChangeFraction of the speed, and the
// 10–90 % transition is shorter than MaxRiseS (else it is a ramp). The fit
// then confirms it (fitPlan).

const (
	detectWindowS    = 0.06 // W: half of the shortest step spacing (0.25 s) leaves room
	detectMedianS    = 0.012
	detectNoiseK     = 8   // change must exceed this many noise sds
	standstillMinGap = 0.1 // leading no-motor stretch that means "from standstill"
	maxGapStepS      = 0.4 // longest lost stretch a step may hide in
)

// detectSteps returns planned steps (without command times) and warnings.
func detectSteps(tr *Track, k *fopdtKernel, cfg StepConfig) ([]stepPlan, []string) {
	n := tr.Len()
	var warns []string
	sc := newDetectScales(tr, k)
	hop, lag, W := sc.hop, sc.lag, sc.W
	y := medianFilter(tr.ShaftHz, sc.mh)
	sigma := robustNoise(y, lag)
	// A leading stretch without a harmonic comb, or on mains hum, that ends
	// in a rise is a silent rotor spinning up: what the tracker followed
	// there is left out, so that the spin-up is seen as one from
	// standstill.
	masked := false
	tStart := tr.TimeS[0]
	seenSpinUp := false // the rotor is seen spinning up after a silence already
	if f := firstSustained(y, hop); f > firstValid(y) && tr.TimeS[f]-tStart >= standstillMinGap {
		if _, seenSpinUp = risesFrom(y, f, W, hop, sigma, cfg.MinChangeFraction); seenSpinUp {
			// A spin-up from standstill after a silence that holds only a
			// few stray frames (a click the tracker caught): those are
			// left out, so that the silence is seen as one.
			for i := range f {
				y[i] = math.NaN()
			}
		}
	}
	if first := firstValid(y); !seenSpinUp && first >= 0 && tr.TimeS[first]-tStart >= standstillMinGap {
		_, seenSpinUp = risesFrom(y, first, W, hop, sigma, cfg.MinChangeFraction)
	}
	if lead := leadingNotRotor(tr, hop); lead > 0 && !seenSpinUp {
		if ym, sm, _, ok := sc.spinUpAfter(tr, lead, cfg.MinChangeFraction); ok {
			y, sigma, masked = ym, sm, true
		}
	}

	D := make([]float64, n)
	lvl := make([]float64, n)
	for i := range D {
		D[i] = math.NaN()
		b := windowMedian(y, i-W, i-1)
		a := windowMedian(y, i+1, i+W)
		if !math.IsNaN(a) && !math.IsNaN(b) {
			D[i] = a - b
			lvl[i] = math.Max(math.Abs(a), math.Abs(b))
		}
	}
	thr := func(i int) float64 {
		return math.Max(detectNoiseK*sigma, 0.5*cfg.MinChangeFraction*lvl[i])
	}
	// Candidates: extreme of each run of same-signed super-threshold D.
	var cands []int
	lastEnd := -n
	for i := 0; i < n; {
		if math.IsNaN(D[i]) || math.Abs(D[i]) <= thr(i) {
			i++
			continue
		}
		sgn := math.Signbit(D[i])
		best := i
		j := i
		for j < n && !math.IsNaN(D[j]) && math.Abs(D[j]) > thr(j) && math.Signbit(D[j]) == sgn {
			if math.Abs(D[j]) > math.Abs(D[best]) {
				best = j
			}
			j++
		}
		// A brief dip below the threshold (noise, a glitch, a lost frame)
		// must not cut one transition in two: join with the previous run
		// of the same sign when it ended less than 2W samples before,
		// unless both runs stand well clear of the dip between them (two
		// steps the same way in quick succession, each with its own
		// peak).
		if m := len(cands); m > 0 && i-lastEnd < 2*W && math.Signbit(D[cands[m-1]]) == sgn &&
			!twoPeaks(D, lastEnd, i, math.Abs(D[cands[m-1]]), math.Abs(D[best])) {
			if math.Abs(D[best]) > math.Abs(D[cands[m-1]]) {
				cands[m-1] = best
			}
		} else {
			cands = append(cands, best)
		}
		lastEnd = j
		i = j
	}

	// A change across a stretch the tracker lost (the transition itself
	// can be where it loses the line) leaves D undefined; compare the
	// levels either side of every gap of up to maxGapStepS instead.
	for i := 1; i < n; {
		if !math.IsNaN(y[i]) || math.IsNaN(y[i-1]) {
			i++
			continue
		}
		g0 := i
		for i < n && math.IsNaN(y[i]) {
			i++
		}
		g1 := i - 1
		if i == n || tr.TimeS[g1]-tr.TimeS[g0] > maxGapStepS {
			continue
		}
		// A gap the two-window difference sees across (its windows keep
		// enough valid samples) needs no look of its own: D already
		// decided whether a change lies there.
		seen := true
		for q := g0; q <= g1; q++ {
			if math.IsNaN(D[q]) {
				seen = false
				break
			}
		}
		if seen {
			continue
		}
		b := windowMedian(y, g0-W, g0-1)
		a := windowMedian(y, g1+1, g1+W)
		if math.IsNaN(a) || math.IsNaN(b) || math.Abs(a-b) <= math.Max(detectNoiseK*sigma, 0.5*cfg.MinChangeFraction*math.Max(math.Abs(a), math.Abs(b))) {
			continue
		}
		// The gap's candidate is a run of D at its edge or, where there is
		// none, the gap's middle. A change the same way within 2W of an
		// edge that is less than half the change across the gap is the
		// same transition seen starting before the gap or going on after
		// it: kept, it would cut the gap's plateau windows short at the
		// midpoint between the two and itself measure a part of the
		// change only.
		dup := false
		kept := cands[:0]
		for _, q := range cands {
			if q >= g0-2*W && q <= g1+2*W && (D[q] > 0) == (a > b) && math.Abs(D[q]) < 0.5*math.Abs(a-b) {
				continue
			}
			if q >= g0-W && q <= g1+W {
				dup = true
			}
			kept = append(kept, q)
		}
		cands = kept
		if !dup {
			cands = append(cands, (g0+g1)/2)
		}
	}
	sort.Ints(cands)

	var plans []stepPlan
	first := firstValid(y)
	if first < 0 {
		return nil, []string{"no motor found anywhere in the track"}
	}
	if tr.TimeS[first]-tStart >= standstillMinGap {
		// Leading stretch without motor: a spin-up from standstill if the
		// first part the tracker sees is still rising.
		if a, ok := risesFrom(y, first, W, hop, sigma, cfg.MinChangeFraction); ok {
			t1 := tr.TimeS[first]
			// Where the spin-up reaches 90 % of the speed it settles at
			// (taken 0.5–0.7 s after the motor appears, or earlier when
			// the track ends first).
			t90 := t1 + 0.5
			settle := windowMedian(y, first+int(0.5/hop), first+int(0.7/hop))
			if math.IsNaN(settle) {
				settle = windowMedian(y, first+2*W, first+4*W)
			}
			for i := first; i < n && !math.IsNaN(settle); i++ {
				if !math.IsNaN(y[i]) && y[i] >= 0.9*settle {
					t90 = tr.TimeS[i]
					break
				}
			}
			notes := []string{fmt.Sprintf("starts from standstill: the speed before is taken as 0 rpm; the tracker saw the rise only from %.0f rpm", RPM(a))}
			if masked {
				notes = append(notes, fmt.Sprintf("the track before %.3f s is left out: the rotor is silent there (no harmonic comb stands out, or only mains hum or another steady line), whatever line the tracker followed", t1))
			}
			plans = append(plans, stepPlan{commandS: math.NaN(), onsetLo: math.Max(tStart, t1-spinUpLookbackS), onsetHi: t1, standstill: true, up: true, t90: t90,
				seenFromS: t1, notes: notes})
			// Drop candidates inside this spin-up.
			for len(cands) > 0 && tr.TimeS[cands[0]] < t1+0.05 {
				cands = cands[1:]
			}
		}
	}

	for ci, c := range cands {
		left := 0
		if ci > 0 {
			left = (cands[ci-1] + c) / 2
		}
		right := n - 1
		if ci+1 < len(cands) {
			right = (c + cands[ci+1]) / 2
		}
		left = max(left, first)
		// Push the plateau windows outwards until the change stops growing.
		P := W
		bestChange, bestB, bestA := 0.0, math.NaN(), math.NaN()
		for _, qs := range []float64{0.01, 0.03, 0.06, 0.1, 0.15, 0.25, 0.4} {
			Q := int(math.Round(qs / hop))
			bi, ai := c-Q, c+Q
			if bi-P/2 < left || ai+P/2 > right {
				// Still use a shortened window if at least P/2 fits.
				if bi-P/4 < left || ai+P/4 > right {
					break
				}
			}
			b := windowMedian(y, max(left, bi-P), bi)
			a := windowMedian(y, ai, min(right, ai+P))
			if math.IsNaN(a) || math.IsNaN(b) {
				continue
			}
			ch := a - b
			if math.Abs(ch) > math.Abs(bestChange)*1.05 {
				bestChange, bestB, bestA = ch, b, a
			} else if math.Abs(ch) > 0.5*math.Abs(bestChange) {
				// Saturated.
				break
			}
		}
		if math.IsNaN(bestB) {
			continue
		}
		level := math.Max(math.Abs(bestA), math.Abs(bestB))
		if math.Abs(bestChange) < math.Max(detectNoiseK*sigma, cfg.MinChangeFraction*level) {
			continue
		}
		// Crossing times of 10 % and 90 % around c.
		t10, t90 := crossingsAround(tr.TimeS, y, c, left, right, bestB, bestA)
		if math.IsNaN(t10) || math.IsNaN(t90) {
			continue
		}
		sharp := false
		if rise := t90 - t10; rise < 0.6*k.riseS() {
			// Sharper than the analysis window can show any change of
			// speed: either the tracker jumped to another line for a
			// while, or it held on to the old line (reverberation, a
			// masking sound) and caught the new one late. Only the second
			// leaves a lasting change of level; keep that one as a step
			// whose time constant the track cannot show.
			if !persistentChange(y, c, left, right, hop, bestChange) {
				warns = append(warns, fmt.Sprintf("the track jumps by %.0f rpm near %.2f s faster than the analysis window allows, and comes back; taken as a tracking error, not a step", RPM(bestChange), tr.TimeS[c]))
				continue
			}
			sharp = true
		} else if rise > cfg.MaxRiseS+k.spanS() {
			warns = append(warns, fmt.Sprintf("a slow change of %.0f rpm near %.2f s (10–90 %% in %.2f s) looks like a ramp, not a step; not fitted", RPM(bestChange), tr.TimeS[c], rise))
			continue
		}
		// The 10 % point of a first-order response is 0.105 τ after the
		// onset; the window smears it earlier by up to half its span.
		onset := t10
		pl := stepPlan{commandS: math.NaN(),
			onsetLo: onset - k.spanS()/2 - 2*hop - 0.02, onsetHi: onset + k.spanS()/2 + 2*hop,
			up: bestChange > 0, t90: t90, sharp: sharp}
		if h0, ok := heldBefore(tr, indexAt(tr.TimeS, t10), left, hop, k.spanS()); ok {
			// The tracker held the old line after the rotor had left it:
			// the onset is where the comb first weakened, and the held
			// samples are left out of the fit (the response is seen only
			// once the tracker catches up).
			pl.heldFromS, pl.heldToS = tr.TimeS[h0], t10
			pl.onsetLo = tr.TimeS[h0] - k.spanS()/2 - 2*hop - 0.02
			pl.notes = append(pl.notes, fmt.Sprintf("the tracker held the old speed from %.3f to %.3f s while the comb weakened (the rotor had already left it, typically reverberation); those samples are left out of the fit", tr.TimeS[h0], t10))
		}
		plans = append(plans, pl)
	}
	sort.Slice(plans, func(a, b int) bool { return plans[a].onsetLo < plans[b].onsetLo })
	// Merge plans whose onset ranges overlap (one transition seen twice),
	// and drop a change in the same direction that starts before the
	// previous one has reached 90 % (a glitch splitting one transition).
	var merged []stepPlan
	for _, p := range plans {
		if m := len(merged); m > 0 {
			q := merged[m-1]
			if p.onsetLo < q.onsetHi || (p.up == q.up && p.onsetLo+k.spanS()/2 < q.t90) {
				continue
			}
		}
		merged = append(merged, p)
	}
	planWindows(merged, tr, k)
	limitDetectedWindows(merged)
	for i := range merged {
		if p := &merged[i]; p.standstill && p.seenFromS > p.fromS {
			// Only the rotor's own samples: the frames straddling where
			// it appears mix it with what the tracker followed before.
			p.fromS = p.seenFromS + k.right
		}
	}
	return merged, warns
}

// twoPeaks reports whether two same-signed runs of D, with peaks of
// magnitude p1 and p2, are two changes: the dip between them (D[from:to],
// where the runs are below the threshold) falls below half the smaller
// peak. A dip where D is undefined (a lost stretch) separates nothing.
func twoPeaks(D []float64, from, to int, p1, p2 float64) bool {
	dip, seen := math.Inf(1), false
	for q := max(from, 0); q < min(to, len(D)); q++ {
		if !math.IsNaN(D[q]) {
			dip, seen = math.Min(dip, math.Abs(D[q])), true
		}
	}
	return seen && dip < 0.5*math.Min(p1, p2)
}

// firstValid returns the index of the first non-NaN sample of y, or −1.
func firstValid(y []float64) int {
	for i, v := range y {
		if !math.IsNaN(v) {
			return i
		}
	}
	return -1
}

// detectScales are the sample counts detection works with: the hop, the
// running median's half-length mh, the lag over which frame errors are
// nearly uncorrelated and the window W of the two-window difference.
type detectScales struct {
	hop        float64
	mh, lag, W int
}

func newDetectScales(tr *Track, k *fopdtKernel) detectScales {
	hop := trackHop(tr)
	return detectScales{hop: hop,
		mh:  max(1, int(math.Round(detectMedianS/hop/2))),
		lag: max(1, int(math.Ceil(k.spanS()/hop))),
		W:   max(3, int(math.Round(detectWindowS/hop)))}
}

// leadingNotRotor returns how many samples at the start of tr are not the
// rotor: a stretch without a comb, on mains hum or on another steady line
// (leadingNoComb, leadingMains, leadingLine), 0 when there is none.
func leadingNotRotor(tr *Track, hop float64) int {
	return max(leadingNoComb(tr, hop), leadingMains(tr, hop), leadingLine(tr, hop))
}

// spinUpAfter leaves out the first lead samples of tr (what the tracker
// followed while the rotor stood still) and tells whether the track then
// rises where it begins (risesFrom): a spin-up seen from there. It returns
// the median-filtered track without them, its noise, the first sample
// left, and false when nothing was left out or the track does not rise.
func (sc detectScales) spinUpAfter(tr *Track, lead int, minFrac float64) (ym []float64, sigma float64, first int, ok bool) {
	raw := slices.Clone(tr.ShaftHz)
	held := false
	for i := range min(lead, len(raw)) {
		held = held || !math.IsNaN(raw[i])
		raw[i] = math.NaN()
	}
	ym = medianFilter(raw, sc.mh)
	sigma = robustNoise(ym, sc.lag)
	first = firstValid(ym)
	_, ok = risesFrom(ym, first, sc.W, sc.hop, sigma, minFrac)
	return ym, sigma, first, ok && held
}

// risesFrom reports whether the track rises where it begins at first (a
// spin-up seen from its first frames): the median of the W samples after
// the first W exceeds that of the first W/2 (a, the level the tracker
// first saw) by more than the noise and either minFrac of the speed or,
// for a slow spin-up seen late (a quiet rotor is found only near its final
// speed), spinUpShare of the rise to the level spinUpSettleS on, which
// must itself exceed minFrac of that level. An exponential approach with τ
// up to about 0.7 s gives that share; a steady ramp does not.
func risesFrom(y []float64, first, W int, hop, sigma, minFrac float64) (a float64, ok bool) {
	if first < 0 {
		return math.NaN(), false
	}
	a = windowMedian(y, first, first+W/2)
	b := windowMedian(y, first+W, first+2*W)
	if math.IsNaN(a) || math.IsNaN(b) || b-a <= detectNoiseK*sigma {
		return a, false
	}
	if b-a > minFrac*b {
		return a, true
	}
	s := windowMedian(y, first+int(spinUpSettleS[0]/hop), first+int(spinUpSettleS[1]/hop))
	return a, s-a > minFrac*s && b-a >= spinUpShare*(s-a)
}

// A spin-up seen late: the level it settles at is read spinUpSettleS after
// the tracker first sees it; spinUpShare of the rise to it must come in the
// first W samples. For an exponential approach seen from its first frames
// the share is (e^{−W/4τ} − e^{−3W/2τ}) / (e^{−W/4τ} − e^{−0.6/τ}) with the
// window W = 60 ms: 0.25 at τ = 0.3 s, 0.16 at τ = 1 s; a ramp gives 0.13.
var spinUpSettleS = [2]float64{0.5, 0.7}

const spinUpShare = 0.18

// spinUpLookbackS is how long before the tracker first sees a spin-up from
// standstill its onset may lie: a quiet rotor may be found only near its
// final speed, 90 % of the way up after 2.3 τ (0.7 s at τ = 0.3 s).
const spinUpLookbackS = 0.7

// firstSustained returns the first valid sample of y that begins a stretch
// of sustainedS in which at least 80 % of the samples are valid (a rotor
// the tracker follows, not a click or a burst of noise it caught for a
// few frames), −1 when there is none.
func firstSustained(y []float64, hop float64) int {
	L := max(2, int(math.Round(sustainedS/hop)))
	valid := 0
	for i := range y {
		if !math.IsNaN(y[i]) {
			valid++
		}
		if i >= L && !math.IsNaN(y[i-L]) {
			valid--
		}
		if j := i - L + 1; j >= 0 && float64(valid) >= 0.8*float64(L) {
			for ; j <= i; j++ {
				if !math.IsNaN(y[j]) {
					return j
				}
			}
		}
	}
	return -1
}

const sustainedS = 0.1

// Leading stretch without a harmonic comb (common practice: a confidence
// near zero means no line stands out of the spectrum).
const (
	noCombConfidence   = 0.1  // below this, in a running median, no comb stands out
	combFileConfidence = 0.4  // median confidence after it that shows the rotor clearly
	noCombSmoothS      = 0.05 // running median span of the confidence
)

// leadingNoComb returns how many samples at the start of tr lie in a
// stretch of at least standstillMinGap where no harmonic comb stands out
// (running-median confidence below noCombConfidence) while the rest of the
// track shows the rotor clearly (median confidence at least
// combFileConfidence): before a spin-up the rotor is silent and the tracker
// may hold on to noise or hum, which is not a speed. It returns 0 when
// there is no such stretch or the track carries no confidences.
func leadingNoComb(tr *Track, hop float64) int {
	n := tr.Len()
	if len(tr.Confidence) != n || n == 0 {
		return 0
	}
	conf := medianFilter(tr.Confidence, max(1, int(math.Round(noCombSmoothS/hop/2))))
	// The stretch ends where the comb stands out for noCombSmoothS on end;
	// a comb that shows for a moment only (a click, a burst of hum) does
	// not end it.
	hold := max(1, int(math.Round(noCombSmoothS/hop)))
	end := firstRun(n, hold, func(i int) bool { return conf[i] >= noCombConfidence })
	if end <= 0 || tr.TimeS[end]-tr.TimeS[0] < standstillMinGap {
		return 0
	}
	var before []float64
	for i := range end {
		if !math.IsNaN(conf[i]) {
			before = append(before, conf[i])
		}
	}
	if len(before) > 0 && median(before) >= noCombConfidence/2 {
		return 0
	}
	var rest []float64
	for i := end; i < n; i++ {
		if tr.Valid(i) {
			rest = append(rest, tr.Confidence[i])
		}
	}
	if len(rest) == 0 || median(rest) < combFileConfidence {
		return 0
	}
	return end
}

// firstRun returns the first i of the first run of at least length
// consecutive indices in [0, n) for which in holds, −1 when there is none.
func firstRun(n, length int, in func(i int) bool) int {
	run := 0
	for i := range n {
		if !in(i) {
			run = 0
			continue
		}
		if run++; run >= length {
			return i - run + 1
		}
	}
	return -1
}

// Mains hum before a spin-up (common practice: the mains frequency is 50 or
// 60 Hz and held within a few tenths of a per cent; hum has lines at its
// multiples).
const (
	mainsRelTol   = 0.003 // blade-pass line within this of a hum harmonic, and steady within it
	mainsMaxOrder = 12    // highest hum harmonic taken for the blade-pass line
	mainsGapS     = 0.02  // the lost stretch that ends the hum
	mainsJump     = 1.5   // the track after the gap starts at least this much faster
)

// leadingMains returns how many samples at the start of tr hold a mains-hum
// line before a spin-up: a stretch of at least standstillMinGap on a line
// whose blade-pass frequency is a harmonic of 50 or 60 Hz and that holds
// it within mainsRelTol, ended either by at least mainsGapS without a
// track, after which the track resumes at least mainsJump times faster, or
// by a jump straight to a track at least mainsCross times faster (the
// rotor's rising line outsounding the hum as it passes it). Hum is a comb
// of its own, often as clear as a quiet rotor's, so leadingNoComb does not
// see it; the tracker holds it until the spinning rotor outsounds it. It
// returns 0 when there is no such stretch.
func leadingMains(tr *Track, hop float64) int {
	n := tr.Len()
	gap := max(1, int(math.Round(mainsGapS/hop)))
	end := firstRun(n, gap, func(i int) bool { return !tr.Valid(i) })
	jump := jumpOffLine(tr, mainsCross)
	if jump > 0 && (end <= 0 || jump < end) {
		end = jump
	} else {
		jump = -1
	}
	if end <= 0 || tr.TimeS[end]-tr.TimeS[0] < standstillMinGap {
		return 0
	}
	m, nv, steady := steadyLine(tr, end, mainsRelTol)
	if nv < 8 || !steady {
		return 0
	}
	bpf := float64(max(tr.Blades, 1)) * m
	mains := false
	for _, hz := range []float64{50, 60} {
		j := math.Round(bpf / hz)
		mains = mains || (j >= 1 && j <= mainsMaxOrder && math.Abs(bpf-j*hz) <= mainsRelTol*j*hz)
	}
	if !mains {
		return 0
	}
	if jump > 0 {
		return jump
	}
	for i := end; i < n; i++ {
		if tr.Valid(i) {
			if tr.ShaftHz[i] < mainsJump*m {
				return 0
			}
			return i
		}
	}
	return 0
}

// mainsCross: see leadingMains.
const mainsCross = 1.2

// jumpOffLine returns the first valid sample of tr that differs from the
// valid sample before it by a factor of at least ratio (up) or 1/ratio
// (down), −1 when there is none.
func jumpOffLine(tr *Track, ratio float64) int {
	prev := -1
	for i := range tr.ShaftHz {
		if !tr.Valid(i) {
			continue
		}
		if prev >= 0 {
			if r := tr.ShaftHz[i] / tr.ShaftHz[prev]; r >= ratio || r <= 1/ratio {
				return i
			}
		}
		prev = i
	}
	return -1
}

// leadingLine returns how many samples at the start of tr hold one steady
// line (within lineRelTol of its median in the median absolute deviation)
// for at least standstillMinGap, which the track leaves by a jump down to
// below lineDrop of it: a rotor found only once it outsounds another
// steady sound (a tone, a second machine) that the tracker held while the
// rotor stood still, found at a lower speed than that sound's line. A
// motor's own speed does not fall by a jump and then rise (detectSteps
// asks the rise of what follows). It returns 0 when there is no such
// stretch.
func leadingLine(tr *Track, hop float64) int {
	end := jumpOffLine(tr, 1/lineDrop)
	if end <= 0 || tr.TimeS[end]-tr.TimeS[0] < standstillMinGap || tr.ShaftHz[end] > lineDrop*tr.ShaftHz[prevValid(tr, end)] {
		return 0
	}
	if _, nv, steady := steadyLine(tr, end, lineRelTol); float64(nv) < 0.5*standstillMinGap/hop || !steady {
		return 0
	}
	return end
}

// steadyLine returns the median m of the valid samples of tr before end,
// how many there are, and whether their median absolute deviation from m
// is at most relTol·m (one line held steady).
func steadyLine(tr *Track, end int, relTol float64) (m float64, n int, steady bool) {
	var lead []float64
	for i := range end {
		if tr.Valid(i) {
			lead = append(lead, tr.ShaftHz[i])
		}
	}
	if len(lead) == 0 {
		return math.NaN(), 0, false
	}
	m = median(lead)
	dev := make([]float64, len(lead))
	for i, f := range lead {
		dev[i] = math.Abs(f - m)
	}
	return m, len(lead), median(dev) <= relTol*m
}

// prevValid returns the last valid sample of tr before i, −1 when none.
func prevValid(tr *Track, i int) int {
	for j := i - 1; j >= 0; j-- {
		if tr.Valid(j) {
			return j
		}
	}
	return -1
}

const (
	lineRelTol = 0.003 // as mainsRelTol: a tone or a machine held steady
	lineDrop   = 0.8   // the track after the jump starts below this share of the line
)

// limitDetectedWindows judges each detected change on the stretch its own
// transition needs: fifteen time constants estimated from its 10–90 % time
// (τ ≈ that time / ln 9), at least minPostWindowS, so that later trouble in
// the track does not decide whether it is a step.
func limitDetectedWindows(plans []stepPlan) {
	for i := range plans {
		p := &plans[i]
		if p.standstill || !(p.t90 > p.onsetLo) {
			continue
		}
		tauEst := (p.t90 - p.onsetLo) / math.Log(9)
		p.toS = math.Min(p.toS, p.onsetHi+math.Max(minPostWindowS, 15*tauEst))
	}
}

// persistentChange reports whether the change at c lasts: the levels 0.1 to
// 0.25 s either side of it (within left..right) still differ by at least
// 80 % of change, in its direction.
func persistentChange(y []float64, c, left, right int, hop, change float64) bool {
	near := int(math.Round(0.1 / hop))
	far := int(math.Round(0.25 / hop))
	if c-far < left || c+far > right {
		return false
	}
	b := windowMedian(y, c-far, c-near)
	a := windowMedian(y, c+near, c+far)
	if math.IsNaN(a) || math.IsNaN(b) {
		return false
	}
	return (a-b)/change >= 0.8
}

// Held line: the tracker keeps the old speed for a while after a change
// (common practice: reverberation sustains the old line while the direct
// sound moves on), and the comb it follows weakens meanwhile.
const (
	heldConfidenceDrop = 0.9  // confidence below this share of the plateau's
	heldMaxS           = 0.15 // longest hold looked for
)

// indexAt returns the index of the sample at time t (the first at or after
// it).
func indexAt(ts []float64, t float64) int {
	return sort.SearchFloat64s(ts, t)
}

// heldBefore looks back from i10, the last sample still at the old level
// before a change, for a stretch where the tracker held that level while
// its confidence stayed below heldConfidenceDrop of the plateau before (or
// it lost the line): the rotor had already started to move. It returns the
// first index of that stretch when it is longer than half the window's
// span (shorter ones are the window's own smear) and ok.
func heldBefore(tr *Track, i10, left int, hop, spanS float64) (int, bool) {
	if len(tr.Confidence) != tr.Len() || i10 <= left || i10 >= tr.Len() {
		return 0, false
	}
	maxBack := int(math.Round(heldMaxS / hop))
	// The plateau's confidence, well before the stretch looked at.
	var pc []float64
	for i := max(left, i10-maxBack-int(math.Round(0.1/hop))); i < i10-maxBack; i++ {
		if tr.Valid(i) {
			pc = append(pc, tr.Confidence[i])
		}
	}
	if len(pc) < 5 {
		return 0, false
	}
	lim := heldConfidenceDrop * median(pc)
	low := func(i int) bool { return !tr.Valid(i) || tr.Confidence[i] < lim }
	// Allow one confident frame inside the stretch (a frame where the old
	// line happened to stand out).
	h0, misses := i10+1, 0
	for i := i10; i >= max(left, i10-maxBack); i-- {
		if low(i) {
			h0 = i
			continue
		}
		misses++
		if misses > 1 {
			break
		}
	}
	if h0 > i10 || !low(i10) || tr.TimeS[i10]-tr.TimeS[h0] < spanS/2 || h0 <= max(left, i10-maxBack) {
		return 0, false
	}
	return h0, true
}

// crossingsAround finds, walking out from index c, the last time before c
// that y is at or beyond 10 % of the change from b towards a, and the first
// time after c that it reaches 90 %.
func crossingsAround(ts, y []float64, c, left, right int, b, a float64) (t10, t90 float64) {
	t10, t90 = math.NaN(), math.NaN()
	frac := func(v float64) float64 { return (v - b) / (a - b) }
	for i := min(c, right); i >= left; i-- {
		if !math.IsNaN(y[i]) && frac(y[i]) <= 0.1 {
			t10 = ts[i]
			break
		}
	}
	for i := max(c, left); i <= right; i++ {
		if !math.IsNaN(y[i]) && frac(y[i]) >= 0.9 {
			t90 = ts[i]
			break
		}
	}
	return t10, t90
}

// medianFilter returns the running median over 2h+1 samples, ignoring NaN
// (NaN where fewer than h+1 are valid).
func medianFilter(x []float64, h int) []float64 {
	out := make([]float64, len(x))
	buf := make([]float64, 0, 2*h+1)
	for i := range x {
		buf = buf[:0]
		for j := max(0, i-h); j <= min(len(x)-1, i+h); j++ {
			if !math.IsNaN(x[j]) {
				buf = append(buf, x[j])
			}
		}
		if len(buf) < h+1 || math.IsNaN(x[i]) {
			out[i] = math.NaN()
			continue
		}
		sort.Float64s(buf)
		out[i] = buf[len(buf)/2]
		if len(buf)%2 == 0 {
			out[i] = (buf[len(buf)/2-1] + buf[len(buf)/2]) / 2
		}
	}
	return out
}

// windowMedian is the median of the valid samples in y[lo..hi] (clipped),
// NaN when fewer than half are valid.
func windowMedian(y []float64, lo, hi int) float64 {
	lo, hi = max(lo, 0), min(hi, len(y)-1)
	if hi < lo {
		return math.NaN()
	}
	var v []float64
	for i := lo; i <= hi; i++ {
		if !math.IsNaN(y[i]) {
			v = append(v, y[i])
		}
	}
	if 2*len(v) < hi-lo+1 || len(v) == 0 {
		return math.NaN()
	}
	return median(v)
}

// robustNoise is the standard deviation of the track noise from the median
// absolute deviation of differences lag samples apart (steps affect few of
// them).
func robustNoise(y []float64, lag int) float64 {
	var d []float64
	for i := 0; i+lag < len(y); i++ {
		if !math.IsNaN(y[i]) && !math.IsNaN(y[i+lag]) {
			d = append(d, y[i+lag]-y[i])
		}
	}
	if len(d) < 4 {
		return 0
	}
	m := median(d)
	for i := range d {
		d[i] = math.Abs(d[i] - m)
	}
	return 1.4826 * median(d) / math.Sqrt2
}
