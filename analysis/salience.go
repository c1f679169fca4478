package analysis

import (
	"math"
	"slices"
)

// Harmonic salience: how well a candidate shaft frequency f0 explains the
// lines of one STFT frame.
//
// The frame's power spectrum P is first whitened: a noise floor is estimated
// as a low quantile of P in blocks of bins, interpolated in log between the
// block centres and scaled to the mean of exponentially distributed noise
// power, so that z_k = ln(P_k / floor_k) is the excess of bin k over the
// local noise in nepers (4.34 dB each). A noise-only bin has P/floor ~ Exp(1).
//
// The salience of f0 is a harmonic sum over the blade-pass comb, in the
// manner of subharmonic summation (D. J. Hermes, "Measurement of pitch by
// subharmonic summation", J. Acoust. Soc. Am. 83(1):257–264, 1988, whose
// weights 0.84^(m−1) it takes) on whitened log magnitude:
//
//	S(f0) = Σ_{m=1..M} 0.84^(m−1) · (v(m·B·f0) − c)
//	v(f)  = clamp(max(z_⌊f/Δ⌋, z_⌊f/Δ⌋+1), 0, zCap)
//
// with B the blade count. The blade-pass line and its harmonics are a
// rotor's strongest lines and, unlike the shaft-order lines, are always
// there, so the search follows them and the blade count given fixes the
// shaft frequency (f0 = blade-pass/B; no blade-count error is possible once
// B is right). A fixed number M of harmonics with falling weights guards the
// octave errors of the blade-pass comb: a candidate an octave low collects
// only the lower half of the lines, at lower weights, and pays c for the
// empty positions between them; a candidate an octave high misses the odd
// harmonics, which include the strongest, first one. Clamping at zCap keeps
// one very strong line (a whine, a hum harmonic) from outweighing a comb.
// The shaft line at f0 itself adds positive evidence (shaftLineWeight).
// The shaft-order lines enter the refinement (tracker.go) and the comb
// checks (tracker_checks.go), which warn when another blade count fits.
const (
	// floorBlock is the largest number of bins in a noise-floor block.
	floorBlock = 32
	// floorQuantile is the quantile of P taken as the floor in each block,
	// low so that a dense comb of lines does not lift it. For Exp(1) noise
	// its value is −ln(1 − q), which floorScale undoes.
	floorQuantile = 0.2
	// zCap is the largest excess one harmonic contributes: 6.9 nepers = 30 dB.
	zCap = 6.9
	// emptyCost is c above: about the expected v of a noise-only position
	// (measured in TestWhitenNoiseStatistics), so that noise adds nothing
	// on average and an empty position costs a little.
	emptyCost = 0.35
	// combHarmonics is M above; combDecay the weight ratio.
	combHarmonics = 6
	combDecay     = 0.84
	// shaftLineWeight weighs the evidence of a shaft line at f0 itself:
	// positive only, since the shaft line is often weak or cut by a
	// microphone's high-pass. Of two candidates that both explain the
	// blade-pass lines, f0 and f0/2 (lines at f0 and 2·f0 with two blades:
	// blade-pass harmonics 1 and 2 of f0/2, or shaft line and blade-pass
	// line of f0), it favours the one whose shaft line is there. It must
	// exceed combDecay (the weight the f0/2 candidate gives its second line)
	// and stay well below what the blade-pass comb of the octave-high
	// candidate 2·f0 loses (TestSalienceOctaveGuard).
	shaftLineWeight = 1.0
	// oddEvenSlack and oddEvenCost: see salience.
	oddEvenSlack = 1.0
	oddEvenCost  = 1.5
	// midFirst and midLast are the comb orders m whose midpoints
	// (m − ½)·B·f0 the octave-high check reads (see midPenalty); midSlack
	// (nepers) is how much weaker than the comb's lines of the same orders
	// those midpoints must be for the candidate to keep its salience whole.
	midFirst = 2
	midLast  = 4
	midSlack = 1.0
	// midLowOrders is the highest of a rotor's low shaft orders (the
	// imbalance line and its first harmonics, often strong; common
	// practice): the check runs only for blade counts whose midpoints all lie
	// above them (B ≥ 3; with two blades the first midpoint is the third
	// shaft order of the true comb).
	midLowOrders = 3
)

