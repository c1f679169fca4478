package analysis

import (
	"whirlfit/dsp"
)

// Estimate is a value with its 95 % confidence interval.
type Estimate struct {
	Value float64    `json:"value"`
	CI95  [2]float64 `json:"ci95"`
}

// Direction of a throttle step.
type Direction string

const (
	Up   Direction = "up"
	Down Direction = "down"
)

// StepResult is everything reported for one throttle step. Times are in
// seconds from the start of the recording, speeds in rpm.
type StepResult struct {
	Direction Direction `json:"direction"`
	// CommandS is the command time; nil when it was neither given nor
	// found on a trigger channel (then there is no dead time to report).
	CommandS       *float64  `json:"command_s"`
	ResponseStartS float64   `json:"response_start_s"`
	DeadTimeS      *Estimate `json:"dead_time_s"`
	TauS           Estimate  `json:"tau_s"`
	T63S           *Estimate `json:"t63_s"`
	T95S           *Estimate `json:"t95_s"`
	Rise1090S      Estimate  `json:"rise_10_90_s"`
	RPMBefore      Estimate  `json:"rpm_before"`
	RPMAfter       Estimate  `json:"rpm_after"`
	DeltaRPM       Estimate  `json:"delta_rpm"`
	BandwidthHz    Estimate  `json:"bandwidth_hz"`
	ResidualRMSRPM float64   `json:"residual_rms_rpm"`
	R2             float64   `json:"r2"`
	Warnings       []string  `json:"warnings"`

	// Fit holds what is needed to redraw the model and its band.
	Fit *StepFit `json:"-"`
	// fine is the refit on the fine track that replaces this result once
	// detection is done with it (fineAlternative, useFine).
	fine *StepResult
}

// Report is the result of analysing one recording.
type Report struct {
	File         string           `json:"file"`
	Blades       int              `json:"blades"`
	SampleRateHz float64          `json:"sample_rate_hz"`
	DurationS    float64          `json:"duration_s"`
	Steps        []StepResult     `json:"steps"`
	Warnings     []string         `json:"warnings"`
	Track        *Track           `json:"-"`
	Spectrogram  *dsp.Spectrogram `json:"-"`
	Config       Config           `json:"-"`
}
