package synth

import (
	"math"
	"math/rand/v2"
)

// Rotor describes the tonal sound of one motor and propeller. Levels are
// peak amplitudes of a line at the reference shaft frequency RefHz; at other
// speeds every tonal amplitude is scaled by (f/RefHz)^LevelExponent (see the
// package documentation). Only ratios between levels matter for a Scene,
// whose output is normalised; the scene's SNR fixes the noise.
type Rotor struct {
	// Blades is the propeller's blade count B; the blade-pass frequency is
	// B × shaft frequency. Must be ≥ 1.
	Blades int
	// BladeHarmonics is the number of blade-pass harmonics rendered
	// (h = B, 2B, …, BladeHarmonics·B); BladeLevel is the amplitude of the
	// first and the k-th has BladeLevel·k^−BladeRolloff.
	BladeHarmonics int
	BladeLevel     float64
	BladeRolloff   float64
	// ShaftHarmonics shaft-order lines h = 1, 2, … (skipping multiples of B,
	// which are blade-pass lines) from imbalance and blade-to-blade
	// differences; the h-th has amplitude ShaftLevel/h.
	ShaftHarmonics int
	ShaftLevel     float64
	// PolePairs of the motor: electrical whine at h = PolePairs with
	// amplitude WhineLevel, and at 2·PolePairs with WhineLevel/2.
	// PolePairs = 0 or WhineLevel = 0 renders no whine.
	PolePairs  int
	WhineLevel float64
	// RefHz is the shaft frequency at which the levels hold (0 means 300 Hz).
	RefHz float64
	// LevelExponent is the exponent of the amplitude law (0 means 2).
	LevelExponent float64
	// SpreadDB is the standard deviation, in dB, of a random per-line gain
	// drawn once per rotor from the scene's seed (0 = levels exactly as given).
	SpreadDB float64
	// AMDepth is the RMS depth of a slow random amplitude modulation common
	// to all lines (0.05 = 5 %), band-limited to about AMRateHz (0 means 3 Hz).
	AMDepth  float64
	AMRateHz float64
	// JitterRel is the RMS relative fluctuation of the rendered shaft speed
	// around the trajectory (band-limited to about 20 Hz). It models rpm
	// ripple that is NOT part of the truth: keep it 0 when a test needs the
	// rendered frequency to equal the trajectory exactly.
	JitterRel float64
}

// NewRotor returns a rotor with typical relative levels for a small
// multirotor propeller: four blade-pass harmonics falling off as 1/k, a
// shaft line 12 dB below the blade-pass fundamental with two harmonics,
// whine 20 dB below it, ±2 dB random line gains and 3 % amplitude modulation.
// These proportions are engineering judgement.
func NewRotor(blades, polePairs int) Rotor {
	return Rotor{
		Blades:         blades,
		BladeHarmonics: 4,
		BladeLevel:     1,
		BladeRolloff:   1,
		ShaftHarmonics: 2,
		ShaftLevel:     0.25,
		PolePairs:      polePairs,
		WhineLevel:     0.1,
		RefHz:          300,
		SpreadDB:       2,
		AMDepth:        0.03,
	}
}

func (r Rotor) refHz() float64 {
	if r.RefHz > 0 {
		return r.RefHz
	}
	return 300
}

func (r Rotor) exponent() float64 {
	if r.LevelExponent != 0 {
		return r.LevelExponent
	}
	return 2
}

// Line is one tonal component of a rotor: shaft order H (the line is at
// H × shaft frequency), amplitude at the reference speed and phase in cycles.
type Line struct {
	H      int
	Amp    float64
	PhaseC float64
}