var floorScale = float32(1 / -math.Log(1-floorQuantile))

// combTable lists, for each candidate shaft frequency on a log grid, the
// bins and weights of its harmonics in a spectrum of a given bin width.
type combTable struct {
	f0      []float64 // candidate shaft frequencies, Hz, increasing
	logStep float64   // ln(f0[k+1]/f0[k])
	start   []int32   // harmonics of candidate k: pos[start[k]:start[k+1]]
	pos     []float32 // harmonic position in bins
	inv     []float32 // 1/(2σ)² of its match tolerance σ, bins⁻²
	w       []float32
	// thr is the salience a candidate must exceed to count as a motor:
	// voiceZ noise standard deviations of its sum.
	thr   []float32
	wsum  []float32
	binHz float64
	// shaftPos is the position of the shaft line itself in bins (−1 when
	// the comb is the shaft comb, blades ≤ 1, or out of range), shaftInv
	// its tolerance.
	shaftPos, shaftInv []float32
	// reach[k] is the highest position (bins) read by the combs of
	// candidates 0..k, the shaft line's included.
	reach []float32
	// midPos[k·midN+j] is the midpoint (m − ½)·B·f0 of comb order
	// m = midFirst + j in bins (−1 where the comb has no order m), midInv
	// its tolerance.
	midPos, midInv []float32
}

// withoutMidCheck switches the octave-high check (midPenalty) off: the
// refinement picks its candidate near the search path, which has already
// passed it, and a moving line's spread there would make it noisy.
func (t *combTable) withoutMidCheck() *combTable {
	for i := range t.midPos {
		t.midPos[i] = -1
	}
	return t
}

// midN is the number of midpoints per candidate.
const midN = midLast - midFirst + 1

// readLimit returns the number of low bins that the salience of candidates
// below khi reads (whitenBelow's limit for them).
func (t *combTable) readLimit(khi int) int {
	if khi <= 0 {
		return 0
	}
	return int(t.reach[khi-1]+0.5) + 2
}

// matchTolerance returns σ, in bins, for a harmonic at position x bins: the
// larger of matchBins and matchRel·x. A line counts fully when its
// interpolated peak lies on the position and not at all beyond 2σ.
func matchTolerance(x float64) float64 { return math.Max(matchBins, matchRel*x) }

const (
	// matchBins is the least tolerance (bins): the peak interpolation's
	// error on a weak or moving line. matchRel is the relative tolerance,
	// about the search grid's half step times 1.6.
	matchBins = 0.3
	matchRel  = 0.002
)

// posValue returns the clamped excess of the line at position x (bins):
// the best of the interpolated peaks (pk) within 2σ of x, weighted by
// 1 − (d/2σ)² with d the distance of the peak from x; 0 when no peak is
// near. inv is 1/(2σ)². x must lie in [1, len(z)−2).
func posValue(z, pk []float32, x, inv float32) float32 {
	b0 := int(x + 0.5)
	var best float32
	for b := b0 - 1; b <= b0+1; b++ {
		p := pk[b]
		if p < 0 {
			continue
		}
		d := p - x
		u := d * d * inv
		if u >= 1 {
			continue
		}
		best = max(best, min(z[b], zCap)*(1-u))
	}
	return best
}

// noiseSD is the standard deviation of v for a noise-only position
// (TestWhitenNoiseStatistics measures it); voiceZ scales the voicing
// threshold in units of the sum's noise standard deviation.
const (
	noiseSD = 0.42
	voiceZ  = 6
)

// newCandidateGrid returns log-spaced shaft frequencies from lo to hi with
// relative step rel (0.0025 = 0.25 %).
func newCandidateGrid(lo, hi, rel float64) []float64 {
	step := math.Log1p(rel)
	n := int(math.Ceil(math.Log(hi/lo)/step)) + 1
	f := make([]float64, n)
	for k := range f {
		f[k] = lo * math.Exp(float64(k)*step)
	}
	return f
}

// maxCombHarmonics bounds a comb's harmonic count (the salience's scratch).
const maxCombHarmonics = 16

