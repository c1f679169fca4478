package synth

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
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
	// CommutationLevel is the amplitude of the six-step commutation line of
	// a three-phase motor, at h = 6·PolePairs (six commutations per
	// electrical cycle — common practice for trapezoidal drives).
	CommutationLevel float64
	// PWMHz, when > 0 with PolePairs > 0, adds switching noise of the speed
	// controller: a carrier at PWMHz with sidebands at PWMHz ± k·PolePairs·f
	// for k = 1, 2, amplitudes PWMLevel, PWMLevel/2, PWMLevel/4, all scaled
	// by the square root of the amplitude law (the motor current grows more
	// slowly than the thrust) — engineering judgement. The sidebands move
	// with the speed but are not harmonics of it: a test for trackers.
	PWMHz    float64
	PWMLevel float64
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

// maxOrder bounds harmonic counts and pole pairs (h·f must stay a sane
// number of lines to render).
const maxOrder = 256

// validate reports values that cannot be rendered.
func (r Rotor) validate() error {
	switch {
	case r.Blades < 1 || r.Blades > maxOrder:
		return fmt.Errorf("%d blades", r.Blades)
	case r.BladeHarmonics < 0 || r.BladeHarmonics*r.Blades > maxOrder,
		r.ShaftHarmonics < 0 || r.ShaftHarmonics > maxOrder,
		r.PolePairs < 0 || 6*r.PolePairs > maxOrder:
		return fmt.Errorf("orders beyond %d (harmonics %d×%d blades, %d shaft, %d pole pairs)",
			maxOrder, r.BladeHarmonics, r.Blades, r.ShaftHarmonics, r.PolePairs)
	case !finite(r.BladeLevel, r.BladeRolloff, r.ShaftLevel, r.WhineLevel, r.CommutationLevel,
		r.PWMHz, r.PWMLevel, r.RefHz, r.LevelExponent, r.SpreadDB, r.AMDepth, r.AMRateHz, r.JitterRel):
		return fmt.Errorf("a level, rate or exponent is not finite")
	case r.RefHz < 0 || r.SpreadDB < 0 || r.AMRateHz < 0:
		return fmt.Errorf("negative RefHz, SpreadDB or AMRateHz")
	case r.AMDepth < 0 || r.AMDepth >= 1 || r.JitterRel < 0 || r.JitterRel >= 0.5:
		return fmt.Errorf("AMDepth %g outside [0, 1) or JitterRel %g outside [0, 0.5)", r.AMDepth, r.JitterRel)
	}
	return nil
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
		add(6*r.PolePairs, r.CommutationLevel)
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

// lowpassNoise is a stream of Gaussian noise of unit RMS band-limited by a
// one-pole low-pass of cut-off fcHz, generated one sample at a time.
type lowpassNoise struct {
	a, scale, y float64
	rng         *rand.Rand
}

func newLowpassNoise(fcHz, fs float64, rng *rand.Rand) *lowpassNoise {
	a := math.Exp(-2 * math.Pi * fcHz / fs)
	// Variance of y = a·y + (1−a)·x for unit white x is (1−a)/(1+a).
	scale := math.Sqrt((1 + a) / (1 - a))
	return &lowpassNoise{a: a, scale: scale, y: rng.NormFloat64() / scale, rng: rng} // stationary start
}

func (g *lowpassNoise) next() float64 {
	g.y = g.a*g.y + (1-g.a)*g.rng.NormFloat64()
	return g.y * g.scale
}

// rotorRender is the output of renderRotor.
type rotorRender struct {
	tonal []float64 // the rotor's tonal sound
	// drive is the speed law (f/RefHz)^exponent times a blade-rate
	// modulation, used to shape the rotor's broadband noise.
	drive   []float64
	running []bool // trajectory > 0 at the sample
}

// renderRotor renders n samples of the rotor at sample rate fs following tr;
// withDrive asks for the broadband drive signal too.
func renderRotor(r Rotor, tr Trajectory, n int, fs float64, rng *rand.Rand, withDrive bool) rotorRender {
	lines := r.Lines(rng)
	out := rotorRender{
		tonal:   make([]float64, n),
		running: make([]bool, n),
	}
	if withDrive {
		out.drive = make([]float64, n)
	}
	dt := 1 / fs
	// Speed jitter on the half-sample grid used by Simpson's rule, and slow
	// amplitude modulation, each from its own stream so that one does not
	// shift the other's draws.
	var jit *lowpassNoise
	if r.JitterRel > 0 {
		jit = newLowpassNoise(20, 2*fs, rand.New(rand.NewPCG(rng.Uint64(), 1)))
	}
	var am *lowpassNoise
	if r.AMDepth > 0 {
		rate := r.AMRateHz
		if rate <= 0 {
			rate = 3
		}
		am = newLowpassNoise(rate, fs, rand.New(rand.NewPCG(rng.Uint64(), 2)))
	}
	raw := func(k int) float64 { // trajectory at time k·dt/2, in [0, fs]
		f := tr(float64(k) * dt / 2)
		if !(f > 0) { // also catches NaN
			return 0
		}
		// Above fs every line is silent (they fade out below Nyquist); the
		// bound keeps the phase finite for an infinite trajectory.
		return min(f, fs)
	}
	// freq is the rendered frequency at time k·dt/2; it must be called for
	// k = 0, 1, 2, … in turn (the jitter is a stream).
	freq := func(k int) float64 {
		f := raw(k)
		if jit != nil {
			f *= 1 + r.JitterRel*jit.next()
		}
		return f
	}
	// Lines in ascending order with their phase offsets as unit phasors:
	// harmonic h is Im(z^h · e^{i2πp}) with z = e^{i2πφ}, z^h formed by
	// repeated multiplication (relative error about h·1e-16, far below
	// the 1e-7 the tests allow).
	sort.Slice(lines, func(i, j int) bool { return lines[i].H < lines[j].H })
	maxH := 0
	if len(lines) > 0 {
		maxH = lines[len(lines)-1].H
	}
	bi := max(r.Blades, 1)
	maxH = max(maxH, bi)
	pwm := r.PWMHz > 0 && r.PWMLevel != 0 && r.PolePairs > 0
	var pwmK [2]int // shaft orders of the first and second sideband offsets
	var pwmZ [2][2]float64
	if pwm {
		pwmK = [2]int{r.PolePairs, 2 * r.PolePairs}
		maxH = max(maxH, pwmK[1])
	}
	type rot struct {
		h           int
		amp, cr, ci float64
	}
	rl := make([]rot, len(lines))
	for i, l := range lines {
		sn, cs := math.Sincos(2 * math.Pi * l.PhaseC)
		rl[i] = rot{l.H, l.Amp, cs, sn}
	}
	ref, ex := r.refHz(), r.exponent()
	nyq := fs / 2
	fadeLo, fadeHi := 0.84*nyq, 0.96*nyq // lines fade out below Nyquist
	phase := 0.0                         // shaft phase in cycles, wrapped to [0, 1)
	f0r := raw(0)
	f0 := freq(0)
	for i := range n {
		f := f0
		out.running[i] = f0r > 0
		if f > 0 {
			var law float64
			if ex == 2 {
				law = (f / ref) * (f / ref)
			} else {
				law = math.Pow(f/ref, ex)
			}
			if am != nil {
				law *= 1 + r.AMDepth*am.next()
			}
			zi, zr := math.Sincos(2 * math.Pi * phase)
			pr, pi := 1.0, 0.0 // z^h
			var s, bladeCos float64
			k := 0
			for h := 1; h <= maxH; h++ {
				pr, pi = pr*zr-pi*zi, pr*zi+pi*zr
				if h == bi {
					bladeCos = pr
				}
				if pwm && h == pwmK[0] {
					pwmZ[0] = [2]float64{pr, pi}
				}
				if pwm && h == pwmK[1] {
					pwmZ[1] = [2]float64{pr, pi}
				}
				for ; k < len(rl) && rl[k].h == h; k++ {
					hf := float64(h) * f
					if hf >= fadeHi {
						continue
					}
					a := rl[k].amp
					if hf > fadeLo {
						a *= (fadeHi - hf) / (fadeHi - fadeLo)
					}
					s += a * (pr*rl[k].ci + pi*rl[k].cr)
				}
			}
			out.tonal[i] = law * s
			if pwm {
				x := r.PWMHz * float64(i) / fs
				ci, cr := math.Sincos(2 * math.Pi * (x - math.Floor(x)))
				fe := float64(r.PolePairs) * f
				sq := math.Sqrt(law)
				if r.PWMHz < fadeHi {
					out.tonal[i] += sq * r.PWMLevel * ci
				}
				for k, amp := range [2]float64{r.PWMLevel / 2, r.PWMLevel / 4} {
					zr, zi := pwmZ[k][0], pwmZ[k][1]
					off := float64(k+1) * fe
					if hi := r.PWMHz + off; hi < fadeHi {
						out.tonal[i] += sq * amp * (cr*zi + ci*zr) // Im(c·z^kP)
					}
					if lo := r.PWMHz - off; lo > 0 && lo < fadeHi {
						out.tonal[i] += sq * amp * (ci*zr - cr*zi) // Im(c·conj(z^kP))
					}
				}
			}
			if out.drive != nil {
				out.drive[i] = law * (1 + 0.3*bladeCos)
			}
		}
		// Simpson's rule over [i·dt, (i+1)·dt].
		fm := freq(2*i + 1)
		f1r := raw(2*i + 2)
		f1 := f1r
		if jit != nil {
			f1 *= 1 + r.JitterRel*jit.next()
		}
		phase += dt / 6 * (f + 4*fm + f1)
		phase -= math.Floor(phase)
		f0, f0r = f1, f1r
	}
	return out
}
