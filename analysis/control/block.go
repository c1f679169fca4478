package control

import (
	"fmt"
	"math"
	"math/cmplx"
)

// FOPDT is a first-order-plus-dead-time block G(s) = K·e^{−θs}/(τs + 1):
// gain K (output units per input unit), time constant TauS and dead time
// DeadTimeS in seconds.
type FOPDT struct {
	K, TauS, DeadTimeS float64
}

// Validate reports an error for a block that cannot be evaluated.
func (g FOPDT) Validate() error {
	switch {
	case !(g.TauS > 0) || math.IsInf(g.TauS, 0):
		return fmt.Errorf("control: time constant %g s is not positive and finite", g.TauS)
	case !(g.DeadTimeS >= 0) || math.IsInf(g.DeadTimeS, 0):
		return fmt.Errorf("control: dead time %g s is not non-negative and finite", g.DeadTimeS)
	case math.IsNaN(g.K) || math.IsInf(g.K, 0):
		return fmt.Errorf("control: gain %g is not finite", g.K)
	}
	return nil
}

// Response returns the complex frequency response G(jω) at hz.
func (g FOPDT) Response(hz float64) complex128 {
	w := 2 * math.Pi * hz
	return complex(g.K, 0) * cmplx.Exp(complex(0, -w*g.DeadTimeS)) / complex(1, w*g.TauS)
}

// MagnitudeDB returns 20·log10|G(jω)| = 20·log10(|K|/√(1 + (ωτ)²)).
func (g FOPDT) MagnitudeDB(hz float64) float64 {
	w := 2 * math.Pi * hz
	return 20 * math.Log10(math.Abs(g.K)/math.Hypot(1, w*g.TauS))
}

// PhaseDeg returns the unwrapped phase of G(jω) in degrees,
// −atan(ωτ) − ωθ (negative: a lag), for K > 0.
func (g FOPDT) PhaseDeg(hz float64) float64 {
	w := 2 * math.Pi * hz
	return (-math.Atan(w*g.TauS) - w*g.DeadTimeS) * 180 / math.Pi
}

// StepResponse returns the response at t seconds to a unit step at t = 0:
// K·(1 − e^{−(t−θ)/τ}) for t ≥ θ, 0 before.
func (g FOPDT) StepResponse(t float64) float64 {
	if t < g.DeadTimeS {
		return 0
	}
	return g.K * (1 - math.Exp(-(t-g.DeadTimeS)/g.TauS))
}

// LowPass is a first-order low-pass filter 1/(s/ωc + 1) with ωc = 2π·CutoffHz,
// the usual model of a sensor or speed-estimate filter.
type LowPass struct {
	CutoffHz float64
}

// TimeConstantS returns 1/ωc (10 Hz gives 15.9 ms).
func (f LowPass) TimeConstantS() float64 { return 1 / (2 * math.Pi * f.CutoffHz) }

// Block returns the filter as an FOPDT block with unit gain and no delay.
func (f LowPass) Block() FOPDT { return FOPDT{K: 1, TauS: f.TimeConstantS()} }

// Discrete is the zero-order-hold equivalent of an FOPDT block at sample
// period PeriodS: with the dead time θ = D·T + φ (D whole samples, 0 ≤ φ < T)
// and a = e^{−T/τ},
//
//	y[k] = a·y[k−1] + B1·u[k−1−D] + B2·u[k−2−D]
//	B1 = K·(1 − e^{−(T−φ)/τ}),  B2 = K·(e^{−(T−φ)/τ} − a),  B1 + B2 = b = K·(1 − a)
//
// i.e. H(z) = z^{−D}·(B1·z + B2) / (z·(z − a)). With m = 1 − φ/T this is the
// modified z-transform form (Franklin, Powell & Workman, from memory); for
// φ = 0, B2 = 0 and H(z) = b·z^{−D}/(z − a).
type Discrete struct {
	PeriodS float64
	// A is the pole a = e^{−T/τ}; B = K(1 − a) the whole-sample input gain.
	A, B, B1, B2 float64
	// DelaySamples is D, the whole samples of dead time; FracDelay is φ/T.
	DelaySamples int
	FracDelay    float64
}

