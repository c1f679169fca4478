package analysis

import (
	"context"
	"fmt"
	"math"

	"whirlfit/dsp"
)

// Checks of the tracked comb against other readings of the same lines.
//
// The refinement pass records the comb's mean level (clamped excess over
// the noise floor, nepers) at every 1/120 of a shaft order up to 30 orders.
// A reading of the lines is a hypothesis (r, B'): the shaft turns at r times
// the tracked frequency and the propeller has B' blades. Its score is
//
//	score = L̄(blade-pass positions) − L̄(midpoints between orders)
//	        − max(0, L̄(other shaft orders) − 0.6·L̄(blade-pass positions))
//	        − Σ_lines off the orders (L − 1.5) / n(blade-pass positions)
//
// The first term asks that the blade-pass lines be there; the second that
// nothing lie between the shaft orders (a shaft frequency too high leaves
// lines between its orders); the third that shaft-order lines be weaker than
// the blade-pass lines, as they are on a rotor (a shaft frequency too high
// by the blade count turns blade-pass lines into "shaft orders" as strong
// as the blade-pass lines). A last term charges the lines of the profile
// that the reading leaves between its orders (their excess over 1.5 nepers,
// per blade-pass position): a reading at 1.5·f0 with 2 blades explains the
// blade-pass lines of f0 with 3 blades but not its shaft line. A lattice of 1/120 orders cover r ∈ {1/5, 1/4, 1/3,
// 1/2, 2/3, 1, 3/2, 2, 3, 4, 5}. Readings that the lines cannot tell apart
// (f0 with 3 blades and 1.5·f0 with 2 when no shaft-order line shows) score
// alike; the current reading then stands.
const (
	profileDiv = 120
	profileLen = 30*profileDiv + 1
	// checkMargin is how much better (nepers) another reading must score to
	// be reported; fixMargin to replace an octave error outright.
	checkMargin = 1.0
	fixMargin   = 1.0
)

// checkRatios in order of preference: on a near tie (tieMargin) the
// earlier reading, and the smaller blade count, stands.
var checkRatios = []struct{ num, den int }{
	{1, 1}, {1, 2}, {2, 1}, {1, 3}, {3, 1}, {2, 3}, {3, 2}, {1, 4}, {4, 1}, {1, 5}, {5, 1},
}

// tieMargin (nepers) is how much a later reading must beat an earlier one.
const tieMargin = 0.3

// readingScore returns the score of hypothesis (num/den, blades) and false
// when the profile holds too few of its positions.
func (tk *tracker) readingScore(num, den, blades int) (float64, bool) {
	// Shaft order h of the hypothesis lies at q = 120·h·num/den (even).
	step := profileDiv * num / den // q per hypothesis order
	var bl, nb, mid float64
	var nbl, nnb, nmid int
	top := tk.profileTop()
	for h := 1; ; h++ {
		q := h * step
		if q > top {
			break
		}
		if tk.profN[q] == 0 {
			continue // below the profile's lowest frequency
		}
		if h%blades == 0 {
			bl += tk.prof[q]
			nbl++
		} else {
			nb += tk.prof[q]
			nnb++
		}
		if qm := q - step/2; qm > 0 && tk.profN[qm] > 0 {
			mid += tk.prof[qm]
			nmid++
		}
	}
	if nbl < 2 {
		return 0, false
	}
	// Lines of the profile that the reading leaves off its orders.
	var unexplained float64
	for _, p := range tk.profilePeaks() {
		if p.q > top {
			break
		}
		if r := p.q % step; min(r, step-r) > profileMatch {
			unexplained += p.level - profileLineZ
		}
	}
	bl /= float64(nbl)
	if nnb > 0 {
		nb /= float64(nnb)
	}
	if nmid > 0 {
		mid /= float64(nmid)
	}
	return bl - mid - math.Max(0, nb-0.6*bl) - unexplained/float64(nbl), true
}

// profileTop returns the last profile index the readings use: half an
// order beyond the highest shaft order whose line stands profileLineZ above
// the noise, so that the empty orders above a comb's last line do not
// dilute the means (the last blade-pass harmonic seen sets the extent).
func (tk *tracker) profileTop() int {
	top := 0
	for h := 1; h*profileDiv < profileLen; h++ {
		if q := h * profileDiv; tk.profN[q] > 0 && tk.prof[q] >= profileLineZ {
			top = q
		}
	}
	return min(profileLen-1, top+profileDiv/2)
}

type profilePeak struct {
	q     int
	level float64
}

