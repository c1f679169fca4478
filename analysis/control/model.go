package control

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"whirlfit/analysis"
)

// Config chooses what Build evaluates. Zero fields take the defaults named
// beside them.
type Config struct {
	// LoopHz is the control-loop rate for the discrete equivalent (1000).
	LoopHz float64
	// AtHz is the frequency at which magnitude and phase are given (20).
	AtHz float64
	// SensorLPFHz is the cut-off of the first-order sensor filter (10);
	// negative leaves the filter out.
	SensorLPFHz float64
	// Throttle lists the throttle command of each plateau in time order
	// (one more than the steps); empty keeps K = 1 (normalised).
	Throttle []float64
}

// Defaults of Config.
const (
	DefaultLoopHz      = 1000
	DefaultAtHz        = 20
	DefaultSensorLPFHz = 10
)

func (c Config) resolve() Config {
	if c.LoopHz == 0 {
		c.LoopHz = DefaultLoopHz
	}
	if c.AtHz == 0 {
		c.AtHz = DefaultAtHz
	}
	if c.SensorLPFHz == 0 {
		c.SensorLPFHz = DefaultSensorLPFHz
	}
	return c
}

// Range is a value with the interval that the 95 % intervals of its inputs
// map to (each quantity here is monotone in τ, θ and K, so the ends are
// the images of the input intervals' ends).
type Range struct {
	Value float64    `json:"value"`
	CI95  [2]float64 `json:"ci95"`
}

func newRange(v, a, b float64) Range {
	if a > b {
		a, b = b, a
	}
	return Range{Value: v, CI95: [2]float64{a, b}}
}

// Gain is the motor's steady-state gain.
type Gain struct {
	// Normalised is true when K = 1 because no throttle levels were given.
	Normalised bool `json:"normalised"`
	// K is rpm per unit throttle from the straight-line fit of plateau rpm
	// against throttle; OffsetRPM the line's rpm at zero throttle.
	K         Range   `json:"k"`
	OffsetRPM float64 `json:"offset_rpm"`
	Plateaus  int     `json:"plateaus"`
}

// FitGain fits plateau speeds rpm (with their 95 % intervals, used when
// there are only two plateaus) against throttle levels by least squares,
// rpm = offset + K·throttle (gonum stat.LinearRegression). The interval of
// K is the t-interval of the slope, K ± t(0.975, n−2)·s/√Sxx, for three or
// more plateaus; for two it is the range of slopes the plateaus' intervals
// allow.
func FitGain(throttle, rpm []float64, ci [][2]float64) (Gain, error) {
	n := len(throttle)
	if n != len(rpm) {
		return Gain{}, fmt.Errorf("control: %d throttle levels for %d plateaus (steps + 1)", n, len(rpm))
	}
	if n < 2 {
		return Gain{}, errors.New("control: a gain needs at least two plateaus")
	}
	var sxx float64
	mx := stat.Mean(throttle, nil)
	for _, x := range throttle {
		sxx += (x - mx) * (x - mx)
	}
	if sxx == 0 {
		return Gain{}, errors.New("control: all throttle levels are equal")
	}
	off, k := stat.LinearRegression(throttle, rpm, nil, false)
	g := Gain{OffsetRPM: off, Plateaus: n}
	if n == 2 {
		du := throttle[1] - throttle[0]
		a := (ci[1][0] - ci[0][1]) / du
		b := (ci[1][1] - ci[0][0]) / du
		g.K = newRange(k, a, b)
		return g, nil
	}
	var rss float64
	for i, x := range throttle {
		r := rpm[i] - off - k*x
		rss += r * r
	}
	se := math.Sqrt(rss / float64(n-2) / sxx)
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 2)}.Quantile(0.975)
	g.K = newRange(k, k-t*se, k+t*se)
	return g, nil
}

