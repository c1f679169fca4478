package export

import (
	"encoding/json"
	"io"
	"math"
	"strconv"

	"whirlfit/analysis"
)

// WriteJSON writes reports in the layout of the step-response issue: one
// object for one report, an array of objects for several (or none):
//
//	{"file": "a.wav", "blades": 2, "sample_rate_hz": 48000, "duration_s": 6,
//	 "steps": [{"direction": "up", "command_s": 1.0, "response_start_s": 1.012,
//	            "dead_time_s": {"value": 0.012, "ci95": [0.010, 0.014]},
//	            "tau_s": {"value": 0.030, "ci95": [0.028, 0.032]}, …,
//	            "residual_rms_rpm": 21.3, "r2": 0.998, "warnings": []}],
//	 "warnings": []}
//
// Numbers that are not finite (an interval that could not be formed) are
// written as null, since JSON has no NaN; absent lists are written as [].
func WriteJSON(w io.Writer, reps []*analysis.Report) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if len(reps) == 1 {
		return enc.Encode(jsonOf(reps[0]))
	}
	out := make([]jsonReport, len(reps))
	for i, r := range reps {
		out[i] = jsonOf(r)
	}
	return enc.Encode(out)
}

// Num is a float64 that marshals a non-finite value as JSON null.
type Num float64

// MarshalJSON writes the shortest decimal that reads back exactly, or null.
func (n Num) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// The mirror types below follow analysis.Report's and analysis.StepResult's
// JSON tags field by field (a test checks that the key sets agree) and add
// only the null-for-non-finite rule.
type jsonEstimate struct {
	Value Num    `json:"value"`
	CI95  [2]Num `json:"ci95"`
}

type jsonStep struct {
	Direction      analysis.Direction `json:"direction"`
	CommandS       *Num               `json:"command_s"`
	ResponseStartS Num                `json:"response_start_s"`
	DeadTimeS      *jsonEstimate      `json:"dead_time_s"`
	TauS           jsonEstimate       `json:"tau_s"`
	T63S           *jsonEstimate      `json:"t63_s"`
	T95S           *jsonEstimate      `json:"t95_s"`
	Rise1090S      jsonEstimate       `json:"rise_10_90_s"`
	RPMBefore      jsonEstimate       `json:"rpm_before"`
	RPMAfter       jsonEstimate       `json:"rpm_after"`
	DeltaRPM       jsonEstimate       `json:"delta_rpm"`
	BandwidthHz    jsonEstimate       `json:"bandwidth_hz"`
	ResidualRMSRPM Num                `json:"residual_rms_rpm"`
	R2             Num                `json:"r2"`
	Warnings       []string           `json:"warnings"`
}

type jsonReport struct {
	File         string     `json:"file"`
	Blades       int        `json:"blades"`
	SampleRateHz Num        `json:"sample_rate_hz"`
	DurationS    Num        `json:"duration_s"`
	Steps        []jsonStep `json:"steps"`
	Warnings     []string   `json:"warnings"`
}

func est(e analysis.Estimate) jsonEstimate {
	return jsonEstimate{Value: Num(e.Value), CI95: [2]Num{Num(e.CI95[0]), Num(e.CI95[1])}}
}

func estPtr(e *analysis.Estimate) *jsonEstimate {
	if e == nil {
		return nil
	}
	j := est(*e)
	return &j
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

func jsonOf(r *analysis.Report) jsonReport {
	j := jsonReport{
		File: r.File, Blades: r.Blades, SampleRateHz: Num(r.SampleRateHz), DurationS: Num(r.DurationS),
		Steps: make([]jsonStep, len(r.Steps)), Warnings: nonNil(r.Warnings),
	}
	for i, s := range r.Steps {
		js := jsonStep{
			Direction: s.Direction, ResponseStartS: Num(s.ResponseStartS),
			DeadTimeS: estPtr(s.DeadTimeS), TauS: est(s.TauS), T63S: estPtr(s.T63S), T95S: estPtr(s.T95S),
			Rise1090S: est(s.Rise1090S), RPMBefore: est(s.RPMBefore), RPMAfter: est(s.RPMAfter),
			DeltaRPM: est(s.DeltaRPM), BandwidthHz: est(s.BandwidthHz),
			ResidualRMSRPM: Num(s.ResidualRMSRPM), R2: Num(s.R2), Warnings: nonNil(s.Warnings),
		}
		if s.CommandS != nil {
			c := Num(*s.CommandS)
			js.CommandS = &c
		}
		j.Steps[i] = js
	}
	return j
}