// newCombTable builds the table for candidates f0 in a spectrum of bins
// bins of width binHz: harmonics at m·order·f0, m = 1..count (at most
// maxCombHarmonics), weights combDecay^(m−1). Harmonics beyond the spectrum
// are left out.
func newCombTable(f0 []float64, binHz float64, bins, order, count int) *combTable {
	count = min(count, maxCombHarmonics)
	t := &combTable{f0: f0, binHz: binHz, start: make([]int32, len(f0)+1),
		thr: make([]float32, len(f0)), wsum: make([]float32, len(f0)),
		shaftPos: make([]float32, len(f0)), shaftInv: make([]float32, len(f0)),
		reach: make([]float32, len(f0)), midPos: make([]float32, len(f0)*midN),
		midInv: make([]float32, len(f0)*midN)}
	if len(f0) > 1 {
		t.logStep = math.Log(f0[1] / f0[0])
	}
	order = max(order, 1)
	for k, f := range f0 {
		t.start[k] = int32(len(t.pos))
		var w2 float64
		w := 1.0
		for m := 1; m <= count; m++ {
			x := float64(m*order) * f / binHz
			if x < 1 || int(x+0.5)+1 >= bins {
				break
			}
			sg := matchTolerance(x)
			t.pos = append(t.pos, float32(x))
			t.inv = append(t.inv, float32(1/(4*sg*sg)))
			t.w = append(t.w, float32(w))
			w2 += w * w
			t.wsum[k] += float32(w)
			w *= combDecay
		}
		t.thr[k] = float32(voiceZ * noiseSD * math.Sqrt(w2))
		t.shaftPos[k] = -1
		if x := f / binHz; order > 1 && x >= 1 && int(x+0.5)+1 < bins {
			sg := matchTolerance(x)
			t.shaftPos[k], t.shaftInv[k] = float32(x), float32(1/(4*sg*sg))
		}
		if k > 0 {
			t.reach[k] = t.reach[k-1]
		}
		for _, x := range t.pos[t.start[k]:] {
			t.reach[k] = max(t.reach[k], x)
		}
		t.reach[k] = max(t.reach[k], t.shaftPos[k])
		for j := range midN {
			t.midPos[k*midN+j] = -1
			if m := midFirst + j; float64(order)*(midFirst-0.5) > midLowOrders && int(t.start[k])+m <= len(t.pos) {
				// The comb has order m: its midpoint lies below it.
				x := (float64(m) - 0.5) * float64(order) * f / binHz
				sg := matchTolerance(x)
				t.midPos[k*midN+j], t.midInv[k*midN+j] = float32(x), float32(1/(4*sg*sg))
			}
		}
	}
	t.start[len(f0)] = int32(len(t.pos))
	return t
}

// salience writes S(f0[k]) − thr[k] for k in [klo, khi) to dst[k−klo] from
// the whitened frame z and its interpolated peak positions pk (whiten).
//
// A comb whose odd harmonics are on average weaker than its even ones by
// more than oddEvenSlack is one whose true fundamental is half the
// candidate's (every second line is a weaker line between the real ones,
// as the shaft-order lines of a two-blade rotor sit between its blade-pass
// lines): the candidate pays oddEvenCost for each neper of the excess. This
// is the usual odd/even-harmonic check of pitch trackers against errors an
// octave low.
func (t *combTable) salience(dst, z, pk []float32, klo, khi int) {
	var v [maxCombHarmonics]float32
	for k := klo; k < khi; k++ {
		lo, hi := t.start[k], t.start[k+1]
		pos, inv := t.pos[lo:hi], t.inv[lo:hi]
		for i, x := range pos {
			v[i] = posValue(z, pk, x, inv[i])
		}
		var shaft float32
		if x := t.shaftPos[k]; x >= 0 {
			shaft = posValue(z, pk, x, t.shaftInv[k])
		}
		dst[k-klo] = t.score(k, v[:len(pos)], shaft, z, pk)
	}
}

