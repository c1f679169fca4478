package export

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"reflect"
	"sort"
	"strings"
	"testing"

	"whirlfit/analysis"
)

// sampleReport is invented data for format tests.
func sampleReport(file string) *analysis.Report {
	cmd := 1.0
	dead := analysis.Estimate{Value: 0.012, CI95: [2]float64{0.010, 0.014}}
	t95 := analysis.Estimate{Value: 0.102, CI95: [2]float64{0.095, 0.109}}
	t63 := analysis.Estimate{Value: 0.042, CI95: [2]float64{0.039, 0.045}}
	return &analysis.Report{
		File: file, Blades: 2, SampleRateHz: 48000, DurationS: 6,
		Steps: []analysis.StepResult{{
			Direction: analysis.Up, CommandS: &cmd, ResponseStartS: 1.012, DeadTimeS: &dead,
			TauS: analysis.Estimate{Value: 0.030, CI95: [2]float64{0.028, 0.032}}, T63S: &t63, T95S: &t95,
			Rise1090S:      analysis.Estimate{Value: 0.0659, CI95: [2]float64{0.0615, 0.0703}},
			RPMBefore:      analysis.Estimate{Value: 12000, CI95: [2]float64{11990, 12010}},
			RPMAfter:       analysis.Estimate{Value: 18000, CI95: [2]float64{17985, 18015}},
			DeltaRPM:       analysis.Estimate{Value: 6000, CI95: [2]float64{5980, 6020}},
			BandwidthHz:    analysis.Estimate{Value: 5.305, CI95: [2]float64{4.97, 5.68}},
			ResidualRMSRPM: 21.5, R2: 0.998, Warnings: []string{"only 3.1 τ of settled data after the step"},
		}, {
			Direction: analysis.Down, ResponseStartS: 3.5,
			TauS:           analysis.Estimate{Value: 0.045, CI95: [2]float64{math.NaN(), math.NaN()}},
			RPMBefore:      analysis.Estimate{Value: 18000, CI95: [2]float64{17980, 18020}},
			RPMAfter:       analysis.Estimate{Value: 12000, CI95: [2]float64{11980, 12020}},
			ResidualRMSRPM: math.NaN(), R2: 0.99,
		}},
		Warnings: []string{"blade count estimated"},
	}
}

func keys(t *testing.T, v any) []string {
	var m map[string]any
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	var k []string
	for name := range m {
		k = append(k, name)
	}
	sort.Strings(k)
	return k
}

// The mirror types must not drift from analysis.Report's JSON tags.
func TestJSONMirrorsReportTags(t *testing.T) {
	r := sampleReport("a.wav")
	r.Steps[1].TauS.CI95 = [2]float64{0.04, 0.05}
	r.Steps[1].ResidualRMSRPM = 1
	if got, want := keys(t, jsonOf(r)), keys(t, r); !reflect.DeepEqual(got, want) {
		t.Errorf("report keys %v, want %v", got, want)
	}
	if got, want := keys(t, jsonOf(r).Steps[0]), keys(t, r.Steps[0]); !reflect.DeepEqual(got, want) {
		t.Errorf("step keys %v, want %v", got, want)
	}
}

func TestWriteJSON(t *testing.T) {
	var b bytes.Buffer
	if err := WriteJSON(&b, []*analysis.Report{sampleReport("a.wav")}); err != nil {
		t.Fatal(err)
	}
	var one map[string]any
	if err := json.Unmarshal(b.Bytes(), &one); err != nil {
		t.Fatalf("one report is not a JSON object: %v\n%s", err, b.String())
	}
	steps := one["steps"].([]any)
	s0 := steps[0].(map[string]any)
	if got := s0["tau_s"].(map[string]any)["value"].(float64); got != 0.030 {
		t.Errorf("tau_s.value = %v, want 0.03", got)
	}
	if got := s0["dead_time_s"].(map[string]any)["ci95"].([]any); got[0].(float64) != 0.010 || got[1].(float64) != 0.014 {
		t.Errorf("dead_time_s.ci95 = %v, want [0.01 0.014]", got)
	}
	s1 := steps[1].(map[string]any)
	if s1["command_s"] != nil || s1["dead_time_s"] != nil {
		t.Errorf("step without command: command_s=%v dead_time_s=%v, want null", s1["command_s"], s1["dead_time_s"])
	}
	if ci := s1["tau_s"].(map[string]any)["ci95"].([]any); ci[0] != nil || ci[1] != nil {
		t.Errorf("NaN interval written as %v, want nulls", ci)
	}
	if s1["residual_rms_rpm"] != nil {
		t.Errorf("NaN residual written as %v", s1["residual_rms_rpm"])
	}
	if w, ok := s1["warnings"].([]any); !ok || len(w) != 0 {
		t.Errorf("nil warnings written as %v, want []", s1["warnings"])
	}

	b.Reset()
	if err := WriteJSON(&b, []*analysis.Report{sampleReport("a.wav"), sampleReport("b.wav")}); err != nil {
		t.Fatal(err)
	}
	var many []map[string]any
	if err := json.Unmarshal(b.Bytes(), &many); err != nil || len(many) != 2 || many[1]["file"] != "b.wav" {
		t.Fatalf("two reports: %v, %d objects", err, len(many))
	}
}

func TestWriteSummaryCSV(t *testing.T) {
	var b bytes.Buffer
	empty := &analysis.Report{File: "silent.wav", Warnings: []string{"no motor found"}}
	if err := WriteSummaryCSV(&b, []*analysis.Report{sampleReport("a.wav"), empty}); err != nil {
		t.Fatal(err)
	}
	t.Logf("\n%s", b.String())
	recs, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 4 {
		t.Fatalf("%d records, want header + 2 steps + 1 empty file", len(recs))
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	for _, h := range recs[0] {
		if h != "file" && h != "step" && h != "direction" && h != "warnings" && h != "r2" &&
			!strings.HasSuffix(h, "_s") && !strings.HasSuffix(h, "_hz") && !strings.Contains(h, "rpm") {
			t.Errorf("column %q carries no unit", h)
		}
	}
	cases := []struct {
		row  int
		name string
		want string
	}{
		{1, "tau_s", "0.03"}, {1, "tau_lo_s", "0.028"}, {1, "dead_time_hi_s", "0.014"},
		{1, "rpm_after", "18000"}, {1, "bandwidth_hz", "5.305"}, {1, "step", "1"},
		{2, "direction", "down"}, {2, "command_s", ""}, {2, "dead_time_s", ""}, {2, "tau_lo_s", ""},
		{2, "t95_s", ""}, {2, "residual_rms_rpm", ""}, {2, "step", "2"},
		{3, "file", "silent.wav"}, {3, "tau_s", ""}, {3, "warnings", "no step found; no motor found"},
	}
	for _, c := range cases {
		if got := recs[c.row][col[c.name]]; got != c.want {
			t.Errorf("row %d %s = %q, want %q", c.row, c.name, got, c.want)
		}
	}
}
