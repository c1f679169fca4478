package analysis

import (
	"math"
	"math/rand/v2"
)

// Invented data for self-consistency tests: a first-order-plus-dead-time
// trajectory seen through a Hann² (normalised w²) kernel, sampled at a hop,
// plus noise that is correlated like overlapping frames (white noise
// smoothed by the same kernel), with optional NaN dropouts.

type synthStep struct {
	commandS, deadS, tauS, toHz float64
}

type synthTrackSpec struct {
	hopS, windowS, durS float64
	startHz             float64
	steps               []synthStep
	noiseHz             float64 // sd of the track noise
	dropouts            [][2]float64
	standstillUntilS    float64 // NaN (no motor) before this time, 0 rpm true
}

const synthKernelDtS = 2.5e-4

// hann2Kernel is the normalised w² of a Hann window of length windowS,
// sampled every dt.
func hann2Kernel(windowS, dt float64) []float64 {
	n := int(math.Round(windowS/dt)) | 1
	k := make([]float64, n)
	sum := 0.0
	for i := range k {
		w := math.Pow(math.Sin(math.Pi*float64(i+1)/float64(n+1)), 2)
		k[i] = w * w
		sum += k[i]
	}
	for i := range k {
		k[i] /= sum
	}
	return k
}

// trueHz is the true shaft frequency at t: each step starts from wherever
// the previous response is at its onset.
func (s *synthTrackSpec) trueHz(t float64) float64 {
	if t < s.standstillUntilS {
		return 0
	}
	f := s.startHz
	for _, st := range s.steps {
		t0 := st.commandS + st.deadS
		if t < t0 {
			break
		}
		f = st.toHz + (f-st.toHz)*math.Exp(-(t-t0)/st.tauS)
	}
	return f
}

func (s *synthTrackSpec) track(rng *rand.Rand) *Track {
	k := hann2Kernel(s.windowS, synthKernelDtS)
	c := (len(k) - 1) / 2
	n := int(s.durS / s.hopS)
	// Fine white noise, smoothed by the kernel below.
	nFine := int(s.durS/synthKernelDtS) + len(k) + 2
	e := make([]float64, nFine)
	for i := range e {
		e[i] = rng.NormFloat64()
	}
	k2 := 0.0
	for _, v := range k {
		k2 += v * v
	}
	eScale := s.noiseHz / math.Sqrt(k2)
	tr := &Track{Blades: 2, Kernel: k, KernelDtS: synthKernelDtS}
	for i := 0; i < n; i++ {
		t := s.windowS/2 + float64(i)*s.hopS
		if t+s.windowS/2 > s.durS {
			break
		}
		v, noise := 0.0, 0.0
		base := int(math.Round(t/synthKernelDtS)) + 1
		for j, w := range k {
			v += w * s.trueHz(t+float64(j-c)*synthKernelDtS)
			noise += w * e[base+j]
		}
		v += noise * eScale
		if t < s.standstillUntilS+s.windowS/2 {
			v = math.NaN()
		}
		for _, d := range s.dropouts {
			if t >= d[0] && t < d[1] {
				v = math.NaN()
			}
		}
		tr.TimeS = append(tr.TimeS, t)
		tr.ShaftHz = append(tr.ShaftHz, v)
		tr.SigmaHz = append(tr.SigmaHz, s.noiseHz)
		conf := 0.9
		if math.IsNaN(v) {
			conf = 0
		}
		tr.Confidence = append(tr.Confidence, conf)
	}
	return tr
}
