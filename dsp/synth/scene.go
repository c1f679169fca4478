package synth

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
)

// Machine is another sound source in the room: an independent rotor with its
// own trajectory, LevelDB relative to the main rotor's tonal power.
type Machine struct {
	Rotor   Rotor
	Shaft   Trajectory
	LevelDB float64
}

// Scene is one synthetic recording. The zero value of each impairment field
// means "off"; SampleRate, DurationS, Shaft and Rotor.Blades are required.
//
// Signal chain, in order:
//
//  1. Rotor tonal sound t(n) from Shaft by phase integration (see Rotor).
//  2. Interference i(n): mains hum, a fixed tone and other machines, each at
//     its level relative to the rotor's tonal power P_t (below).
//  3. Broadband noise w(n): room noise of colour NoiseColor, plus the rotor's
//     own broadband noise (pink noise shaped by the speed law and modulated
//     at the blade-pass rate); RotorNoiseShare is the fraction of the noise
//     power that comes from the rotor.
//  4. t, i and w are each high-passed (HighPassHz), then w is scaled to give
//     the requested SNR, and the three are summed.
//  5. Clicks (ClickRateHz), reverberation (ReverbS), hard clipping
//     (ClipLevel), automatic gain control (AGCS), scaling to the output
//     level; then microphone delay, DC offset and dropouts.
//
// SNR is defined as SNRdB = 10·log10(P_t / P_w), where P_t is the mean power
// of the high-passed tonal sound over the samples where the rotor runs
// (Shaft(t) > 0) and P_w is the mean power of the high-passed broadband
// noise over the whole recording; both are taken over the full band 0–fs/2
// (or, for P_w, below SNRBandHz when it is set) before reverberation,
// clipping and AGC. Interference is not counted as
// noise. SNRdB = +Inf renders no broadband noise.
type Scene struct {
	// SampleRate in Hz; DurationS the length in seconds.
	SampleRate int
	DurationS  float64
	// Shaft is the true shaft-frequency trajectory of the rotor.
	Shaft Trajectory
	Rotor Rotor

	SNRdB float64
	// SNRBandHz, when > 0, restricts the noise power P_w of the SNR to
	// frequencies below it (an analysed band), so a given SNR puts more
	// noise where the lines are; 0 means the full band 0–fs/2.
	SNRBandHz       float64
	NoiseColor      NoiseColor
	RotorNoiseShare float64 // 0–1
	// Resonances of the bench or frame shape the rotor's tonal and
	// broadband sound (before the SNR is set).
	Resonances []Resonance

	// HighPassHz is a phone-like microphone high-pass (Butterworth of
	// HighPassOrder 2 or 4; 0 means 2). 0 Hz = no filter.
	HighPassHz    float64
	HighPassOrder int

	// ReverbS is the reverberation time RT60 in seconds (0 = dry room);
	// ReverbDRRdB the direct-to-reverberant energy ratio.
	ReverbS     float64
	ReverbDRRdB float64

	// HumHz is the mains frequency (50 or 60; 0 = none). The hum has
	// harmonics 1–5 with odd ones stronger; HumDB is its total power
	// relative to P_t.
	HumHz float64
	HumDB float64
	// ToneHz is a fixed whine from another machine (0 = none), at ToneDB
	// relative to P_t.
	ToneHz float64
	ToneDB float64
	// Others are further independent rotors in the room.
	Others []Machine

	// ClipLevel in (0, 1) clips the signal hard at ClipLevel times its peak
	// (0 = no clipping); without AGC the clip level becomes full scale, so
	// clipped samples read ±1.
	ClipLevel float64
	// AGCS is the release time of a slow automatic gain control in seconds
	// (0 = none), maximum gain 30 dB.
	AGCS float64
	// PeakLevel is the output's peak amplitude where no clipping applies
	// (0 means 0.5, about −6 dBFS).
	PeakLevel float64

	// ClickRateHz is the mean rate of knocks and handling noise (Poisson),
	// each a short decaying burst of peak ClickDB relative to the rotor's
	// tonal RMS; added before reverberation.
	ClickRateHz float64
	ClickDB     float64
	// Dropouts are intervals [from, to) in seconds where the recorder lost
	// the signal (samples 0), applied last.
	Dropouts [][2]float64
	// DCOffset is added to every output sample (a recorder's offset).
	DCOffset float64
	// Mic selects one microphone of a multi-microphone recording: the
	// rotor, interference and clicks are the same for every Mic, while the
	// room noise, the rotor's broadband noise and the reverberation are
	// drawn afresh; MicDelayS delays this microphone's signal. Mic 0 with
	// no delay is the plain recording.
	Mic       uint64
	MicDelayS float64

	// Seed makes the scene's randomness reproducible.
	Seed uint64
}

