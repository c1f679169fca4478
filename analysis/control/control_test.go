package control

import (
	"bytes"
	"encoding/json"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"whirlfit/analysis"
)

// The ZOH equivalent against the textbook closed forms (Franklin, Powell &
// Workman, Digital Control of Dynamic Systems, discrete equivalents; from
// memory): for a delay of whole samples, H(z) = K(1 − a)z^{−D}/(z − a) with
// a = e^{−T/τ}; with a fractional part m = 1 − φ/T the modified
// z-transform numerator is K[(1 − e^{−mT/τ})z + (e^{−mT/τ} − a)].
func TestDiscretizeTextbook(t *testing.T) {
	cases := []struct {
		name     string
		g        FOPDT
		T        float64
		wantD    int
		wantFrac float64
	}{
		{"no delay", FOPDT{K: 1, TauS: 0.030}, 0.001, 0, 0},
		{"whole samples", FOPDT{K: 2.5, TauS: 0.020, DeadTimeS: 0.004}, 0.001, 4, 0},
		{"fractional", FOPDT{K: 1, TauS: 0.025, DeadTimeS: 0.0123}, 0.001, 12, 0.3},
		{"delay below a sample", FOPDT{K: 800, TauS: 0.008, DeadTimeS: 0.0004}, 0.001, 0, 0.4},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d, err := Discretize(c.g, c.T)
			if err != nil {
				t.Fatal(err)
			}
			a := math.Exp(-c.T / c.g.TauS)
			m := 1 - c.wantFrac
			em := math.Exp(-m * c.T / c.g.TauS)
			if d.DelaySamples != c.wantD || math.Abs(d.FracDelay-c.wantFrac) > 1e-9 {
				t.Errorf("delay %d + %.6f samples, want %d + %.6f", d.DelaySamples, d.FracDelay, c.wantD, c.wantFrac)
			}
			for _, q := range []struct {
				name      string
				got, want float64
			}{
				{"a", d.A, a}, {"b", d.B, c.g.K * (1 - a)},
				{"b1", d.B1, c.g.K * (1 - em)}, {"b2", d.B2, c.g.K * (em - a)},
				{"b1+b2", d.B1 + d.B2, d.B},
			} {
				if math.Abs(q.got-q.want) > 1e-12*math.Max(1, math.Abs(q.want)) {
					t.Errorf("%s = %.15g, want %.15g", q.name, q.got, q.want)
				}
			}
			t.Logf("%s", d.Equation())
		})
	}
}

// The discrete step response equals the continuous one at every sample
// instant, also with a fractional delay (exactness of the ZOH equivalent
// for inputs held between samples).
func TestDiscreteStepMatchesContinuous(t *testing.T) {
	for _, g := range []FOPDT{
		{K: 1, TauS: 0.030, DeadTimeS: 0},
		{K: 1, TauS: 0.030, DeadTimeS: 0.005},
		{K: 1500, TauS: 0.012, DeadTimeS: 0.0037},
		{K: 1, TauS: 0.005, DeadTimeS: 0.0104},
	} {
		const T = 0.001
		d, err := Discretize(g, T)
		if err != nil {
			t.Fatal(err)
		}
		u := make([]float64, 200)
		for i := range u {
			u[i] = 1
		}
		y := d.Simulate(nil, u)
		worst := 0.0
		for k, yk := range y {
			worst = math.Max(worst, math.Abs(yk-g.StepResponse(float64(k)*T)))
		}
		t.Logf("τ %.1f ms θ %.1f ms: largest sample error %.2g", g.TauS*1e3, g.DeadTimeS*1e3, worst)
		if worst > 1e-12*math.Max(1, g.K) {
			t.Errorf("τ %g θ %g: discrete step differs by %g", g.TauS, g.DeadTimeS, worst)
		}
	}
}

// For a random held input the difference equation matches a fine-step
// simulation of τy' = −y + K·u(t − θ) (exact exponential update over
// sub-steps of T/1000, which treats the delay independently of the
// B1/B2 split).
func TestDiscreteRandomInputMatchesFineSimulation(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 7))
	g := FOPDT{K: 2, TauS: 0.017, DeadTimeS: 0.00633}
	const T, sub = 0.001, 1000
	d, _ := Discretize(g, T)
	u := make([]float64, 120)
	for i := range u {
		u[i] = rng.Float64()*2 - 1
	}
	y := d.Simulate(nil, u)
	h := T / sub
	e := math.Exp(-h / g.TauS)
	x := 0.0
	worst := 0.0
	for k := 0; k < len(u); k++ {
		if dd := math.Abs(x - y[k]); dd > worst {
			worst = dd
		}
		for j := 0; j < sub; j++ {
			tm := float64(k)*T + (float64(j)+0.5)*h - g.DeadTimeS
			v := 0.0
			if tm >= 0 {
				v = u[int(tm/T)]
			}
			x = e*x + g.K*(1-e)*v
		}
	}
	t.Logf("largest difference from the fine simulation: %.2g", worst)
	if worst > 1e-3 { // the sub-step grid places the delay edge within h/2
		t.Errorf("difference %g", worst)
	}
}