// Lines returns the rotor's tonal components with the per-line random gains
// and phases drawn from rng. Lines at the same order are merged.
func (r Rotor) Lines(rng *rand.Rand) []Line {
	amps := map[int]float64{}
	var order []int
	add := func(h int, a float64) {
		if h <= 0 || a == 0 {
			return
		}
		if _, ok := amps[h]; !ok {
			order = append(order, h)
		}
		amps[h] += a
	}
	b := max(r.Blades, 1)
	for k := 1; k <= r.BladeHarmonics; k++ {
		add(k*b, r.BladeLevel*math.Pow(float64(k), -r.BladeRolloff))
	}
	for h := 1; h <= r.ShaftHarmonics; h++ {
		if h%b != 0 {
			add(h, r.ShaftLevel/float64(h))
		}
	}
	if r.PolePairs > 0 {
		add(r.PolePairs, r.WhineLevel)
		add(2*r.PolePairs, r.WhineLevel/2)
	}
	lines := make([]Line, len(order))
	for i, h := range order {
		g := 1.0
		if r.SpreadDB > 0 {
			g = math.Pow(10, r.SpreadDB*rng.NormFloat64()/20)
		}
		lines[i] = Line{H: h, Amp: amps[h] * g, PhaseC: rng.Float64()}
	}
	return lines
}

// lowpassNoise fills dst with Gaussian noise of unit RMS band-limited by a
// one-pole low-pass of cut-off fcHz.
func lowpassNoise(dst []float64, fcHz, fs float64, rng *rand.Rand) {
	a := math.Exp(-2 * math.Pi * fcHz / fs)
	// Variance of y = a·y + (1−a)·x for unit white x is (1−a)/(1+a).
	scale := math.Sqrt((1 + a) / (1 - a))
	y := rng.NormFloat64() / scale // start in the stationary state
	for i := range dst {
		y = a*y + (1-a)*rng.NormFloat64()
		dst[i] = y * scale
	}
}

// rotorRender is the output of renderRotor.
type rotorRender struct {
	tonal []float64 // the rotor's tonal sound
	// drive is the speed law (f/RefHz)^exponent times a blade-rate
	// modulation, used to shape the rotor's broadband noise.
	drive   []float64
	running []bool // trajectory > 0 at the sample
}

// renderRotor renders n samples of the rotor at sample rate fs following tr.
func renderRotor(r Rotor, tr Trajectory, n int, fs float64, rng *rand.Rand) rotorRender {
	lines := r.Lines(rng)
	out := rotorRender{
		tonal:   make([]float64, n),
		drive:   make([]float64, n),
		running: make([]bool, n),
	}
	dt := 1 / fs
	// Speed jitter, sampled on the half-sample grid used by Simpson's rule.
	var jit []float64
	if r.JitterRel > 0 {
		jit = make([]float64, 2*n+1)
		lowpassNoise(jit, 20, 2*fs, rng)
		for i := range jit {
			jit[i] = 1 + r.JitterRel*jit[i]
		}
	}
	var am []float64
	if r.AMDepth > 0 {
		rate := r.AMRateHz
		if rate <= 0 {
			rate = 3
		}
		am = make([]float64, n)
		lowpassNoise(am, rate, fs, rng)
	}
	freq := func(k int) float64 { // frequency at time k·dt/2
		f := tr(float64(k) * dt / 2)
		if !(f > 0) { // also catches NaN
			return 0
		}
		if jit != nil {
			f *= jit[k]
		}
		return f
	}
	ref, ex := r.refHz(), r.exponent()
	b := float64(max(r.Blades, 1))
	nyq := fs / 2
	fadeLo, fadeHi := 0.84*nyq, 0.96*nyq // lines fade out below Nyquist
	phase := 0.0                         // shaft phase in cycles, wrapped to [0, 1)
	f0 := freq(0)
	for i := range n {
		f := f0
		out.running[i] = tr(float64(i)*dt) > 0
		if f > 0 {
			law := math.Pow(f/ref, ex)
			if am != nil {
				law *= 1 + r.AMDepth*am[i]
			}
			var s float64
			for _, l := range lines {
				hf := float64(l.H) * f
				if hf >= fadeHi {
					continue
				}
				a := l.Amp
				if hf > fadeLo {
					a *= (fadeHi - hf) / (fadeHi - fadeLo)
				}
				x := float64(l.H)*phase + l.PhaseC
				s += a * math.Sin(2*math.Pi*(x-math.Floor(x)))
			}
			out.tonal[i] = law * s
			out.drive[i] = law * (1 + 0.3*math.Cos(2*math.Pi*b*phase))
		}
		// Simpson's rule over [i·dt, (i+1)·dt].
		fm, f1 := freq(2*i+1), freq(2*i+2)
		phase += dt / 6 * (f + 4*fm + f1)
		phase -= math.Floor(phase)
		f0 = f1
	}
	return out
}
