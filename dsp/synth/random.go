package synth

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
)

// Range is a closed interval [Min, Max] from which a value is drawn
// uniformly (Min = Max pins it).
type Range struct{ Min, Max float64 }

func (r Range) draw(rng *rand.Rand) float64 {
	if r.Max <= r.Min {
		return r.Min
	}
	return r.Min + (r.Max-r.Min)*rng.Float64()
}

// drawLog draws log-uniformly (both ends must be > 0).
func (r Range) drawLog(rng *rand.Rand) float64 {
	if r.Max <= r.Min || r.Min <= 0 {
		return r.Min
	}
	return r.Min * math.Exp(math.Log(r.Max/r.Min)*rng.Float64())
}

// RandomOptions sets the ranges RandomScene draws from. Start from
// DefaultRandomOptions and change what a test needs.
type RandomOptions struct {
	// SampleRates to choose from, Hz.
	SampleRates []int
	// MinBlades and MaxBlades bound the blade count (inclusive).
	MinBlades, MaxBlades int
	// ShaftHz bounds every steady shaft frequency.
	ShaftHz Range
	// SNRdB as defined on Scene.
	SNRdB Range
	// TauS and DeadS: time constants (drawn log-uniformly) and dead times.
	TauS, DeadS Range
	// DownTauFactor multiplies τ for down steps (drawn per step, the result
	// kept within TauS; 1–1 makes up and down alike).
	DownTauFactor Range
	// MinSteps, MaxSteps bound the number of throttle steps; at least one
	// goes up and one down when MinSteps ≥ 2.
	MinSteps, MaxSteps int
	// MinGapS is the shortest time between two commands. A gap is never
	// shorter than SettleTaus·τ + θ of the step before it either, so that
	// every step settles enough to be fitted (0 = no such rule).
	MinGapS    float64
	SettleTaus float64
	// MaxSpeedRatio bounds the ratio of the highest to the lowest shaft
	// frequency within one recording (one motor's working band inside
	// ShaftHz); 0 means no bound. With tonal power ∝ f^(2·LevelExponent),
	// a ratio of 2.5 keeps the quietest level within about 16–20 dB of the
	// loudest.
	MaxSpeedRatio float64
	// MinChange is the smallest relative change of a step, |Δ|/r0. When
	// ShaftHz is too narrow for it, a step may be smaller.
	MinChange float64
	// Impairment is the probability that each impairment is switched on:
	// speed jitter, controller switching noise, rotor broadband noise,
	// high-pass, reverberation, hum, fixed tone, another machine,
	// resonances, clipping, AGC, knocks, and (at half this probability)
	// dropouts and a DC offset. 0 gives clean scenes.
	Impairment float64
	// Stereo2 is the probability of a second microphone channel.
	Stereo2 float64
	// Standstill is the probability that the recording starts with the motor
	// stopped; the first step is then a spin-up from 0 Hz. Ramp is the
	// probability of a slow throttle ramp (1.5–3 s, up to ±10 %) before the
	// first step. Stereo is the probability that the case carries a trigger
	// channel (Case.Trigger).
	Standstill, Ramp, Stereo float64
	// MaxDurationS bounds the recording's length (0 = no bound other than
	// what the steps need).
	MaxDurationS float64
	// SNRBandHz is copied to every scene (see Scene.SNRBandHz; 0 = full
	// band).
	SNRBandHz float64
	// Compressed is the probability that Case.Format is a compressed format
	// (FLAC, MP3, M4A, Ogg Vorbis) rather than WAV; encoding those needs
	// ffmpeg (WriteFile).
	Compressed float64
}