// Phase lag and magnitude against the analytic formulas and against the
// complex response itself (Ogata, Modern Control Engineering: first-order
// lag −atan(ωτ), transport lag −ωθ).
func TestFrequencyResponse(t *testing.T) {
	g := FOPDT{K: 1, TauS: 0.030, DeadTimeS: 0.012}
	for _, hz := range []float64{1, 5.305, 20, 100} {
		w := 2 * math.Pi * hz
		want := (-math.Atan(w*0.030) - w*0.012) * 180 / math.Pi
		if got := g.PhaseDeg(hz); math.Abs(got-want) > 1e-9 {
			t.Errorf("%g Hz: phase %g°, want %g°", hz, got, want)
		}
		// The wrapped phase of the complex response agrees modulo 360°.
		p := cmplx.Phase(g.Response(hz)) * 180 / math.Pi
		if d := math.Mod(p-want+720, 360); d > 1e-9 && d < 360-1e-9 {
			t.Errorf("%g Hz: complex phase %g° vs %g°", hz, p, want)
		}
		if got, want := g.MagnitudeDB(hz), 20*math.Log10(cmplx.Abs(g.Response(hz))); math.Abs(got-want) > 1e-9 {
			t.Errorf("%g Hz: |G| %g dB, want %g dB", hz, got, want)
		}
	}
	// At the corner ω = 1/τ the lag of the first-order part is 45°.
	if got := (FOPDT{K: 1, TauS: 0.030}).PhaseDeg(1 / (2 * math.Pi * 0.030)); math.Abs(got+45) > 1e-9 {
		t.Errorf("corner phase %g°, want −45°", got)
	}
	// The hold adds about ωT/2 of lag at low frequency (common practice
	// approximation of the ZOH as a half-sample delay).
	d, _ := Discretize(g, 0.001)
	extra := d.PhaseDeg(20) - g.PhaseDeg(20)
	half := -2 * math.Pi * 20 * 0.0005 * 180 / math.Pi
	t.Logf("ZOH extra lag at 20 Hz, 1 kHz loop: %.3f° (half-sample rule %.3f°)", extra, half)
	if math.Abs(extra-half) > 0.05 {
		t.Errorf("hold lag %g°, want ≈ %g°", extra, half)
	}
}

// A first-order low-pass is 3.01 dB down with 45° lag at its cut-off
// (textbook: 20·log10(1/√2) = −3.0103 dB), and 10 Hz means 15.9 ms.
func TestLowPass(t *testing.T) {
	f := LowPass{CutoffHz: 10}
	if got := f.TimeConstantS(); math.Abs(got-0.0159155) > 1e-6 {
		t.Errorf("time constant %g s, want 0.0159155", got)
	}
	b := f.Block()
	if got := b.MagnitudeDB(10); math.Abs(got+3.0103) > 1e-4 {
		t.Errorf("gain at fc %g dB, want −3.0103", got)
	}
	if got := b.PhaseDeg(10); math.Abs(got+45) > 1e-9 {
		t.Errorf("phase at fc %g°, want −45°", got)
	}
}

func TestFitGain(t *testing.T) {
	// Exact line rpm = 2000 + 20000·u through four plateaus.
	u := []float64{0.2, 0.5, 0.3, 0.6}
	rpm := []float64{6000, 12000, 8000, 14000}
	g, err := FitGain(u, rpm, make([][2]float64, 4))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(g.K.Value-20000) > 1e-6 || math.Abs(g.OffsetRPM-2000) > 1e-6 || g.K.CI95[1]-g.K.CI95[0] > 1e-6 {
		t.Errorf("exact line: K = %+v offset %g", g.K, g.OffsetRPM)
	}
	// With scatter the interval is the t-interval of the slope; by hand for
	// x = 0,1,2 and y = 0,2,1: Sxx = 2, Sxy = 1, slope 0.5, residuals
	// −0.5, 1, −0.5, RSS = 1.5, se = √(1.5/1/2) = 0.8660, t(0.975, 1) =
	// 12.706 (Student-t table), half width 11.004.
	g, _ = FitGain([]float64{0, 1, 2}, []float64{0, 2, 1}, make([][2]float64, 3))
	if math.Abs(g.K.Value-0.5) > 1e-12 || math.Abs((g.K.CI95[1]-g.K.CI95[0])/2-11.004) > 0.01 {
		t.Errorf("scatter: K = %+v, want 0.5 ± 11.004", g.K)
	}
	// Two plateaus: the interval spans the slopes the rpm intervals allow.
	g, _ = FitGain([]float64{0.2, 0.4}, []float64{6000, 10000}, [][2]float64{{5990, 6010}, {9980, 10020}})
	if math.Abs(g.K.Value-20000) > 1e-6 || math.Abs(g.K.CI95[0]-19850) > 1e-6 || math.Abs(g.K.CI95[1]-20150) > 1e-6 {
		t.Errorf("two plateaus: K = %+v, want 20000 in [19850, 20150]", g.K)
	}
	if _, err := FitGain([]float64{0.2}, []float64{1, 2}, nil); err == nil {
		t.Error("mismatched lengths accepted")
	}
}

