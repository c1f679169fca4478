package analysis

import "math"

// SecondsPerMinute converts revolutions per second (Hz) to rpm.
const SecondsPerMinute = 60

// RPM returns the rotor speed in revolutions per minute for a shaft
// frequency in Hz.
func RPM(shaftHz float64) float64 { return shaftHz * SecondsPerMinute }

// ShaftHz returns the shaft frequency for a speed in rpm.
func ShaftHz(rpm float64) float64 { return rpm / SecondsPerMinute }

// BladePassHz returns the blade-pass frequency of a rotor with the given
// number of blades turning at shaftHz.
func BladePassHz(shaftHz float64, blades int) float64 { return shaftHz * float64(blades) }

// ShaftHzFromBladePass returns the shaft frequency of a rotor with the given
// number of blades whose blade-pass line is at bladePassHz.
func ShaftHzFromBladePass(bladePassHz float64, blades int) float64 {
	return bladePassHz / float64(blades)
}

// Track is rotor speed over time: one sample per STFT frame.
type Track struct {
	// Blades is the blade count the track was made with.
	Blades int
	// TimeS is each sample's time in seconds (the centre of its frame).
	TimeS []float64
	// ShaftHz is the shaft (once-per-revolution) frequency; NaN where no
	// motor was found in the frame (silence, motor stopped).
	ShaftHz []float64
	// SigmaHz is the estimated standard error of ShaftHz in that frame.
	SigmaHz []float64
	// Confidence in [0, 1]: how clearly the harmonic comb stood out.
	Confidence []float64
	// Kernel describes how the track sees the true trajectory: sample i is
	// ≈ Σ_j Kernel[j]·f(TimeS[i] + (j − (len(Kernel)−1)/2)·KernelDtS).
	// The weights sum to 1. Fits convolve their model with it.
	Kernel    []float64
	KernelDtS float64
	// fine, when not nil, is the same rotor tracked with a frame half as
	// long: a kernel half as wide, noisier samples. Fits of steps fast for
	// the track's kernel are refitted on it (fineAlternative).
	fine *Track
	// Warnings collects what the tracker noticed (another blade count fits
	// better, frames without motor, clipping, …).
	Warnings []string
}

// Len returns the number of samples.
func (t *Track) Len() int { return len(t.TimeS) }

// RPMAt returns sample i's speed in rpm (NaN where no motor was found).
func (t *Track) RPMAt(i int) float64 { return RPM(t.ShaftHz[i]) }

// BladePassHzAt returns sample i's blade-pass frequency.
func (t *Track) BladePassHzAt(i int) float64 { return BladePassHz(t.ShaftHz[i], t.Blades) }

// Valid reports whether sample i holds a measurement.
func (t *Track) Valid(i int) bool { return !math.IsNaN(t.ShaftHz[i]) }

// Between returns the part of the track from fromS to toS (seconds; toS ≤ 0
// means to the end). The samples are shared with t, and the warnings and
// kernel carried over.
func (t *Track) Between(fromS, toS float64) *Track {
	lo, hi := 0, len(t.TimeS)
	for lo < hi && t.TimeS[lo] < fromS {
		lo++
	}
	if toS > 0 {
		for hi > lo && t.TimeS[hi-1] > toS {
			hi--
		}
	}
	out := *t
	out.TimeS = t.TimeS[lo:hi]
	out.ShaftHz = t.ShaftHz[lo:hi]
	out.SigmaHz = t.SigmaHz[lo:hi]
	out.Confidence = t.Confidence[lo:hi]
	if t.fine != nil {
		out.fine = t.fine.Between(fromS, toS)
	}
	return &out
}
