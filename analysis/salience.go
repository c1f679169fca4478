package analysis

import (
	"math"
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
// The salience of f0 is a weighted harmonic sum in the manner of
// subharmonic summation (D. J. Hermes, "Measurement of pitch by subharmonic
// summation", J. Acoust. Soc. Am. 83(1):257–264, 1988) and the harmonic sum
// spectrum (A. M. Noll, 1969), restricted to the motor's own harmonic set:
//
//	S(f0) = Σ_{h ≥ 1, h·f0 ≤ Fcap} w_h · (v(h·f0) − c)
//	v(f) = clamp(max(z_⌊f/Δ⌋, z_⌊f/Δ⌋+1), 0, zCap)
//
// with w_h = bladeWeight where h is a multiple of the blade count B (the
// blade-pass line and its harmonics) and 1 elsewhere (the shaft line and the
// shaft-order lines from imbalance and commutation). The sum runs over a
// fixed band [0, Fcap] rather than a fixed number of harmonics, and an empty
// harmonic costs c: a candidate an octave low (f0/2) then pays for the empty
// half-integer positions, and a candidate an octave or a blade count high
// (2·f0, B·f0) collects only every second (B-th) blade-pass line. Clamping at
// zCap keeps one very strong line (a whine, a hum harmonic) from outweighing
// a comb. Why these guard the octave and blade-count errors is worked out in
// TestSalienceOctaveGuard, which also measures the margins.
const (
	// floorBlock is the number of bins per noise-floor block.
	floorBlock = 32
	// floorQuantile is the quantile of P taken as the floor in each block,
	// low so that a dense comb of lines does not lift it. For Exp(1) noise
	// its value is −ln(1 − q), which floorScale undoes.
	floorQuantile = 0.2
	// zCap is the largest excess one harmonic contributes: 4.6 nepers = 20 dB.
	zCap = 4.6
	// emptyCost is c above: the expected v of a noise-only position (0.36
	// nepers for the max of two neighbouring Hann bins, measured in
	// TestWhitenNoiseStatistics) plus a margin that makes an empty position
	// cost something.
	emptyCost = 0.6
	// bladeWeight is w_h at multiples of the blade count.
	bladeWeight = 3
	// salienceFcapHz bounds the band of the harmonic sum. Rotor lines
	// above a few kHz are usually lost in broadband noise.
	salienceFcapHz = 6000
)

var floorScale = float32(1 / -math.Log(1-floorQuantile))

// combTable lists, for each candidate shaft frequency on a log grid, the
// bins and weights of its harmonics in a spectrum of a given bin width.
type combTable struct {
	f0      []float64 // candidate shaft frequencies, Hz, increasing
	logStep float64   // ln(f0[k+1]/f0[k])
	start   []int32   // harmonics of candidate k: bin[start[k]:start[k+1]]
	bin     []int32
	w       []float32
	// thr is the salience a candidate must exceed to count as a motor:
	// voiceZ noise standard deviations of its sum.
	thr   []float32
	wsum  []float32
	binHz float64
}

// noiseSD is the standard deviation of v for a noise-only position
// (TestWhitenNoiseStatistics measures it); voiceZ scales the voicing
// threshold in units of the sum's noise standard deviation.
const (
	noiseSD = 0.55
	voiceZ  = 4
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

// newCombTable builds the table for candidates f0 in a spectrum of bins
// bins of width binHz. blades = 0 weights every harmonic alike.
func newCombTable(f0 []float64, binHz float64, bins, blades int, fcapHz float64) *combTable {
	t := &combTable{f0: f0, binHz: binHz, start: make([]int32, len(f0)+1),
		thr: make([]float32, len(f0)), wsum: make([]float32, len(f0))}
	if len(f0) > 1 {
		t.logStep = math.Log(f0[1] / f0[0])
	}
	for k, f := range f0 {
		t.start[k] = int32(len(t.bin))
		var w2 float64
		for h := 1; ; h++ {
			x := float64(h) * f / binHz
			b := int(x)
			if float64(h)*f > fcapHz || b+1 >= bins {
				break
			}
			w := float32(1)
			if blades > 0 && h%blades == 0 {
				w = bladeWeight
			}
			t.bin = append(t.bin, int32(b))
			t.w = append(t.w, w)
			w2 += float64(w) * float64(w)
			t.wsum[k] += w
		}
		t.thr[k] = float32(voiceZ * noiseSD * math.Sqrt(w2))
	}
	t.start[len(f0)] = int32(len(t.bin))
	return t
}

// salience writes S(f0[k]) − thr[k] for k in [klo, khi) to dst[k−klo] from
// the whitened frame z.
func (t *combTable) salience(dst, z []float32, klo, khi int) {
	for k := klo; k < khi; k++ {
		var s float32
		bins := t.bin[t.start[k]:t.start[k+1]]
		ws := t.w[t.start[k]:t.start[k+1]]
		for i, b := range bins {
			v := max(z[b], z[b+1])
			v = min(max(v, 0), zCap)
			s += ws[i] * (v - emptyCost)
		}
		dst[k-klo] = s - t.thr[k]
	}
}

// whitener estimates a frame's noise floor; its scratch is reused.
type whitener struct {
	blk     []float32
	lnFloor []float32 // per block
	lnP     []float32
}

// whiten writes z_k = ln(P_k/floor_k) to z and keeps ln P and the block
// floors for later queries (snr). re, im and z have the same length.
func (w *whitener) whiten(z, re, im []float32) {
	n := len(re)
	nb := (n + floorBlock - 1) / floorBlock
	if cap(w.lnFloor) < nb {
		w.lnFloor = make([]float32, nb)
		w.blk = make([]float32, floorBlock)
	}
	if cap(w.lnP) < n {
		w.lnP = make([]float32, n)
	}
	w.lnFloor = w.lnFloor[:nb]
	w.lnP = w.lnP[:n]
	const tiny = 1e-30
	for k := range re {
		w.lnP[k] = float32(math.Log(float64(re[k]*re[k]+im[k]*im[k]) + tiny))
	}
	for b := 0; b < nb; b++ {
		lo, hi := b*floorBlock, min(n, (b+1)*floorBlock)
		blk := w.blk[:hi-lo]
		copy(blk, w.lnP[lo:hi])
		q := int(floorQuantile * float64(len(blk)))
		w.lnFloor[b] = selectK(blk, q) + float32(math.Log(float64(floorScale)))
	}
	// Interpolate the block floors linearly (in log) between block centres.
	for k := range z {
		x := (float32(k)+0.5)/float32(floorBlock) - 0.5
		var f float32
		switch {
		case x <= 0 || nb == 1:
			f = w.lnFloor[0]
		case x >= float32(nb-1):
			f = w.lnFloor[nb-1]
		default:
			i := int(x)
			a := x - float32(i)
			f = w.lnFloor[i]*(1-a) + w.lnFloor[i+1]*a
		}
		z[k] = w.lnP[k] - f
	}
}

// selectK returns the k-th smallest element of x (0-based), reordering x
// (Hoare's selection, in place, no allocation).
func selectK(x []float32, k int) float32 {
	lo, hi := 0, len(x)-1
	for lo < hi {
		p := x[(lo+hi)/2]
		i, j := lo, hi
		for i <= j {
			for x[i] < p {
				i++
			}
			for x[j] > p {
				j--
			}
			if i <= j {
				x[i], x[j] = x[j], x[i]
				i++
				j--
			}
		}
		if k <= j {
			hi = j
		} else if k >= i {
			lo = i
		} else {
			return x[k]
		}
	}
	return x[k]
}