func sampleReport() *analysis.Report {
	cmd := 1.0
	dead := analysis.Estimate{Value: 0.0123, CI95: [2]float64{0.011, 0.0136}}
	return &analysis.Report{File: "demo.wav", Blades: 2, Steps: []analysis.StepResult{
		{Direction: analysis.Up, CommandS: &cmd, DeadTimeS: &dead,
			TauS:      analysis.Estimate{Value: 0.030, CI95: [2]float64{0.028, 0.032}},
			RPMBefore: analysis.Estimate{Value: 6000, CI95: [2]float64{5990, 6010}},
			RPMAfter:  analysis.Estimate{Value: 12000, CI95: [2]float64{11990, 12010}}},
		{Direction: analysis.Down,
			TauS:      analysis.Estimate{Value: 0.045, CI95: [2]float64{0.041, 0.049}},
			RPMBefore: analysis.Estimate{Value: 12000, CI95: [2]float64{11990, 12010}},
			RPMAfter:  analysis.Estimate{Value: 8000, CI95: [2]float64{7990, 8010}}},
	}}
}

func TestBuild(t *testing.T) {
	m, err := Build(sampleReport(), Config{Throttle: []float64{0.2, 0.5, 0.3}})
	if err != nil {
		t.Fatal(err)
	}
	var txt bytes.Buffer
	if err := m.WriteText(&txt); err != nil {
		t.Fatal(err)
	}
	t.Logf("\n%s", txt.String())
	b := m.Blocks[0]
	if b.DelaySamples != 12 || math.Abs(b.FracDelay-0.3) > 1e-9 {
		t.Errorf("delay %d + %g samples, want 12 + 0.3", b.DelaySamples, b.FracDelay)
	}
	w := 2 * math.Pi * 20
	want := (-math.Atan(w*0.030) - w*0.0123) * 180 / math.Pi
	if math.Abs(b.PhaseDeg.Value-want) > 1e-9 {
		t.Errorf("phase %g, want %g", b.PhaseDeg.Value, want)
	}
	wantLo := (-math.Atan(w*0.032) - w*0.0136) * 180 / math.Pi
	if math.Abs(b.PhaseDeg.CI95[0]-wantLo) > 1e-9 {
		t.Errorf("phase interval low end %g, want %g", b.PhaseDeg.CI95[0], wantLo)
	}
	sensor := -math.Atan(w/(2*math.Pi*10)) * 180 / math.Pi
	if math.Abs(b.CombinedPhaseDeg.Value-(want+sensor)) > 1e-9 {
		t.Errorf("combined phase %g, want %g", b.CombinedPhaseDeg.Value, want+sensor)
	}
	if m.Gain.Normalised || m.Gain.Plateaus != 3 || !(m.Gain.K.CI95[0] < m.Gain.K.Value && m.Gain.K.Value < m.Gain.K.CI95[1]) {
		t.Errorf("gain %+v", m.Gain)
	}
	if len(m.Blocks[1].Warnings) == 0 || !strings.Contains(m.Blocks[1].Warnings[0], "dead time") {
		t.Errorf("step without command time: warnings %v", m.Blocks[1].Warnings)
	}
	var js bytes.Buffer
	if err := WriteJSON(&js, []*Model{m}); err != nil {
		t.Fatal(err)
	}
	var back map[string]any
	if err := json.Unmarshal(js.Bytes(), &back); err != nil {
		t.Fatal(err)
	}
	if back["loop_hz"].(float64) != 1000 || len(back["blocks"].([]any)) != 2 {
		t.Errorf("JSON: %s", js.String())
	}
	if _, err := Build(&analysis.Report{File: "x"}, Config{}); err == nil {
		t.Error("report without steps accepted")
	}
}

func TestSIMC(t *testing.T) {
	// Skogestad 2003: Kc = τ1/(k(τc + θ)), τI = min(τ1, 4(τc + θ)).
	p, err := SIMC(FOPDT{K: 2, TauS: 0.030, DeadTimeS: 0.005}, 0.005)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(p.Kc-1.5) > 1e-12 || math.Abs(p.TauIS-0.030) > 1e-15 {
		t.Errorf("Kc %g τI %g, want 1.5 and 0.030", p.Kc, p.TauIS)
	}
	p, _ = SIMC(FOPDT{K: 1, TauS: 0.100, DeadTimeS: 0.005}, 0.005)
	if math.Abs(p.TauIS-0.040) > 1e-15 {
		t.Errorf("τI %g, want 4(τc + θ) = 0.040", p.TauIS)
	}
}