// DefaultRandomOptions returns the ranges of whirlfit's held-out benchmark:
// 16, 44.1 and 48 kHz; 2–5 blades; shaft 80–550 Hz (4,800–33,000 rpm); SNR
// −5…30 dB; τ 8–120 ms; θ 0–15 ms; 2–6 steps at least 0.25 s apart; each
// impairment on with probability 0.5.
func DefaultRandomOptions() *RandomOptions {
	return &RandomOptions{
		SampleRates:   []int{16000, 44100, 48000},
		MinBlades:     2,
		MaxBlades:     5,
		ShaftHz:       Range{80, 550},
		SNRdB:         Range{-5, 30},
		TauS:          Range{0.008, 0.120},
		DeadS:         Range{0, 0.015},
		DownTauFactor: Range{1, 1.8},
		MinSteps:      2,
		MaxSteps:      6,
		MinGapS:       0.25,
		SettleTaus:    3,
		MinChange:     0.15,
		MaxSpeedRatio: 2.5,
		Impairment:    0.5,
		Standstill:    0.15,
		Ramp:          0.15,
		Stereo:        0.3,
		Compressed:    0.25,
		Stereo2:       0.2,
	}
}

// Case is a random scene with everything needed to check an analysis of it.
type Case struct {
	Scene Scene
	Truth Truth
	// Format is a suggested file format for the case (see WriteFile), and
	// Bits the WriteWAV coding of a WAV format (16 for compressed formats,
	// as a fallback when ffmpeg is missing).
	Format Format
	Bits   int
	// Trigger, when not nil, is a command channel (see Render).
	Trigger *Trigger
	// Mics is the number of microphone channels (1 or 2); a second
	// microphone hears the same rotor with its own noise, reverberation and
	// a delay of MicDelayS.
	Mics      int
	MicDelayS float64
}

// Truth is what an analysis of a Case should find.
type Truth struct {
	Blades int
	// Shaft is the true shaft frequency (the scene's trajectory; rendered
	// speed jitter, Rotor.JitterRel, is not part of it).
	Shaft Trajectory
	// StartHz is the frequency at t = 0 (0 for a start from standstill).
	StartHz float64
	// Steps are the throttle steps in time order. A spin-up from standstill
	// is Steps[0] with FromHz = 0 when Standstill is true.
	Steps      []StepTruth
	Standstill bool
	// Ramps are slow throttle ramps, where no step must be found.
	Ramps []RampTruth
	// Dropouts are intervals where the recording is silent (Scene.Dropouts).
	Dropouts [][2]float64
	// TriggerChannel is the 0-based channel of the command signal in
	// Case.Render's output, or −1.
	TriggerChannel int
	// Impairments names what is switched on, for test logs.
	Impairments []string
}

// RPM returns the true shaft speed in revolutions per minute at tS.
func (tr Truth) RPM(tS float64) float64 {
	const secondsPerMinute = 60
	return secondsPerMinute * tr.Shaft(tS)
}

// Render renders the case: its microphone channels, then the trigger
// channel when it has one (Truth.TriggerChannel gives its index).
func (c Case) Render() ([][]float32, error) {
	var out [][]float32
	for m := range max(c.Mics, 1) {
		sc := c.Scene
		if m > 0 {
			sc.Mic, sc.MicDelayS = uint64(m), c.MicDelayS
		}
		x, err := Render(sc)
		if err != nil {
			return nil, err
		}
		out = append(out, x)
	}
	if c.Trigger != nil {
		out = append(out, toFloat32(triggerSignal(c.Scene, *c.Trigger)))
	}
	return out, nil
}

// RampTruth is a linear change of shaft frequency from FromHz at T0S to
// ToHz at T1S.
type RampTruth struct{ T0S, T1S, FromHz, ToHz float64 }

// String summarises the case on one line for test logs.
func (c Case) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "fs=%d B=%d SNR=%.1fdB %.2fs steps=[", c.Scene.SampleRate, c.Truth.Blades, c.Scene.SNRdB, c.Scene.DurationS)
	for i, s := range c.Truth.Steps {
		if i > 0 {
			b.WriteString(" ")
		}
		fmt.Fprintf(&b, "%.3fs %.0f→%.0fHz τ=%.1fms θ=%.1fms", s.CommandS, s.FromHz, s.TargetHz, 1e3*s.TauS, 1e3*s.DeadS)
	}
	fmt.Fprintf(&b, "] %s", c.Format)
	if c.Trigger != nil {
		b.WriteString(" +trigger")
	}
	if len(c.Truth.Impairments) > 0 {
		b.WriteString(" " + strings.Join(c.Truth.Impairments, ","))
	}
	return b.String()
}