// ErrScene reports a scene that cannot be rendered.
var ErrScene = errors.New("synth: invalid scene")

// maxSamples bounds a rendering: 2^25 samples (11.6 minutes at 48 kHz),
// which needs about 1.5 GB of working memory.
const maxSamples = 1 << 25

// Validate reports whether the scene can be rendered.
func (sc *Scene) Validate() error {
	switch {
	case sc.SampleRate < 1000 || sc.SampleRate > 384000:
		return fmt.Errorf("%w: sample rate %d Hz outside 1000–384000", ErrScene, sc.SampleRate)
	case !(sc.DurationS > 0) || math.IsInf(sc.DurationS, 0):
		return fmt.Errorf("%w: duration %g s", ErrScene, sc.DurationS)
	case sc.DurationS*float64(sc.SampleRate) > maxSamples:
		return fmt.Errorf("%w: %g s at %d Hz is too long", ErrScene, sc.DurationS, sc.SampleRate)
	case sc.Shaft == nil:
		return fmt.Errorf("%w: no shaft trajectory", ErrScene)
	case sc.Rotor.Blades < 1:
		return fmt.Errorf("%w: %d blades", ErrScene, sc.Rotor.Blades)
	case math.IsNaN(sc.SNRdB) || math.IsInf(sc.SNRdB, -1) || sc.SNRdB < -100:
		return fmt.Errorf("%w: SNR %g dB (want ≥ −100 dB, or +Inf for no noise)", ErrScene, sc.SNRdB)
	case sc.RotorNoiseShare < 0 || sc.RotorNoiseShare > 1:
		return fmt.Errorf("%w: rotor noise share %g outside 0–1", ErrScene, sc.RotorNoiseShare)
	case sc.ClipLevel < 0 || sc.ClipLevel >= 1:
		return fmt.Errorf("%w: clip level %g outside [0, 1)", ErrScene, sc.ClipLevel)
	case sc.ReverbS < 0 || sc.ReverbS > 10:
		return fmt.Errorf("%w: reverberation time %g s outside 0–10", ErrScene, sc.ReverbS)
	case sc.AGCS < 0:
		return fmt.Errorf("%w: AGC time %g s", ErrScene, sc.AGCS)
	case sc.PeakLevel < 0 || sc.PeakLevel > 1:
		return fmt.Errorf("%w: peak level %g outside 0–1", ErrScene, sc.PeakLevel)
	case sc.ClickRateHz < 0 || math.IsNaN(sc.ClickDB) || math.IsNaN(sc.DCOffset) || math.Abs(sc.DCOffset) >= 1:
		return fmt.Errorf("%w: clicks %g Hz at %g dB, DC offset %g", ErrScene, sc.ClickRateHz, sc.ClickDB, sc.DCOffset)
	case sc.MicDelayS < 0 || sc.MicDelayS > 1:
		return fmt.Errorf("%w: microphone delay %g s outside 0–1", ErrScene, sc.MicDelayS)
	}
	if err := sc.Rotor.validate(); err != nil {
		return fmt.Errorf("%w: rotor: %v", ErrScene, err)
	}
	for name, v := range map[string]float64{
		"HumDB": sc.HumDB, "ToneDB": sc.ToneDB, "ReverbDRRdB": sc.ReverbDRRdB, "ClickDB": sc.ClickDB,
		"HumHz": sc.HumHz, "ToneHz": sc.ToneHz, "HighPassHz": sc.HighPassHz, "SNRBandHz": sc.SNRBandHz,
		"AGCS": sc.AGCS, "ClickRateHz": sc.ClickRateHz,
	} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: %s is %g", ErrScene, name, v)
		}
	}
	for i, r := range sc.Resonances {
		if !finite(r.Hz, r.Q, r.GainDB) {
			return fmt.Errorf("%w: resonance %d: %+v", ErrScene, i, r)
		}
	}
	for i, d := range sc.Dropouts {
		if !finite(d[0], d[1]) {
			return fmt.Errorf("%w: dropout %d: %v", ErrScene, i, d)
		}
	}
	for i, m := range sc.Others {
		if m.Shaft == nil || m.Rotor.Blades < 1 {
			return fmt.Errorf("%w: other machine %d needs a trajectory and ≥ 1 blade", ErrScene, i)
		}
		if err := m.Rotor.validate(); err != nil || !finite(m.LevelDB) {
			return fmt.Errorf("%w: other machine %d: level %g dB, %v", ErrScene, i, m.LevelDB, err)
		}
	}
	return nil
}