// profilePeaks returns the lines of the comb profile: local maxima (over
// ±profileMatch lattice steps) at least profileLineZ high, in order of q.
func (tk *tracker) profilePeaks() []profilePeak {
	if tk.peaks != nil {
		return tk.peaks
	}
	tk.peaks = []profilePeak{}
	for q := 1; q < profileLen; q++ {
		v := tk.prof[q]
		if tk.profN[q] == 0 || v < profileLineZ {
			continue
		}
		peak := true
		for j := max(1, q-profileMatch); j <= min(profileLen-1, q+profileMatch); j++ {
			if tk.prof[j] > v || (tk.prof[j] == v && j < q) {
				peak = false
				break
			}
		}
		if peak {
			tk.peaks = append(tk.peaks, profilePeak{q, v})
		}
	}
	return tk.peaks
}

// profileMatch is how far (lattice steps of 1/120 order) a profile line
// may lie from a reading's order and still be on it.
const profileMatch = 2

// profileLineZ is the mean excess (nepers, 1.5 ≈ 6.5 dB) that marks a line
// in the comb profile.
const profileLineZ = 1.5

type reading struct {
	num, den, blades int
	score            float64
}

// bestReading returns the best-scoring hypothesis over the ratios and
// blade counts 2–6 (or only the given blade count when fixed > 0).
func (tk *tracker) bestReading(fixed int) (reading, bool) {
	best := reading{score: math.Inf(-1)}
	found := false
	for _, r := range checkRatios {
		for b := 2; b <= 6; b++ {
			if fixed > 0 && b != fixed {
				continue
			}
			if s, ok := tk.readingScore(r.num, r.den, b); ok && (!found || s > best.score+tieMargin) {
				best, found = reading{r.num, r.den, b, s}, true
			}
		}
	}
	return best, found
}

// estimateBlades reads the blade count from the comb tracked without one.
func (tk *tracker) estimateBlades() (int, string) {
	if tk.prof == nil {
		return 2, "blade count assumed 2: no comb to read it from"
	}
	best, ok := tk.bestReading(0)
	if !ok || best.score < checkMargin {
		return 2, "blade count could not be read from the harmonic comb; assumed 2 (give the blade count)"
	}
	// Readings that put the blade-pass line at the same frequency with
	// another blade count differ only in the shaft-order lines between the
	// blade-pass lines; where those are too weak the readings tie.
	if alt, ok := tk.bladePassRival(best); ok && best.score-alt.score < bladeAmbiguity {
		return best.blades, fmt.Sprintf("blade count not readable: the blade-pass lines fit %d blades about as well as %d (the shaft-order lines between them are too weak); assumed %d — give the blade count (τ and θ do not depend on it, rpm does)",
			best.blades, alt.blades, best.blades)
	}
	return best.blades, fmt.Sprintf("blade count estimated from the harmonic comb: %d (give the blade count to be sure)", best.blades)
}

// bladeAmbiguity (nepers) is the least lead of the best reading over a
// rival with the same blade-pass frequency for the blade count to count as
// read. On the end-to-end sweep's recordings (seeds 20261201 and 7, 90
// in all) a lead above 0.35 was right in 19 of 20 cases, one below it in
// 19 of 52 (about what guessing among the tied counts gives).
const bladeAmbiguity = 0.35

// bladePassRival returns the best-scoring reading with another blade count
// whose blade-pass frequency (num·blades/den times the tracked frequency)
// is best's.
func (tk *tracker) bladePassRival(best reading) (reading, bool) {
	rival := reading{score: math.Inf(-1)}
	found := false
	for _, r := range checkRatios {
		for b := 2; b <= 6; b++ {
			if b == best.blades || r.num*b*best.den != best.num*best.blades*r.den {
				continue
			}
			if s, ok := tk.readingScore(r.num, r.den, b); ok && s > rival.score {
				rival, found = reading{r.num, r.den, b, s}, true
			}
		}
	}
	return rival, found
}

// checkBlades compares the given blade count's reading with the best other
// one and returns a warning when another fits clearly better.
func (tk *tracker) checkBlades(given int) string {
	if tk.prof == nil {
		return ""
	}
	cur, ok := tk.readingScore(1, 1, given)
	if !ok {
		return ""
	}
	best, ok := tk.bestReading(0)
	if !ok || best.blades == given || best.score < cur+checkMargin {
		return ""
	}
	if best.num == best.den {
		return fmt.Sprintf("the harmonic comb suggests %d blades rather than the %d given (blade-pass lines stand out by %.1f dB against %.1f dB)",
			best.blades, given, nepersToDB(best.score), nepersToDB(cur))
	}
	return fmt.Sprintf("the harmonic comb fits %d blades at %s times the tracked speed better than the %d given; check the blade count",
		best.blades, ratioString(best.num, best.den), given)
}