// RandomScene draws a varied scene and its truth from rng; opts nil means
// DefaultRandomOptions. The same rng state gives the same case.
func RandomScene(rng *rand.Rand, opts *RandomOptions) Case {
	if opts == nil {
		opts = DefaultRandomOptions()
	}
	o := *opts
	if len(o.SampleRates) == 0 {
		o.SampleRates = []int{48000}
	}
	o.MinBlades = max(o.MinBlades, 1)
	o.MaxBlades = max(o.MaxBlades, o.MinBlades)
	o.MinSteps = max(o.MinSteps, 0)
	o.MaxSteps = max(o.MaxSteps, o.MinSteps)
	on := func() bool { return rng.Float64() < o.Impairment }
	var imp []string

	fs := o.SampleRates[rng.IntN(len(o.SampleRates))]
	var tg *Trigger
	if rng.Float64() < o.Stereo {
		tg = &Trigger{Kind: TriggerKind(rng.IntN(3))}
		if rng.IntN(2) == 0 {
			tg.ACHz = 5 + 45*rng.Float64()
		}
		if tg.Kind == TriggerPWM {
			tg.RateHz = []float64{50, 50, 125, 250, 400}[rng.IntN(5)]
			tg.PhaseS = rng.Float64() / tg.RateHz
		}
	}
	// onGrid moves a command time to the trigger's frame grid (PWM lines
	// carry commands only at frame starts).
	onGrid := func(t float64) float64 {
		if tg != nil && tg.Kind == TriggerPWM {
			return tg.FrameS(t)
		}
		return t
	}
	blades := o.MinBlades + rng.IntN(o.MaxBlades-o.MinBlades+1)
	rotor := randomRotor(rng, blades)
	if on() {
		rotor.JitterRel = 0.0005 + 0.0015*rng.Float64()
		imp = append(imp, fmt.Sprintf("jitter%.2f%%", 100*rotor.JitterRel))
	}
	if rotor.PolePairs > 0 && on() {
		// Speed-controller switching noise, within the recorded band.
		rotor.PWMHz = Range{4000, math.Min(24000, 0.42*float64(fs))}.drawLog(rng)
		rotor.PWMLevel = Range{0.02, 0.3}.drawLog(rng)
		imp = append(imp, fmt.Sprintf("pwm%.0fHz", rotor.PWMHz))
	}

	// Levels and steps.
	nSteps := o.MinSteps + rng.IntN(o.MaxSteps-o.MinSteps+1)
	lo, hi := o.ShaftHz.Min, math.Max(o.ShaftHz.Max, o.ShaftHz.Min)
	if r := o.MaxSpeedRatio; r > 1 && hi > r*lo {
		// One motor's working band inside the overall range, drawn
		// log-uniformly so slow and fast motors are equally likely.
		bandLo := Range{lo, hi / r}.drawLog(rng)
		lo, hi = bandLo, bandLo*r
	}
	level := lo + (hi-lo)*rng.Float64()
	standstill := rng.Float64() < o.Standstill
	t := 0.5 + rng.Float64() // lead-in before the first command
	var ramps []RampTruth
	if !standstill && rng.Float64() < o.Ramp {
		// A slow ramp in the lead-in: 1.5–3 s, up to ±10 % of the level.
		d := 1.5 + 1.5*rng.Float64()
		to := clampF(level*(1+0.2*(rng.Float64()-0.5)), lo, hi)
		t0 := t
		ramps = append(ramps, RampTruth{T0S: t0, T1S: t0 + d, FromHz: level, ToHz: to})
		t = t0 + d + 0.5 + 0.5*rng.Float64()
		imp = append(imp, "ramp")
	}
	start := level
	if ramps != nil {
		level = ramps[0].ToHz
	}
	level0 := level // where the steps start from
	var steps []Step
	gapAfter := func(s Step) float64 {
		g := o.MinGapS
		if o.SettleTaus > 0 {
			g = math.Max(g, o.SettleTaus*s.TauS+s.DeadS)
		}
		if rng.Float64() < 0.3 {
			return g * (1 + 0.5*rng.Float64()) // closely spaced
		}
		return math.Max(g, 0.6+1.4*rng.Float64())
	}
	if standstill {
		start, level0 = 0, 0
		s := Step{CommandS: onGrid(t), TargetHz: level, TauS: Range{0.08, 0.35}.drawLog(rng), DeadS: o.DeadS.draw(rng)}
		t = s.CommandS
		steps = append(steps, s)
		t += gapAfter(s)
		imp = append(imp, "standstill")
	}
	prevUp := rng.IntN(2) == 0
	for i := range nSteps {
		up := !prevUp
		if i >= 2 && rng.Float64() < 0.35 {
			up = prevUp // sometimes two steps the same way
		}
		target, ok := nextLevel(rng, level, lo, hi, o.MinChange, up)
		if !ok {
			up = !up
			target, _ = nextLevel(rng, level, lo, hi, o.MinChange, up)
		}
		tau := o.TauS.drawLog(rng)
		if !up {
			tau = math.Min(tau*o.DownTauFactor.draw(rng), math.Max(o.TauS.Max, o.TauS.Min))
		}
		s := Step{CommandS: onGrid(t), TargetHz: target, TauS: tau, DeadS: o.DeadS.draw(rng)}
		t = s.CommandS
		steps = append(steps, s)
		t += gapAfter(s)
		level, prevUp = target, up
	}
	t += 0.3 + 0.7*rng.Float64() // settled tail
	if o.MaxDurationS > 0 {
		t = math.Min(t, o.MaxDurationS)
	}
	shaft := Steps(level0, steps...)
	truthSteps := StepsTruth(level0, steps...)
	if ramps != nil {
		// The ramp ends before the first command; the steps start from its
		// end level.
		rp, st, t1 := Ramp(ramps[0].T0S, ramps[0].T1S, ramps[0].FromHz, ramps[0].ToHz), shaft, ramps[0].T1S
		shaft = func(t float64) float64 {
			if t < t1 {
				return rp(t)
			}
			return st(t)
		}
	}
	// Drop steps cut off by MaxDurationS before they settle.
	kept := truthSteps[:0]
	for _, s := range truthSteps {
		if s.StartS()+math.Max(o.SettleTaus, 1)*s.TauS < t {
			kept = append(kept, s)
		}
	}
	truthSteps = kept

	sc := Scene{
		SampleRate: fs,
		DurationS:  t,
		Shaft:      shaft,
		Rotor:      rotor,
		SNRdB:      o.SNRdB.draw(rng),
		NoiseColor: NoiseColor(rng.IntN(3)),
		SNRBandHz:  o.SNRBandHz,
		PeakLevel:  0.3 + 0.6*rng.Float64(),
		Seed:       rng.Uint64(),
	}
	imp = append(imp, sc.NoiseColor.String())
	if on() {
		sc.RotorNoiseShare = 0.2 + 0.6*rng.Float64()
		imp = append(imp, fmt.Sprintf("rotornoise%.0f%%", 100*sc.RotorNoiseShare))
	}
	if on() {
		sc.HighPassHz = 80 + 220*rng.Float64()
		sc.HighPassOrder = 2 + 2*rng.IntN(2)
		imp = append(imp, fmt.Sprintf("highpass%.0fHz/%d", sc.HighPassHz, sc.HighPassOrder))
	}
	if on() {
		sc.ReverbS = Range{0.1, 1.2}.drawLog(rng)
		sc.ReverbDRRdB = -3 + 18*rng.Float64()
		imp = append(imp, fmt.Sprintf("reverb%.2fs/%.0fdB", sc.ReverbS, sc.ReverbDRRdB))
	}
	if on() {
		sc.HumHz = []float64{50, 60}[rng.IntN(2)]
		sc.HumDB = -20 + 25*rng.Float64()
		imp = append(imp, fmt.Sprintf("hum%.0fHz/%.0fdB", sc.HumHz, sc.HumDB))
	}
	if on() {
		sc.ToneHz = Range{300, math.Min(8000, 0.4*float64(fs))}.drawLog(rng)
		sc.ToneDB = -15 + 20*rng.Float64()
		imp = append(imp, fmt.Sprintf("tone%.0fHz/%.0fdB", sc.ToneHz, sc.ToneDB))
	}
	if on() {
		m, name := randomMachine(rng, t, lo, hi, blades)
		sc.Others = append(sc.Others, m)
		imp = append(imp, name)
	}
	if on() {
		// One to three structural resonances of the bench or frame.
		for range 1 + rng.IntN(3) {
			sc.Resonances = append(sc.Resonances, Resonance{
				Hz:     Range{150, math.Min(6000, 0.4*float64(fs))}.drawLog(rng),
				Q:      Range{3, 30}.drawLog(rng),
				GainDB: 3 + 12*rng.Float64(),
			})
		}
		imp = append(imp, fmt.Sprintf("resonance%d", len(sc.Resonances)))
	}
	if on() {
		sc.ClipLevel = 0.3 + 0.6*rng.Float64()
		imp = append(imp, fmt.Sprintf("clip%.2f", sc.ClipLevel))
	}
	if on() {
		sc.AGCS = Range{0.3, 3}.drawLog(rng)
		imp = append(imp, fmt.Sprintf("agc%.1fs", sc.AGCS))
	}
	if on() {
		sc.ClickRateHz = Range{0.2, 3}.drawLog(rng)
		sc.ClickDB = 0 + 20*rng.Float64()
		imp = append(imp, fmt.Sprintf("clicks%.1fHz/%.0fdB", sc.ClickRateHz, sc.ClickDB))
	}
	var dropouts [][2]float64
	if on() && rng.IntN(2) == 0 {
		// One or two brief losses of signal, 10–80 ms.
		for range 1 + rng.IntN(2) {
			a := t * rng.Float64()
			dropouts = append(dropouts, [2]float64{a, a + Range{0.01, 0.08}.draw(rng)})
		}
		sc.Dropouts = dropouts
		imp = append(imp, fmt.Sprintf("dropouts%d", len(dropouts)))
	}
	if on() && rng.IntN(2) == 0 {
		sc.DCOffset = 0.05 * (2*rng.Float64() - 1)
		imp = append(imp, fmt.Sprintf("dc%.3f", sc.DCOffset))
	}
	c := Case{
		Scene: sc,
		Truth: Truth{
			Blades:         blades,
			Shaft:          shaft,
			StartHz:        start,
			Steps:          truthSteps,
			Standstill:     standstill,
			Ramps:          ramps,
			Dropouts:       dropouts,
			TriggerChannel: -1,
			Impairments:    imp,
		},
		Mics: 1,
	}
	if rng.Float64() < o.Compressed {
		c.Format = []Format{FLAC, MP3, M4A, OGG}[rng.IntN(4)]
		c.Bits = PCM16
	} else {
		c.Format = []Format{WAV16, WAV24, WAVFloat}[rng.IntN(3)]
		c.Bits = c.Format.Bits()
	}
	if rng.Float64() < o.Stereo2 {
		c.Mics = 2
		c.MicDelayS = 0.0015 * rng.Float64()
		c.Truth.Impairments = append(c.Truth.Impairments, fmt.Sprintf("mics2/%.2fms", 1e3*c.MicDelayS))
	}
	if tg != nil {
		c.Truth.TriggerChannel = c.Mics
		for _, s := range truthSteps {
			tg.CommandS = append(tg.CommandS, s.CommandS)
			tg.Throttle = append(tg.Throttle, s.TargetHz/(1.1*hi))
		}
		tg.StartThrottle = start / (1.1 * hi)
		c.Trigger = tg
	}
	return c
}