// Discretize returns the ZOH equivalent of g at sample period periodS.
//
// Derivation: over one period [kT, (k+1)T) the delayed held input equals
// u[k−D−1] for the first φ seconds and u[k−D] for the remaining T − φ, so
// the exact state update of τy' = −y + K·v over the period is
// y[k+1] = a·y[k] + K(1 − e^{−(T−φ)/τ})·u[k−D] + K·e^{−(T−φ)/τ}(1 − e^{−φ/τ})·u[k−D−1].
func Discretize(g FOPDT, periodS float64) (Discrete, error) {
	if err := g.Validate(); err != nil {
		return Discrete{}, err
	}
	if !(periodS > 0) || math.IsInf(periodS, 0) {
		return Discrete{}, fmt.Errorf("control: sample period %g s is not positive", periodS)
	}
	d := Discrete{PeriodS: periodS}
	d.A = math.Exp(-periodS / g.TauS)
	d.B = g.K * (1 - d.A)
	n := g.DeadTimeS / periodS
	d.DelaySamples = int(math.Floor(n + 1e-9)) // a delay of exactly k·T is k whole samples
	phi := math.Max(0, g.DeadTimeS-float64(d.DelaySamples)*periodS)
	d.FracDelay = phi / periodS
	e := math.Exp(-(periodS - phi) / g.TauS)
	d.B1 = g.K * (1 - e)
	d.B2 = g.K * (e - d.A)
	return d, nil
}

// Simulate runs the difference equation from rest over the input u (one
// value per sample, held over the period) and writes y into dst, which is
// allocated when nil and must have len(u) otherwise. y[k] is the output at
// the instant kT.
func (d Discrete) Simulate(dst, u []float64) []float64 {
	if dst == nil {
		dst = make([]float64, len(u))
	}
	if len(dst) != len(u) {
		panic("control: Simulate dst length mismatch")
	}
	in := func(i int) float64 {
		if i < 0 {
			return 0
		}
		return u[i]
	}
	prev := 0.0
	for k := range u {
		y := 0.0
		if k > 0 {
			y = d.A*prev + d.B1*in(k-1-d.DelaySamples) + d.B2*in(k-2-d.DelaySamples)
		}
		dst[k] = y
		prev = y
	}
	return dst
}

// Response returns H(e^{jωT}), the discrete block's frequency response at
// hz (below the Nyquist frequency); its phase includes the hold's lag.
func (d Discrete) Response(hz float64) complex128 {
	z := cmplx.Exp(complex(0, 2*math.Pi*hz*d.PeriodS))
	zi := 1 / z
	num := (complex(d.B1, 0)*zi + complex(d.B2, 0)*zi*zi) * cmplx.Pow(zi, complex(float64(d.DelaySamples), 0))
	return num / (1 - complex(d.A, 0)*zi)
}

// PhaseDeg returns the unwrapped phase of H(e^{jωT}) in degrees, unwrapped
// by following it up from 0 Hz in small steps.
func (d Discrete) PhaseDeg(hz float64) float64 {
	const steps = 512
	ph, prev := 0.0, cmplx.Phase(d.Response(0))
	for i := 1; i <= steps; i++ {
		p := cmplx.Phase(d.Response(hz * float64(i) / steps))
		dp := p - prev
		dp -= 2 * math.Pi * math.Round(dp/(2*math.Pi))
		ph += dp
		prev = p
	}
	return (cmplx.Phase(d.Response(0)) + ph) * 180 / math.Pi
}

// Equation returns the difference equation as text, with the sample index k.
func (d Discrete) Equation() string {
	u := func(lag int) string { return fmt.Sprintf("u[k−%d]", lag) }
	s := fmt.Sprintf("y[k] = %.6g·y[k−1] + %.6g·%s", d.A, d.B1, u(1+d.DelaySamples))
	if d.B2 != 0 {
		s += fmt.Sprintf(" + %.6g·%s", d.B2, u(2+d.DelaySamples))
	}
	return s
}

// SIMCPI is a PI controller from Skogestad's SIMC rules for an FOPDT
// process k·e^{−θs}/(τ1 s + 1): Kc = (1/k)·τ1/(τc + θ),
// τI = min(τ1, 4(τc + θ)), with the closed-loop time constant τc.
type SIMCPI struct {
	Kc, TauIS, TauCS float64
}

// SIMC returns the SIMC PI settings for g with closed-loop time constant
// tauCS (Skogestad 2003 recommends τc = θ for tight control).
func SIMC(g FOPDT, tauCS float64) (SIMCPI, error) {
	if err := g.Validate(); err != nil {
		return SIMCPI{}, err
	}
	if g.K == 0 || !(tauCS+g.DeadTimeS > 0) {
		return SIMCPI{}, fmt.Errorf("control: SIMC needs a non-zero gain and τc + θ > 0")
	}
	return SIMCPI{
		Kc:    g.TauS / (g.K * (tauCS + g.DeadTimeS)),
		TauIS: math.Min(g.TauS, 4*(tauCS+g.DeadTimeS)),
		TauCS: tauCS,
	}, nil
}
