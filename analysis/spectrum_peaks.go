package analysis

import (
	"math"

	"whirlfit/dsp"
)

// SpectrumLine is one peak of an averaged spectrum with the shaft order the
// comb assigns to it.
type SpectrumLine struct {
	Hz, DB float64
	// Order is the shaft order h (the line lies at h × shaft frequency), 0
	// when the line is not on the comb.
	Order int
	// BladePass reports whether Order is a multiple of the blade count.
	BladePass bool
}

// SpectrumReading is the harmonic reading of an averaged spectrum's peaks.
type SpectrumReading struct {
	// ShaftHz is the shaft frequency that best explains the peaks (0 when
	// none does), from a least-squares fit of the assigned lines.
	ShaftHz float64
	Blades  int
	Lines   []SpectrumLine
}

// spectrumTol is the relative distance within which a peak counts as lying
// on a comb line.
const spectrumTol = 0.01

// spectrumFitRangeDB: only lines within this many dB of the strongest
// enter the refinement of the shaft frequency.
const spectrumFitRangeDB = 40

// ReadSpectrumPeaks assigns shaft orders to the peaks of an averaged
// spectrum (dsp.AveragedSpectrum.Peaks). The shaft frequency is chosen, as
// in the tracker, by the blade-pass comb: for each candidate f0 = peak/(m·B)
// within [minHz, maxHz] the score is Σ_m 0.84^(m−1)·(level above the
// weakest peak, less a quarter of the strongest line's for every position
// without a peak) over the positions m·B·f0, m = 1..6, and the odd
// blade-pass harmonics must not be clearly weaker than the even ones (else
// the candidate is an octave low). blades = 0 reads the comb with B = 1 and
// reports Blades 0. Orders are then assigned to every peak within 1 % of a
// multiple of the refined shaft frequency.
func ReadSpectrumPeaks(peaks []dsp.Peak, blades int, minHz, maxHz float64) SpectrumReading {
	rd := SpectrumReading{Blades: blades}
	if len(peaks) == 0 {
		return rd
	}
	b := max(blades, 1)
	floor, top := math.Inf(1), math.Inf(-1)
	for _, p := range peaks {
		floor, top = math.Min(floor, p.DB), math.Max(top, p.DB)
	}
	// An empty comb position costs a quarter of the strongest line's level.
	empty := 0.25 * (top - floor + 1)
	level := func(f float64) float64 {
		best := 0.0
		for _, p := range peaks {
			if math.Abs(p.Hz-f) <= spectrumTol*f {
				best = math.Max(best, p.DB-floor+1)
			}
		}
		return best
	}
	bestScore, bestF := 0.0, 0.0
	for _, p := range peaks {
		for m := 1; m <= combHarmonics; m++ {
			f0 := p.Hz / float64(m*b)
			if f0 < minHz || f0 > maxHz {
				continue
			}
			var s, odd, even float64
			var nOdd, nEven int
			w := 1.0
			for j := 1; j <= combHarmonics; j++ {
				v := level(float64(j*b) * f0)
				s += w * (v - empty)
				w *= combDecay
				if j%2 == 1 {
					odd += v
					nOdd++
				} else {
					even += v
					nEven++
				}
			}
			if d := even/float64(nEven) - odd/float64(nOdd); d > 0 {
				s -= d
			}
			if s > bestScore*(1+1e-9) {
				bestScore, bestF = s, f0
			}
		}
	}
	if bestF == 0 {
		for _, p := range peaks {
			rd.Lines = append(rd.Lines, SpectrumLine{Hz: p.Hz, DB: p.DB})
		}
		return rd
	}
	// Refine: least squares of f_h = h·f0 over the assigned lines, weighted
	// by h (higher orders pin f0 more finely), over the lines within
	// spectrumFitRangeDB of the strongest.
	assign := func(f0 float64, p dsp.Peak) int {
		h := int(math.Round(p.Hz / f0))
		if h < 1 || math.Abs(p.Hz-float64(h)*f0) > spectrumTol*p.Hz {
			return 0
		}
		return h
	}
	f0 := bestF
	for iter := 0; iter < 2; iter++ {
		var num, den float64
		for _, p := range peaks {
			if p.DB < top-spectrumFitRangeDB {
				continue
			}
			if h := float64(assign(f0, p)); h > 0 {
				num += h * p.Hz
				den += h * h
			}
		}
		if den > 0 {
			f0 = num / den
		}
	}
	rd.ShaftHz = f0
	for _, p := range peaks {
		h := assign(f0, p)
		rd.Lines = append(rd.Lines, SpectrumLine{Hz: p.Hz, DB: p.DB, Order: h, BladePass: blades > 0 && h > 0 && h%blades == 0})
	}
	return rd
}