// checkOctave tests the tracked speed against other ratios with the same
// blade count and, when one is clearly better, rescales the track. It
// returns the warnings to report.
func (tk *tracker) checkOctave(tr *Track) []string {
	if tk.prof == nil || tk.voted {
		return nil
	}
	cur, ok := tk.readingScore(1, 1, tr.Blades)
	if !ok {
		return nil
	}
	best, ok := tk.bestReading(tr.Blades)
	if !ok || best.num == best.den || best.score < cur+fixMargin {
		return nil
	}
	r := float64(best.num) / float64(best.den)
	if lo, hi := tk.cfg.MinShaftHz, tk.cfg.MaxShaftHz; !tr.allWithin(r, lo, hi) {
		return []string{fmt.Sprintf("the harmonic comb fits a shaft speed %s times the tracked one better, but that lies outside the search range; check the blade count", ratioString(best.num, best.den))}
	}
	for i := range tr.ShaftHz {
		tr.ShaftHz[i] *= r
		tr.SigmaHz[i] *= r
	}
	return []string{fmt.Sprintf("shaft speed corrected by %s: the harmonic comb fits it clearly better (%.1f dB against %.1f dB)",
		ratioString(best.num, best.den), nepersToDB(best.score), nepersToDB(cur))}
}

func (t *Track) allWithin(r, lo, hi float64) bool {
	for i, f := range t.ShaftHz {
		if t.Valid(i) && (f*r < lo*0.97 || f*r > hi*1.03) {
			return false
		}
	}
	return true
}

func ratioString(num, den int) string {
	if den == 1 {
		return fmt.Sprintf("%d", num)
	}
	return fmt.Sprintf("%d/%d", num, den)
}

// nepersToDB converts a power ratio in nepers (natural log) to dB.
func nepersToDB(x float64) float64 { return 10 * x / math.Ln10 }

// clippingWarning reports a recording clipped at its extremes: samples on
// flat tops (equal to their predecessor) at the peak level. A clean sine
// spends over 1 % of its time within 0.1 % of its peak but seldom repeats
// a sample value exactly there; a clipped one sits on flat tops.
func clippingWarning(x []float32) string {
	var peak float32
	for _, v := range x {
		peak = max(peak, v, -v)
	}
	if peak < 0.1 {
		return ""
	}
	n := 0
	lim := 0.999 * peak
	for i := 1; i < len(x); i++ {
		if v := x[i]; (v >= lim || v <= -lim) && v == x[i-1] {
			n++
		}
	}
	if frac := float64(n) / float64(len(x)); frac > 1e-3 {
		return fmt.Sprintf("the recording looks clipped: %.2f %% of samples sit on flat tops at its peak level", 100*frac)
	}
	return ""
}

// Stretch vote (voteStretches).
const (
	// octaveJumpTol bounds |ln(r/n)| for a ratio r between neighbouring
	// valid samples to count as a jump by a whole factor n (2 to
	// maxSlipFactor): an octave, or a slip by the blade count to the
	// shaft line's own comb.
	octaveJumpTol = 0.2
	// maxSlipFactor is the largest factor of a slip that is put back: the
	// largest ratio the comb profile can check (checkRatios).
	maxSlipFactor = 5
	// stretchFrames is the most frames read for one stretch's profile;
	// stretchMinFrames the fewest for it to be read at all.
	stretchFrames    = 200
	stretchMinFrames = 20
	// slipTol bounds |ln(r/n)| for the jumps into and out of a stretch
	// that is rescaled: a slip to another line of the same comb changes
	// the reading by n exactly (but for the speed's change over a hop); a
	// fast spin-up or step seen across a gap gives any ratio.
	slipTol = 0.1
)

// stretch is a run of valid track samples between jumps by whole factors:
// the first valid sample from, the last to−1, n valid samples.
type stretch struct{ from, to, n int }

// octaveStretches splits the track's valid samples at its jumps by whole
// factors 2 to maxSlipFactor (octaveJumpTol).
func octaveStretches(tr *Track) []stretch {
	var st []stretch
	cur := stretch{from: -1}
	prev := -1
	for i := range tr.ShaftHz {
		if !tr.Valid(i) {
			continue
		}
		if prev >= 0 && slipFactor(tr.ShaftHz[i]/tr.ShaftHz[prev], octaveJumpTol) > 0 {
			cur.to = prev + 1
			st = append(st, cur)
			cur = stretch{from: -1}
		}
		if cur.from < 0 {
			cur.from = i
		}
		cur.n++
		prev = i
	}
	if cur.from >= 0 {
		cur.to = prev + 1
		st = append(st, cur)
	}
	return st
}