// Block is the motor model of one step with everything derived from it.
type Block struct {
	Step      int                `json:"step"`
	Direction analysis.Direction `json:"direction"`
	TauS      Range              `json:"tau_s"`
	// DeadTimeS is 0 with a warning when the step had no command time.
	DeadTimeS Range `json:"dead_time_s"`
	// Continuous is the transfer function as text.
	Continuous string `json:"continuous"`
	// Discrete equivalent at the loop rate.
	PeriodS      float64 `json:"period_s"`
	A            Range   `json:"a"`
	B            Range   `json:"b"`
	B1           float64 `json:"b1"`
	B2           float64 `json:"b2"`
	DelaySamples int     `json:"delay_samples"`
	FracDelay    float64 `json:"delay_fraction"`
	Equation     string  `json:"difference_equation"`
	// At the chosen frequency: the motor alone, the discrete equivalent
	// (which adds the hold's lag) and motor plus sensor filter.
	MagnitudeDB      Range    `json:"magnitude_db"`
	PhaseDeg         Range    `json:"phase_deg"`
	DiscretePhaseDeg *float64 `json:"discrete_phase_deg"`
	CombinedMagDB    Range    `json:"combined_magnitude_db"`
	CombinedPhaseDeg Range    `json:"combined_phase_deg"`
	PI               *SIMCPI  `json:"simc_pi,omitempty"`
	Warnings         []string `json:"warnings"`
}

// Model is the control-loop view of one analysed recording.
type Model struct {
	File        string  `json:"file"`
	LoopHz      float64 `json:"loop_hz"`
	AtHz        float64 `json:"at_hz"`
	SensorLPFHz float64 `json:"sensor_lpf_hz"`
	// SensorTauS is the sensor filter's time constant 1/(2π·fc); its
	// magnitude and phase at AtHz follow.
	SensorTauS     float64  `json:"sensor_tau_s"`
	SensorMagDB    float64  `json:"sensor_magnitude_db"`
	SensorPhaseDeg float64  `json:"sensor_phase_deg"`
	Gain           Gain     `json:"gain"`
	Blocks         []Block  `json:"blocks"`
	Warnings       []string `json:"warnings"`
}