// score returns S(f0[k]) − thr[k] from the values v of candidate k's comb
// positions and shaft, the value of its shaft line (ignored where it has
// none); z and pk are the frame, for the octave-high check (midPenalty).
func (t *combTable) score(k int, v []float32, shaft float32, z, pk []float32) float32 {
	var s, odd, even float32
	var nOdd, nEven int
	ws := t.w[t.start[k]:t.start[k+1]]
	for i, vi := range v {
		s += ws[i] * (vi - emptyCost)
		if i%2 == 0 {
			odd += vi
			nOdd++
		} else {
			even += vi
			nEven++
		}
	}
	if nEven > 0 {
		if d := even/float32(nEven) - odd/float32(nOdd) - oddEvenSlack; d > 0 {
			s -= oddEvenCost * d
		}
	}
	if t.shaftPos[k] >= 0 {
		s += shaftLineWeight * max(0, shaft-emptyCost)
	}
	if s > t.thr[k] {
		s -= t.midPenalty(k, z, pk, v)
	}
	return s - t.thr[k]
}

// midPenalty is the octave-high check of candidate k: the comb of twice
// the true shaft frequency reads every second blade-pass line of the
// rotor and leaves the others at its midpoints (m − ½)·B·f0, and its
// shaft-line position holds the rotor's first blade-pass line; with a
// fixed number of harmonics it can then outscore the true comb. When the
// midpoints of orders midFirst..midLast are on average within midSlack of
// the comb's own lines of those orders (one comb's lines, not weaker lines
// between them: a two-blade rotor's odd shaft orders lie there too, and
// are weaker), the candidate loses what those midpoint lines are worth, in
// full from equal levels down to none at midSlack weaker. It is the
// counterpart of the odd/even check of the candidate an octave lower.
// Only combs of three blades or more are checked: a true comb's midpoints
// then lie at shaft orders (m − ½)·B ≥ 4.5, above the low shaft orders
// (midLowOrders) that can be as strong as the blade-pass lines; with two
// blades they are the orders 3, 5, 7 and can hold the imbalance line's
// harmonics.
// The level difference taken is the median of the three orders', and
// each midpoint is worth at most the comb line of its order, so that one
// loud foreign line at a midpoint does not count; candidates whose comb
// has fewer than midLast orders are not checked. v holds the values of
// the comb's positions (order m at v[m−1]). Only candidates that count as
// a motor pay it (the rest are not competing), which keeps it cheap.
func (t *combTable) midPenalty(k int, z, pk, v []float32) float32 {
	var d [midN]float32
	var pay float32
	n := 0
	w := t.w[t.start[k]:t.start[k+1]]
	for j := range midN {
		x := t.midPos[k*midN+j]
		if x < 0 {
			break
		}
		m := midFirst + j
		mv, o := posValue(z, pk, x, t.midInv[k*midN+j]), v[m-1]
		d[n] = mv - o
		// A midpoint line counts no more than the comb's own line beside
		// it: one loud line there (a tone) is not another comb.
		pay += w[m-1] * max(0, min(mv, o)-emptyCost)
		n++
	}
	if n < midN || pay == 0 {
		return 0
	}
	// The middle of the differences: one foreign line cannot set it.
	a, b, c := d[0], d[1], d[2]
	med := max(min(a, b), min(max(a, b), c))
	g := med/midSlack + 1
	return min(max(g, 0), 1) * pay
}

// whitener estimates a frame's noise floor; its scratch is reused.
//
// The floor blocks are narrow at low frequencies, where rotor and room
// noise fall steeply, and widen in proportion to frequency above: block i
// spans [e_i, e_{i+1}) with e_{i+1} = max(e_i + floorMinBlock,
// ⌈e_i·floorGrowth⌉), capped at floorBlock bins.
type whitener struct {
	blk     []float32
	edges   []int32   // block edges for the current length
	centre  []float32 // block centres, bins
	lnFloor []float32 // per block
	lnP     []float32
}

const (
	floorMinBlock = 8
	floorGrowth   = 1.25
)