// octaveExcursion tells whether stretch j (of at least stretchMinFrames
// samples) sits off both its neighbours by the same whole factor n, as
// the track is now, and returns the ratio that puts it back (1/n or n/1).
func octaveExcursion(tr *Track, st []stretch, j int) (num, den int, ok bool) {
	if j < 1 || j+1 >= len(st) || st[j].n < stretchMinFrames {
		return 0, 0, false
	}
	c := st[j]
	in := tr.ShaftHz[c.from] / tr.ShaftHz[st[j-1].to-1]
	out := tr.ShaftHz[st[j+1].from] / tr.ShaftHz[c.to-1]
	n := slipFactor(in, slipTol)
	if (in > 1) == (out > 1) || n == 0 || slipFactor(out, slipTol) != n {
		return 0, 0, false
	}
	if in > 1 {
		return 1, n, true
	}
	return n, 1, true
}

// slipFactor returns the whole factor n (2 to maxSlipFactor) for which
// |ln|r| − ln n| < tol, the nearest when several do, and 0 when none does.
func slipFactor(r, tol float64) int {
	lr := math.Abs(math.Log(r))
	best, bestD := 0, tol
	for n := 2; n <= maxSlipFactor; n++ {
		if d := math.Abs(lr - math.Log(float64(n))); d < bestD {
			best, bestD = n, d
		}
	}
	return best
}

// voteStretches splits the track at its jumps by whole factors (a ratio
// near 2 or ½ between neighbouring valid samples: the comb's salience
// cannot tell f from 2f or f/2 frame by frame; or near B or 1/B: the comb
// of f/B with B blades holds every line of f's) and rescales a stretch
// that sits off both its neighbours by the same factor (a jump up into it
// and down out of it, or the reverse, each within slipTol of the factor):
// a shaft does not jump by a whole factor and back, a tracker that slips
// to another line of the comb does. The stretch's own comb profile, read over its frames, must
// show the comb at the rescaled speed (its reading at the track's blade
// count at least checkMargin) and not speak against it (within tieMargin
// of the current reading), and the result must lie inside the search
// range. On the sweep's recordings the profile alone
// does not tell which side of a jump is right (with 2 blades, a comb
// whose even harmonics dominate reads alike at f and 2f), so it only
// vetoes. A stretch at the start or end of the track, with one
// neighbour, is left as it is.
func (tk *tracker) voteStretches(ctx context.Context, tr *Track, rc dsp.STFTConfig, scratch []refineScratch) ([]string, error) {
	st := octaveStretches(tr)
	if len(st) < 3 {
		return nil, nil
	}
	bins := rc.Bins()
	binHz := tk.fs / float64(rc.FFTLen)
	nyq := 0.45 * tk.fs
	s := &scratch[0]
	var lnP []float32
	sub := &tracker{prof: make([]float64, profileLen), profN: make([]int, profileLen)}
	var msgs []string
	lo, hi := tk.cfg.MinShaftHz, tk.cfg.MaxShaftHz
	for j := 1; j+1 < len(st); j++ {
		c := st[j]
		num, den, ok := octaveExcursion(tr, st, j)
		if !ok {
			continue
		}
		r := float64(num) / float64(den)
		inside := true
		for i := c.from; i < c.to; i++ {
			if f := tr.ShaftHz[i] * r; tr.Valid(i) && (f < lo*0.97 || f > hi*1.03) {
				inside = false
				break
			}
		}
		if !inside {
			continue
		}
		if lnP == nil {
			lnP = make([]float32, bins)
		}
		clear(sub.prof)
		clear(sub.profN)
		sub.peaks = nil
		step := max(1, c.n/stretchFrames)
		k := 0
		for i := c.from; i < c.to; i++ {
			if !tr.Valid(i) {
				continue
			}
			k++
			if (k-1)%step != 0 {
				continue
			}
			if err := tk.whitenFrame(ctx, rc, i, s.z, lnP, s); err != nil {
				return nil, err
			}
			addProfile(sub.prof, sub.profN, s.z, s.pk, tr.ShaftHz[i], binHz, nyq, bins)
		}
		for q := range sub.prof {
			if sub.profN[q] > 0 {
				sub.prof[q] /= float64(sub.profN[q])
			}
		}
		now, ok1 := sub.readingScore(1, 1, tr.Blades)
		alt, ok2 := sub.readingScore(num, den, tr.Blades)
		if !ok2 || alt < checkMargin || (ok1 && alt < now-tieMargin) {
			continue // the comb is not seen at that speed, or speaks against it
		}
		for i := c.from; i < c.to; i++ {
			tr.ShaftHz[i] *= r
			tr.SigmaHz[i] *= r
		}
		tk.voted = true
		by := "an octave"
		if n := max(num, den); n != 2 {
			by = fmt.Sprintf("by a factor of %d", n)
		}
		msgs = append(msgs, fmt.Sprintf("shaft speed corrected by %s from %.2f s to %.2f s: the track jumped %s there and back",
			ratioString(num, den), tr.TimeS[c.from], tr.TimeS[c.to-1], by))
	}
	return msgs, nil
}
