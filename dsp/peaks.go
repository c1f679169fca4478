package dsp

import "fmt"

// Peak is a spectral peak. FindPeaks fills Bin and Mag; AveragedSpectrum's
// Peaks also sets the interpolated offset, frequency and level.
type Peak struct {
	// Bin is the index of the local maximum; Offset the fractional
	// correction from interpolation, so the peak lies at bin Bin+Offset.
	Bin    int
	Offset float64
	// Mag is the value at Bin, in the units of the row searched.
	Mag float32
	// Hz and DB are the interpolated frequency and level where known.
	Hz, DB float64
}

// FindPeaks returns the k largest local maxima of row among bins
// minBin..maxBin (inclusive, clipped to 1..len(row)−2 so that both
// neighbours exist), in order of decreasing Mag, written into dst[:0].
// A local maximum is a bin above its left neighbour and not below its right
// one (a flat top counts once, at its left end). dst is reused when its
// capacity is at least k, so a caller that keeps it allocates nothing; nil
// dst is allocated. It panics if k < 0.
//
// The scan compares each bin against the current k-th largest value first,
// so once k peaks are held most bins cost one comparison.
func FindPeaks(dst []Peak, row []float32, k, minBin, maxBin int) []Peak {
	if k < 0 {
		panic(fmt.Sprintf("dsp: FindPeaks with k = %d", k))
	}
	if cap(dst) < k {
		dst = make([]Peak, 0, k)
	}
	dst = dst[:0]
	lo, hi := max(minBin, 1), min(maxBin, len(row)-2)
	if k == 0 || lo > hi {
		return dst
	}
	thresh := float32(-1) // values must exceed it; the k-th largest once full
	full := false
	r := row[lo-1 : hi+2] // r[j] = row[lo−1+j]; candidates j = 1..len(r)−2
	for j := 1; j+1 < len(r); j++ {
		v := r[j]
		// Written as negated "greater" tests: one branch each (a NaN fails
		// them all and is skipped).
		if !(v > thresh) || !(v > r[j-1]) || !(v >= r[j+1]) {
			continue
		}
		i := lo - 1 + j
		// Insert in descending order; drop the smallest when full.
		n := len(dst)
		if !full {
			dst = append(dst, Peak{})
		} else {
			n--
		}
		j := n
		for j > 0 && dst[j-1].Mag < v {
			if j < len(dst) {
				dst[j] = dst[j-1]
			}
			j--
		}
		dst[j] = Peak{Bin: i, Mag: v}
		if len(dst) == k {
			full = true
			thresh = dst[k-1].Mag
		}
	}
	return dst
}