func (w *whitener) layout(n int) {
	if len(w.edges) > 0 && int(w.edges[len(w.edges)-1]) == n {
		return
	}
	w.edges = w.edges[:0]
	w.centre = w.centre[:0]
	e := 0
	for e < n {
		next := min(n, max(e+floorMinBlock, min(e+floorBlock, int(math.Ceil(float64(e)*floorGrowth)))))
		if n-next < floorMinBlock/2 {
			next = n
		}
		w.edges = append(w.edges, int32(e))
		w.centre = append(w.centre, float32(e+next)/2)
		e = next
	}
	w.edges = append(w.edges, int32(n))
	w.lnFloor = make([]float32, len(w.centre))
	w.blk = make([]float32, floorBlock+floorMinBlock)
}

// whiten writes z_k = ln(P_k/floor_k) to z and keeps ln P. When pk is not
// nil it also writes, for every local maximum k of the power with z_k > 0,
// its position refined by a parabola through ln P (QIFFT, J. O. Smith and
// X. Serra 1987; ample for matching comb positions), and −1 elsewhere. re,
// im, z and pk have the same length.
func (w *whitener) whiten(z, pk, re, im []float32) { w.whitenBelow(z, pk, re, im, len(re)) }

// whitenBelow is whiten for the bins below limit only: z and pk are written
// for k < limit (the rest is left as it was) and agree there with whiten's
// exactly, since the floor blocks are laid out over the whole frame and
// every block that bins below limit depend on is estimated. Passes that
// look only at the low lines of a comb save the rest of the work.
func (w *whitener) whitenBelow(z, pk, re, im []float32, limit int) {
	n := len(re)
	w.layout(n)
	if cap(w.lnP) < n {
		w.lnP = make([]float32, n)
	}
	w.lnP = w.lnP[:n]
	limit = max(0, min(limit, n))
	// Blocks [0, nb) cover every bin below limit and the block after the
	// one holding limit−1, which the interpolation reaches into.
	nb := len(w.centre)
	if limit < n {
		b := 0
		for b < len(w.centre) && int(w.edges[b+1]) <= limit {
			b++
		}
		nb = min(len(w.centre), b+2)
	}
	hiBin := int(w.edges[nb])
	const tiny = 1e-30
	for k := range hiBin {
		w.lnP[k] = float32(math.Log(float64(re[k]*re[k]+im[k]*im[k]) + tiny))
	}
	lnScale := float32(math.Log(float64(floorScale)))
	for b := 0; b < nb; b++ {
		lo, hi := int(w.edges[b]), int(w.edges[b+1])
		q := int(floorQuantile * float64(hi-lo))
		w.lnFloor[b] = smallestK(w.lnP[lo:hi], q, w.blk) + lnScale
	}
	// Interpolate the block floors linearly (in log) between block centres.
	// With all blocks the last one's floor holds to the end; with fewer,
	// the bins below limit all lie before the last centre taken.
	b := 0
	zn := n
	if nb < len(w.centre) {
		zn = min(n, limit)
	}
	for k := range zn {
		x := float32(k) + 0.5
		for b+1 < nb && w.centre[b+1] < x {
			b++
		}
		var f float32
		switch {
		case x <= w.centre[0]:
			f = w.lnFloor[0]
		case b+1 >= nb:
			f = w.lnFloor[nb-1]
		default:
			a := (x - w.centre[b]) / (w.centre[b+1] - w.centre[b])
			f = w.lnFloor[b]*(1-a) + w.lnFloor[b+1]*a
		}
		z[k] = w.lnP[k] - f
	}
	if pk == nil {
		return
	}
	pk[0], pk[n-1] = -1, -1
	for k := 1; k < min(zn, n-1); k++ {
		a, b, c := w.lnP[k-1], w.lnP[k], w.lnP[k+1]
		if !(b > a && b >= c) || z[k] <= 0 {
			pk[k] = -1
			continue
		}
		d := float32(0)
		if den := a - 2*b + c; den < 0 {
			d = 0.5 * (a - c) / den
		}
		pk[k] = float32(k) + d
	}
}

// smallestK returns the k-th smallest element of x (0-based) without
// changing x, keeping the k+1 smallest seen so far sorted in buf (len(buf)
// > k). For the whitener's small k (a fifth of a block of at most 32) it
// does fewer comparisons than a selection, most elements failing the first.
func smallestK(x []float32, k int, buf []float32) float32 {
	top := buf[:k+1]
	copy(top, x[:k+1])
	slices.Sort(top)
	for _, v := range x[k+1:] {
		if v >= top[k] {
			continue
		}
		j := k
		for j > 0 && top[j-1] > v {
			top[j] = top[j-1]
			j--
		}
		top[j] = v
	}
	return top[k]
}

