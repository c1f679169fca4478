package analysis

// TEMPORARY scaffolding so the package builds while the step fit is
// written; the fit's author deletes this file.

import "whirlfit/dsp"

// StepConfig tunes step detection and fitting.
type StepConfig struct {
	CommandTimesS []float64
	Bootstrap     int
	Seed          uint64
}

// StepFit holds a fitted model.
type StepFit struct{}

// AnalyseSteps finds and fits steps.
func AnalyseSteps(tr *Track, cfg StepConfig) ([]StepResult, []string) { return nil, nil }

// TriggerEdges finds command edges.
func TriggerEdges(sig dsp.Signal) []float64 { return nil }