// randomMachine draws another machine in the room for a recording of
// length durS: a fan (5–9 blades, slow), a pump or compressor (a
// harmonic-rich low shaft line), a small rotor at an unrelated speed, or a
// twin of the main rotor (same blade count, speed within the main range,
// weaker) — the hardest, as its lines resemble the ones tracked.
func randomMachine(rng *rand.Rand, durS, lo, hi float64, blades int) (Machine, string) {
	var m Machine
	var name string
	drift := 1 + 0.06*(rng.Float64()-0.5)
	switch rng.IntN(4) {
	case 0:
		m.Rotor = randomRotor(rng, 5+rng.IntN(5))
		f0 := Range{12, 40}.drawLog(rng)
		m.Shaft = Ramp(0, durS, f0, f0*drift)
		m.LevelDB = -15 + 15*rng.Float64()
		name = fmt.Sprintf("fan%dx%.0fHz", m.Rotor.Blades, f0)
	case 1:
		m.Rotor = randomRotor(rng, 1)
		m.Rotor.BladeHarmonics = 8 + rng.IntN(8)
		m.Rotor.BladeRolloff = 0.3 + 0.5*rng.Float64()
		f0 := Range{20, 60}.drawLog(rng)
		m.Shaft = Constant(f0)
		m.LevelDB = -15 + 15*rng.Float64()
		name = fmt.Sprintf("pump%.0fHz", f0)
	case 2:
		m.Rotor = randomRotor(rng, 2+rng.IntN(3))
		f0 := Range{60, 600}.drawLog(rng)
		m.Shaft = Ramp(0, durS, f0, f0*drift)
		m.LevelDB = -20 + 20*rng.Float64()
		name = fmt.Sprintf("rotor%dx%.0fHz", m.Rotor.Blades, f0)
	default:
		m.Rotor = randomRotor(rng, blades)
		f0 := lo + (hi-lo)*rng.Float64()
		m.Shaft = Ramp(0, durS, f0, f0*drift)
		m.LevelDB = -12 + 6*rng.Float64()
		name = fmt.Sprintf("twin%dx%.0fHz", blades, f0)
	}
	return m, fmt.Sprintf("%s/%.0fdB", name, m.LevelDB)
}

