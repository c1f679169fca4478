package control

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"
)

// WriteJSON writes the models: one object for one model, an array for
// several.
func WriteJSON(w io.Writer, models []*Model) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if len(models) == 1 {
		return enc.Encode(models[0])
	}
	return enc.Encode(models)
}

// WriteText writes a model as readable text, units beside each number.
func (m *Model) WriteText(w io.Writer) error {
	var b strings.Builder
	p := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	rng := func(r Range, scale float64, unit string, prec int) string {
		sep := " "
		if unit == "°" {
			sep = ""
		}
		return fmt.Sprintf("%.*f%s%s (95 %% %.*f … %.*f)", prec, r.Value*scale, sep, unit, prec, r.CI95[0]*scale, prec, r.CI95[1]*scale)
	}
	p("%s\n", m.File)
	if m.Gain.Normalised {
		p("  gain K = 1 (normalised: output and command both as fractions of the step; give --throttle for rpm per unit throttle)\n")
	} else {
		p("  gain K = %s per unit throttle, from %d plateaus (line: rpm = %.1f + K·throttle)\n", rng(m.Gain.K, 1, "rpm", 1), m.Gain.Plateaus, m.Gain.OffsetRPM)
	}
	if m.SensorLPFHz > 0 {
		p("  sensor low-pass 1/(s/ωc + 1): fc = %g Hz, ωc = %.4g rad/s, time constant %.2f ms; at %g Hz %.2f dB, %.2f°\n",
			m.SensorLPFHz, 2*math.Pi*m.SensorLPFHz, m.SensorTauS*1e3, m.AtHz, m.SensorMagDB, m.SensorPhaseDeg)
	}
	for _, k := range m.Blocks {
		p("\n  step %d (%s)\n", k.Step, k.Direction)
		p("    τ = %s, θ = %s\n", rng(k.TauS, 1e3, "ms", 2), rng(k.DeadTimeS, 1e3, "ms", 2))
		p("    continuous: %s\n", k.Continuous)
		p("    discrete at %g Hz (zero-order hold, T = %.4g ms): a = e^(−T/τ) = %.6f (95 %% %.6f … %.6f), b = K(1 − a) = %.6g (95 %% %.6g … %.6g)\n",
			m.LoopHz, k.PeriodS*1e3, k.A.Value, k.A.CI95[0], k.A.CI95[1], k.B.Value, k.B.CI95[0], k.B.CI95[1])
		p("    delay θ = %d whole samples + %.4f of a sample (modified z-transform: b1 = %.6g, b2 = %.6g)\n", k.DelaySamples, k.FracDelay, k.B1, k.B2)
		p("    %s\n", k.Equation)
		p("    at %g Hz: motor %s, phase %s", m.AtHz, rng(k.MagnitudeDB, 1, "dB", 2), rng(k.PhaseDeg, 1, "°", 2))
		if k.DiscretePhaseDeg != nil {
			p("; discrete with hold %.2f°", *k.DiscretePhaseDeg)
		}
		p("\n")
		if m.SensorLPFHz > 0 {
			p("    with sensor filter: %s, phase %s\n", rng(k.CombinedMagDB, 1, "dB", 2), rng(k.CombinedPhaseDeg, 1, "°", 2))
		}
		if k.PI != nil {
			unit := "per unit of normalised speed"
			if !m.Gain.Normalised {
				unit = "throttle per rpm"
			}
			p("    SIMC PI (Skogestad 2003, τc = %.2f ms): Kc = %.4g %s, τI = %.2f ms\n", k.PI.TauCS*1e3, k.PI.Kc, unit, k.PI.TauIS*1e3)
		}
		for _, wn := range k.Warnings {
			p("    warning: %s\n", wn)
		}
	}
	for _, wn := range m.Warnings {
		p("  warning: %s\n", wn)
	}
	_, err := io.WriteString(w, b.String())
	return err
}
