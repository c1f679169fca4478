package compare

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"strings"
	"testing"

	"whirlfit/analysis"
)

func est(v, lo, hi float64) analysis.Estimate {
	return analysis.Estimate{Value: v, CI95: [2]float64{lo, hi}}
}

// report is invented data: up steps with the given τ (s, ± hw) and one
// down step of 40 ± 3 ms.
func report(file string, taus ...float64) *analysis.Report {
	r := &analysis.Report{File: file}
	for i := 0; i+1 < len(taus); i += 2 {
		tau, hw := taus[i], taus[i+1]
		dead := est(0.010, 0.009, 0.011)
		r.Steps = append(r.Steps, analysis.StepResult{Direction: analysis.Up, DeadTimeS: &dead,
			TauS: est(tau, tau-hw, tau+hw), Rise1090S: est(2.197*tau, 2.197*(tau-hw), 2.197*(tau+hw)),
			BandwidthHz: est(1/(6.2832*tau), 1/(6.2832*(tau+hw)), 1/(6.2832*(tau-hw))),
			RPMBefore:   est(6000, 5990, 6010), RPMAfter: est(12000, 11990, 12010)})
	}
	r.Steps = append(r.Steps, analysis.StepResult{Direction: analysis.Down, TauS: est(0.040, 0.037, 0.043),
		RPMBefore: est(12000, 11990, 12010), RPMAfter: est(6000, 5990, 6010)})
	return r
}

func TestFormatPM(t *testing.T) {
	cases := []struct {
		e     analysis.Estimate
		scale float64
		unit  string
		want  string
	}{
		{est(0.01834, 0.01764, 0.01901), 1e3, "ms", "18.3 ± 0.7 ms"},
		{est(0.0271, 0.0252, 0.0290), 1e3, "ms", "27.1 ± 1.9 ms"},
		{est(0.018, 0.017, 0.019), 1e3, "ms", "18.0 ± 1.0 ms"},
		{est(12003.4, 11971, 12030), 1, "rpm", "12000 ± 30 rpm"},
		{est(12003.4, 11703, 12430), 1, "rpm", "12000 ± 400 rpm"},
		{analysis.Estimate{Value: 0.02}, 1e3, "ms", "20 ms"},
	}
	for _, c := range cases {
		if got := FormatPM(c.e, c.scale, c.unit); got != c.want {
			t.Errorf("FormatPM(%v) = %q, want %q", c.e, got, c.want)
		}
	}
}

func TestCompareVerdicts(t *testing.T) {
	a := report("a.wav", 0.027, 0.002, 0.025, 0.002)
	b := report("b.wav", 0.018, 0.001, 0.0245, 0.002)
	c, err := Compare([]*analysis.Report{a, b}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Rows) != 3 {
		t.Fatalf("%d matched steps, want 2 up + 1 down", len(c.Rows))
	}
	var txt bytes.Buffer
	if err := c.WriteText(&txt); err != nil {
		t.Fatal(err)
	}
	t.Logf("\n%s", txt.String())
	out := txt.String()
	for _, want := range []string{
		"up step 1: B responds faster than A: τ 18.0 ± 1.0 ms vs 27.0 ± 2.0 ms",
		"up step 2: no clear difference between B and A in τ",
		"down step 1: no clear difference between B and A in τ",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("text lacks %q", want)
		}
	}
	// Difference B − A on the first up step: −9 ms ± √(1² + 2²) = 2.236 ms.
	d := c.Rows[0].Lines[0].Cells[1].Diff
	if d.Value == nil || *d.Overlap || abs(d.Value.Value+0.009) > 1e-12 || abs(d.Value.CI95[1]-d.Value.Value-0.002236) > 1e-6 {
		t.Errorf("difference %+v overlap %v", d.Value, d.Overlap)
	}
	// The down step has no dead time: its θ cells are empty, no verdict.
	for _, v := range c.Rows[2].Verdicts {
		if strings.Contains(v, "dead time") {
			t.Errorf("verdict on a missing dead time: %q", v)
		}
	}
}

// A file with fewer steps leaves its cells empty instead of shifting.
func TestCompareUnequalSteps(t *testing.T) {
	a := report("a.wav", 0.027, 0.002, 0.025, 0.002)
	b := report("b.wav", 0.018, 0.001)
	c, err := Compare([]*analysis.Report{a, b}, []string{"two-blade", "three-blade"})
	if err != nil {
		t.Fatal(err)
	}
	if c.Rows[1].Steps[1] != nil || c.Rows[1].Lines[0].Cells[1].Estimate != nil {
		t.Errorf("second up step of b should be missing")
	}
	var b1, b2 bytes.Buffer
	if err := c.WriteCSV(&b1); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&b1).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	// 3 matched steps × 6 quantities × 2 files + header.
	if len(recs) != 1+3*len(Quantities)*2 {
		t.Errorf("%d CSV records", len(recs))
	}
	if recs[2][3] != "three-blade" || recs[2][2] != "tau_s" || recs[2][5] != "0.018" || recs[2][11] != "false" {
		t.Errorf("CSV row %v", recs[2])
	}
	if err := c.WriteJSON(&b2); err != nil {
		t.Fatal(err)
	}
	var js map[string]any
	if err := json.Unmarshal(b2.Bytes(), &js); err != nil {
		t.Fatalf("%v\n%s", err, b2.String())
	}
	if len(js["steps"].([]any)) != 3 {
		t.Errorf("JSON steps: %v", js["steps"])
	}
	if _, err := Compare([]*analysis.Report{a}, nil); err == nil {
		t.Error("one recording accepted")
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