// randomRotor draws a rotor's relative levels: engineering judgement of the
// spread between motors and propellers.
func randomRotor(rng *rand.Rand, blades int) Rotor {
	r := Rotor{
		Blades:         blades,
		BladeHarmonics: 2 + rng.IntN(5),
		BladeLevel:     1,
		BladeRolloff:   0.5 + rng.Float64(),
		ShaftHarmonics: 1 + rng.IntN(3),
		ShaftLevel:     Range{0.05, 1}.drawLog(rng),
		RefHz:          300,
		LevelExponent:  1.5 + rng.Float64(),
		SpreadDB:       1 + 3*rng.Float64(),
		AMDepth:        0.08 * rng.Float64(),
		AMRateHz:       1 + 5*rng.Float64(),
	}
	if rng.Float64() < 0.8 {
		r.PolePairs = []int{4, 6, 7, 7, 7, 10, 12, 14}[rng.IntN(8)]
		r.WhineLevel = Range{0.02, 0.3}.drawLog(rng)
		if rng.IntN(2) == 0 {
			r.CommutationLevel = Range{0.01, 0.2}.drawLog(rng)
		}
	}
	return r
}

// nextLevel draws a new steady level from level in direction up, at least
// minChange relative change away, within [lo, hi].
func nextLevel(rng *rand.Rand, level, lo, hi, minChange float64, up bool) (float64, bool) {
	if up {
		a := level * (1 + minChange)
		b := math.Min(hi, level*1.9)
		if a > b {
			return level, false
		}
		return a + (b-a)*rng.Float64(), true
	}
	a := math.Max(lo, level*0.45)
	b := level * (1 - minChange)
	if a > b {
		return level, false
	}
	return a + (b-a)*rng.Float64(), true
}

func clampF(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) }