func finite(xs ...float64) bool {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// NumSamples returns the number of samples the scene renders.
func (sc *Scene) NumSamples() int {
	return int(math.Round(sc.DurationS * float64(sc.SampleRate)))
}

// Stream indices for independent random generators, so that switching one
// impairment on or off leaves the others' random draws unchanged.
const (
	streamRotor = iota + 1
	streamRoom
	streamRotorNoise
	streamReverb
	streamInterference
	streamClicks
	streamOthers // + index; keep last
)

func (sc *Scene) rng(stream uint64) *rand.Rand {
	return rand.New(rand.NewPCG(sc.Seed, 0x9e3779b97f4a7c15*stream))
}

// micRng is rng for what differs between microphones (room noise, the
// rotor's broadband noise, reverberation); Mic = 0 gives rng.
func (sc *Scene) micRng(stream uint64) *rand.Rand {
	return rand.New(rand.NewPCG(sc.Seed+0x632be59bd9b4e019*sc.Mic, 0x9e3779b97f4a7c15*stream))
}

// parts are the stages of a rendering, kept for tests.
type parts struct {
	tonal, interference, noise []float64 // after high-pass and SNR scaling; nil when absent
	running                    []bool
	mix                        []float64 // final output before conversion to float32
}

// Render renders the scene as mono samples in [-1, 1].
func Render(sc Scene) ([]float32, error) {
	p, err := render(sc)
	if err != nil {
		return nil, err
	}
	return toFloat32(p.mix), nil
}

func toFloat32(x []float64) []float32 {
	out := make([]float32, len(x))
	for i, v := range x {
		out[i] = float32(max(-1, min(1, v)))
	}
	return out
}

func render(sc Scene) (*parts, error) {
	if err := sc.Validate(); err != nil {
		return nil, err
	}
	n := sc.NumSamples()
	fs := float64(sc.SampleRate)
	rr := renderRotor(sc.Rotor, sc.Shaft, n, fs, sc.rng(streamRotor), sc.RotorNoiseShare > 0 && !math.IsInf(sc.SNRdB, 1))
	p := &parts{tonal: rr.tonal, running: rr.running}
	resonate(rr.tonal, sc.Resonances, fs)

	// Rotor tonal power over running samples, at the source (before the
	// high-pass) for setting interference levels.
	pt := runningPower(rr.tonal, rr.running)
	if pt == 0 {
		// The rotor never runs: set levels as for a unit blade-pass line.
		pt = sc.Rotor.BladeLevel * sc.Rotor.BladeLevel / 2
		if pt == 0 {
			pt = 0.5
		}
	}

	if sc.HumHz > 0 || sc.ToneHz > 0 || len(sc.Others) > 0 {
		p.interference = make([]float64, n)
	}
	irng := sc.rng(streamInterference)
	if sc.HumHz > 0 {
		addHum(p.interference, sc.HumHz, pt*dB(sc.HumDB), fs, irng)
	}
	if sc.ToneHz > 0 && sc.ToneHz < fs/2 {
		a := math.Sqrt(2 * pt * dB(sc.ToneDB))
		ph := irng.Float64()
		for i := range p.interference {
			p.interference[i] += a * math.Sin(2*math.Pi*(sc.ToneHz*float64(i)/fs+ph))
		}
	}
	for k, m := range sc.Others {
		o := renderRotor(m.Rotor, m.Shaft, n, fs, sc.rng(streamOthers+uint64(k)), false)
		po := runningPower(o.tonal, o.running)
		if po > 0 {
			g := math.Sqrt(pt * dB(m.LevelDB) / po)
			for i, v := range o.tonal {
				p.interference[i] += g * v
			}
		}
	}

	// Broadband noise, unit power before the high-pass.
	if !math.IsInf(sc.SNRdB, 1) {
		p.noise = make([]float64, n)
		colouredNoise(p.noise, sc.NoiseColor, fs, sc.micRng(streamRoom))
		if sc.RotorNoiseShare > 0 {
			rn := make([]float64, n)
			colouredNoise(rn, Pink, fs, sc.micRng(streamRotorNoise))
			for i := range rn {
				rn[i] *= rr.drive[i]
			}
			resonate(rn, sc.Resonances, fs)
			normaliseRMS(rn)
			a, b := math.Sqrt(1-sc.RotorNoiseShare), math.Sqrt(sc.RotorNoiseShare)
			for i := range p.noise {
				p.noise[i] = a*p.noise[i] + b*rn[i]
			}
		}
	}

	order := sc.HighPassOrder
	if order == 0 {
		order = 2
	}
	for _, x := range [][]float64{p.tonal, p.interference, p.noise} {
		highPass(x, sc.HighPassHz, order, fs)
	}
	if p.noise != nil {
		ptHP := runningPower(p.tonal, p.running)
		if ptHP == 0 {
			ptHP = pt
		}
		pw := bandPower(p.noise, sc.SNRBandHz, fs)
		if pw > 0 {
			scale(p.noise, math.Sqrt(ptHP/dB(sc.SNRdB)/pw))
		}
	}

	mix := make([]float64, n)
	for i := range mix {
		mix[i] = p.tonal[i]
		if p.interference != nil {
			mix[i] += p.interference[i]
		}
		if p.noise != nil {
			mix[i] += p.noise[i]
		}
	}
	if sc.ClickRateHz > 0 {
		addClicks(mix, sc.ClickRateHz, math.Sqrt(ptHPOr(p, pt))*math.Pow(10, sc.ClickDB/20), fs, sc.rng(streamClicks))
	}
	if sc.ReverbS > 0 {
		h := roomResponse(sc.ReverbS, sc.ReverbDRRdB, fs, sc.micRng(streamReverb))
		if len(h) > n {
			h = h[:n] // the rest of the tail falls after the recording
		}
		mix = convolve(mix, h)
	}
	level := sc.PeakLevel
	if level == 0 {
		level = 0.5
	}
	if peak := peakAbs(mix); peak > 0 {
		switch {
		case sc.ClipLevel > 0 && sc.AGCS == 0:
			c := sc.ClipLevel * peak
			for i, v := range mix {
				mix[i] = max(-c, min(c, v)) / c // clip level → full scale
			}
		default:
			if sc.ClipLevel > 0 {
				c := sc.ClipLevel * peak
				for i, v := range mix {
					mix[i] = max(-c, min(c, v))
				}
			}
			if sc.AGCS > 0 {
				agc(mix, sc.AGCS, 0.1, math.Pow(10, 30.0/20), fs)
			}
			scale(mix, level/peakAbs(mix))
		}
	}
	// Digital faults of the recorder: microphone delay, DC offset, dropouts.
	if d := int(math.Round(sc.MicDelayS * fs)); d > 0 && d < n {
		copy(mix[d:], mix[:n-d])
		clear(mix[:d])
	}
	if sc.DCOffset != 0 {
		for i := range mix {
			mix[i] += sc.DCOffset
		}
	}
	for _, iv := range sc.Dropouts {
		a := max(0, int(math.Ceil(iv[0]*fs)))
		b := min(n, int(math.Ceil(iv[1]*fs)))
		if a < b {
			clear(mix[a:b])
		}
	}
	p.mix = mix
	return p, nil
}

// ptHPOr returns the high-passed tonal power over running samples, or pt
// when the rotor never runs.
func ptHPOr(p *parts, pt float64) float64 {
	if v := runningPower(p.tonal, p.running); v > 0 {
		return v
	}
	return pt
}

// addClicks adds knocks and handling noise: at Poisson times of rate
// rateHz, a burst of white noise of peak amplitude amp decaying with a
// time constant of 1–5 ms.
func addClicks(x []float64, rateHz, amp, fs float64, rng *rand.Rand) {
	t := rng.ExpFloat64() / rateHz
	for {
		i0 := int(t * fs)
		if i0 >= len(x) {
			return
		}
		tau := (0.001 + 0.004*rng.Float64()) * fs
		a := amp * (0.5 + 0.5*rng.Float64())
		for k := 0; k < int(6*tau) && i0+k < len(x); k++ {
			x[i0+k] += a * math.Exp(-float64(k)/tau) * (2*rng.Float64() - 1)
		}
		t += rng.ExpFloat64() / rateHz
	}
}

// MeasureSNR renders the scene once and returns the SNR over each interval
// [from, to) in seconds: the mean power of the high-passed tonal sound over
// running samples in the interval over the mean power of the high-passed
// noise in it (scaled by the whole recording's fraction below SNRBandHz
// when that is set), before reverberation, clipping and AGC — the
// definition of Scene.SNRdB applied locally. Because tonal amplitudes grow
// with speed, a slow part of a recording has a lower local SNR than the
// scene's SNRdB. A noiseless scene gives +Inf, an interval where the rotor
// does not run −Inf.
func MeasureSNR(sc Scene, intervals ...[2]float64) ([]float64, error) {
	p, err := render(sc)
	if err != nil {
		return nil, err
	}
	fs := float64(sc.SampleRate)
	out := make([]float64, len(intervals))
	var band float64
	if p.noise != nil {
		if full := meanPower(p.noise); full > 0 {
			band = bandPower(p.noise, sc.SNRBandHz, fs) / full
		}
	}
	for i, iv := range intervals {
		a := max(0, int(math.Ceil(iv[0]*fs)))
		b := min(len(p.tonal), int(math.Ceil(iv[1]*fs)))
		if a >= b {
			return nil, fmt.Errorf("synth: MeasureSNR: empty interval [%g, %g) s", iv[0], iv[1])
		}
		pt := runningPower(p.tonal[a:b], p.running[a:b])
		switch {
		case p.noise == nil:
			out[i] = math.Inf(1)
		case pt == 0:
			out[i] = math.Inf(-1)
		default:
			out[i] = 10 * math.Log10(pt/(band*meanPower(p.noise[a:b])))
		}
	}
	return out, nil
}

// resonate applies the resonances in place.
func resonate(x []float64, rs []Resonance, fs float64) {
	for _, r := range rs {
		if r.Hz > 0 && r.Hz < 0.45*fs && r.Q > 0 {
			peakingSection(r.Hz, r.Q, r.GainDB, fs).apply(x)
		}
	}
}

func dB(x float64) float64 { return math.Pow(10, x/10) }

func peakAbs(x []float64) float64 {
	var m float64
	for _, v := range x {
		m = max(m, math.Abs(v))
	}
	return m
}

func runningPower(x []float64, running []bool) float64 {
	var s float64
	var k int
	for i, v := range x {
		if running[i] {
			s += v * v
			k++
		}
	}
	if k == 0 {
		return 0
	}
	return s / float64(k)
}

// addHum adds mains hum of total power pw: harmonics 1–5 with relative
// amplitudes 1, 0.3, 0.5, 0.15, 0.25 (odd harmonics stronger, as from a
// transformer or rectifier — common practice), random phases.
func addHum(dst []float64, hz, pw, fs float64, rng *rand.Rand) {
	rel := []float64{1, 0.3, 0.5, 0.15, 0.25}
	var sum2 float64
	for _, r := range rel {
		sum2 += r * r
	}
	a := math.Sqrt(2 * pw / sum2)
	for k, r := range rel {
		f := float64(k+1) * hz
		if f >= 0.45*fs {
			continue
		}
		ph := rng.Float64()
		for i := range dst {
			dst[i] += a * r * math.Sin(2*math.Pi*(f*float64(i)/fs+ph))
		}
	}
}