// scatter is the search pass's form of combTable.salience over every
// candidate: instead of reading three bins at each of the candidates'
// comb positions, it visits the frame's peaks and updates the positions
// that read each one. A noise frame has a peak in about one bin of four,
// so most of the reads find nothing; visiting the peaks skips them. The
// arithmetic is posValue's, in the same order, so the result is equal
// bit for bit (TestScatterSalienceAgrees).
type scatter struct {
	t *combTable
	// first[i][j+1] is the first candidate whose harmonic i (i = count:
	// the shaft line) has b0 = int(x + 0.5) ≥ j; rows of bins+3.
	first [][]int32
	// slot[i][k] is the index into the values of candidate k's harmonic
	// i (−1 where it has none).
	slot [][]int32
	vals []float32 // per comb position, then per candidate's shaft line
}

// newScatter prepares the tables for t on frames of bins bins.
func newScatter(t *combTable, bins int) *scatter {
	K := len(t.f0)
	maxH := 0
	for k := 0; k < K; k++ {
		maxH = max(maxH, int(t.start[k+1]-t.start[k]))
	}
	sc := &scatter{t: t, vals: make([]float32, len(t.pos)+K)}
	for i := 0; i <= maxH; i++ {
		row := make([]int32, bins+3)
		slot := make([]int32, K)
		at := func(k int) (float32, bool) {
			if i == maxH {
				if x := t.shaftPos[k]; x >= 0 {
					return x, true
				}
				return 0, false
			}
			if int(t.start[k])+i < int(t.start[k+1]) {
				return t.pos[int(t.start[k])+i], true
			}
			return 0, false
		}
		// Candidates having this harmonic form one run (harmonics are cut
		// at the top of the spectrum only); b0 rises along it.
		j := -1
		for k := 0; k < K; k++ {
			slot[k] = -1
			x, ok := at(k)
			if !ok {
				continue
			}
			if i == maxH {
				slot[k] = int32(len(t.pos) + k)
			} else {
				slot[k] = t.start[k] + int32(i)
			}
			for b0 := int(x + 0.5); j <= b0 && j <= bins+1; j++ {
				row[j+1] = int32(k)
			}
		}
		for ; j <= bins+1; j++ {
			row[j+1] = int32(K)
		}
		sc.first = append(sc.first, row)
		sc.slot = append(sc.slot, slot)
	}
	return sc
}

// worker returns a scatter sharing sc's tables with values of its own (one
// per STFT worker).
func (sc *scatter) worker() *scatter {
	w := *sc
	w.vals = make([]float32, len(sc.vals))
	return &w
}

// salience writes what t.salience(dst, z, pk, 0, K) writes; z and pk need
// to be valid below limit (t.readLimit(K) or more).
func (sc *scatter) salience(dst, z, pk []float32, limit int) {
	t := sc.t
	clear(sc.vals)
	shaftRow := len(sc.first) - 1
	n := min(limit, len(pk)-1)
	for b := 1; b < n; b++ {
		p := pk[b]
		if p < 0 {
			continue
		}
		zb := min(z[b], zCap)
		for i, row := range sc.first {
			if b+3 >= len(row) {
				continue
			}
			slot := sc.slot[i]
			for k := row[b]; k < row[b+3]; k++ {
				s := slot[k]
				if s < 0 {
					continue
				}
				var x, inv float32
				if i == shaftRow {
					x, inv = t.shaftPos[k], t.shaftInv[k]
				} else {
					x, inv = t.pos[s], t.inv[s]
				}
				d := p - x
				u := d * d * inv
				if u >= 1 {
					continue
				}
				sc.vals[s] = max(sc.vals[s], zb*(1-u))
			}
		}
	}
	for k := range t.f0 {
		dst[k] = t.score(k, sc.vals[t.start[k]:t.start[k+1]], sc.vals[len(t.pos)+k], z, pk)
	}
}