// Build derives the control-loop blocks from a report's steps.
func Build(rep *analysis.Report, cfg Config) (*Model, error) {
	cfg = cfg.resolve()
	if !(cfg.LoopHz > 0) || !(cfg.AtHz > 0) {
		return nil, fmt.Errorf("control: loop rate %g Hz and frequency %g Hz must be positive", cfg.LoopHz, cfg.AtHz)
	}
	if len(rep.Steps) == 0 {
		return nil, fmt.Errorf("control: %s: no step was found, so there is no motor model", rep.File)
	}
	m := &Model{File: rep.File, LoopHz: cfg.LoopHz, AtHz: cfg.AtHz, Warnings: []string{}}
	if cfg.AtHz >= cfg.LoopHz/2 {
		m.Warnings = append(m.Warnings, fmt.Sprintf("%g Hz is at or above the loop's Nyquist frequency %g Hz", cfg.AtHz, cfg.LoopHz/2))
	}
	var sensor *LowPass
	if cfg.SensorLPFHz > 0 {
		sensor = &LowPass{CutoffHz: cfg.SensorLPFHz}
		sb := sensor.Block()
		m.SensorLPFHz, m.SensorTauS = cfg.SensorLPFHz, sensor.TimeConstantS()
		m.SensorMagDB, m.SensorPhaseDeg = sb.MagnitudeDB(cfg.AtHz), sb.PhaseDeg(cfg.AtHz)
	}

	m.Gain = Gain{Normalised: true, K: Range{Value: 1, CI95: [2]float64{1, 1}}}
	if len(cfg.Throttle) > 0 {
		rpm := []float64{rep.Steps[0].RPMBefore.Value}
		ci := [][2]float64{rep.Steps[0].RPMBefore.CI95}
		for _, s := range rep.Steps {
			rpm = append(rpm, s.RPMAfter.Value)
			ci = append(ci, s.RPMAfter.CI95)
		}
		g, err := FitGain(cfg.Throttle, rpm, ci)
		if err != nil {
			return nil, err
		}
		if math.IsNaN(g.K.Value) || math.IsInf(g.K.Value, 0) {
			return nil, fmt.Errorf("control: %s: the plateau speeds give no finite gain", rep.File)
		}
		g.K = finiteRange(g.K.Value, g.K.CI95)
		m.Gain = g
	}
	K := m.Gain.K
	T := 1 / cfg.LoopHz
	for i, s := range rep.Steps {
		b := Block{Step: i + 1, Direction: s.Direction, PeriodS: T, Warnings: []string{}}
		b.TauS = finiteRange(s.TauS.Value, s.TauS.CI95)
		if s.DeadTimeS != nil {
			b.DeadTimeS = finiteRange(s.DeadTimeS.Value, s.DeadTimeS.CI95)
			b.DeadTimeS.CI95[0] = math.Max(0, b.DeadTimeS.CI95[0])
			b.DeadTimeS.Value = math.Max(0, b.DeadTimeS.Value)
		} else {
			b.Warnings = append(b.Warnings, "no command time, so the dead time is unknown: θ = 0 is used and every lag below is a lower bound")
		}
		g := FOPDT{K: K.Value, TauS: b.TauS.Value, DeadTimeS: b.DeadTimeS.Value}
		d, err := Discretize(g, T)
		if err != nil {
			return nil, fmt.Errorf("step %d: %w", i+1, err)
		}
		// Ends of the ranges: a rises with τ; b = K(1 − a) falls with τ
		// and rises with K; the lag grows with τ and θ; |G| falls with τ.
		tauLo, tauHi := math.Max(b.TauS.CI95[0], 1e-9), b.TauS.CI95[1]
		gLo := FOPDT{K: K.CI95[0], TauS: tauLo, DeadTimeS: b.DeadTimeS.CI95[0]}
		gHi := FOPDT{K: K.CI95[1], TauS: tauHi, DeadTimeS: b.DeadTimeS.CI95[1]}
		aLo, aHi := math.Exp(-T/tauLo), math.Exp(-T/tauHi)
		b.A = newRange(d.A, aLo, aHi)
		b.B = newRange(d.B, K.CI95[0]*(1-aHi), K.CI95[1]*(1-aLo))
		b.B1, b.B2, b.DelaySamples, b.FracDelay = d.B1, d.B2, d.DelaySamples, d.FracDelay
		b.Equation = d.Equation()
		b.Continuous = fmt.Sprintf("G(s) = %.6g·e^(−%.6g·s) / (%.6g·s + 1)", g.K, g.DeadTimeS, g.TauS)
		at := cfg.AtHz
		b.MagnitudeDB = newRange(g.MagnitudeDB(at), gLo.MagnitudeDB(at), gHi.MagnitudeDB(at))
		b.PhaseDeg = newRange(g.PhaseDeg(at), gLo.PhaseDeg(at), gHi.PhaseDeg(at))
		if at < cfg.LoopHz/2 {
			p := d.PhaseDeg(at)
			b.DiscretePhaseDeg = &p
		}
		b.CombinedMagDB, b.CombinedPhaseDeg = b.MagnitudeDB, b.PhaseDeg
		if sensor != nil {
			add := func(r Range, v float64) Range {
				return Range{Value: r.Value + v, CI95: [2]float64{r.CI95[0] + v, r.CI95[1] + v}}
			}
			b.CombinedMagDB = add(b.MagnitudeDB, m.SensorMagDB)
			b.CombinedPhaseDeg = add(b.PhaseDeg, m.SensorPhaseDeg)
		}
		// SIMC "tight" choice τc = θ, but not below one loop period.
		if pi, err := SIMC(g, math.Max(g.DeadTimeS, T)); err == nil {
			b.PI = &pi
		}
		m.Blocks = append(m.Blocks, b)
	}
	return m, nil
}

// finiteRange takes an estimate's interval, replacing a missing end by the
// value (the interval then says nothing on that side).
func finiteRange(v float64, ci [2]float64) Range {
	r := Range{Value: v, CI95: ci}
	for i := range r.CI95 {
		if math.IsNaN(r.CI95[i]) || math.IsInf(r.CI95[i], 0) {
			r.CI95[i] = v
		}
	}
	return r
}
