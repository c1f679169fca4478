package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

func TestModelCommand(t *testing.T) {
	dir := t.TempDir()
	p := renderRecording(t, dir, "m.wav", 0.030, 21)
	// Plateaus 9,000 → 15,000 → 9,000 rpm at throttle 0.3, 0.5, 0.3:
	// K = 30,000 rpm per unit throttle.
	code, stdout, stderr := runCmd("model", "-blades", "2", "-step-at", "1,2", "-quiet", "-format", "json",
		"-throttle", "0.3,0.5,0.3", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var m struct {
		Gain struct {
			K struct{ Value float64 } `json:"k"`
		} `json:"gain"`
		SensorTauS float64 `json:"sensor_tau_s"`
		Blocks     []struct {
			DelaySamples int                     `json:"delay_samples"`
			Equation     string                  `json:"difference_equation"`
			PhaseDeg     struct{ Value float64 } `json:"phase_deg"`
			TauS         struct{ Value float64 } `json:"tau_s"`
			DeadTimeS    struct{ Value float64 } `json:"dead_time_s"`
		} `json:"blocks"`
	}
	if err := json.Unmarshal([]byte(stdout), &m); err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	t.Logf("K = %.0f rpm/throttle; step 1: %s, phase at 20 Hz %.1f°", m.Gain.K.Value, m.Blocks[0].Equation, m.Blocks[0].PhaseDeg.Value)
	if math.Abs(m.Gain.K.Value-30000) > 600 || len(m.Blocks) != 2 {
		t.Errorf("K %g (want ≈ 30000), %d blocks", m.Gain.K.Value, len(m.Blocks))
	}
	b := m.Blocks[0]
	w := 2 * math.Pi * 20
	want := (-math.Atan(w*b.TauS.Value) - w*b.DeadTimeS.Value) * 180 / math.Pi
	if math.Abs(b.PhaseDeg.Value-want) > 1e-9 || b.DelaySamples != int(b.DeadTimeS.Value*1000) {
		t.Errorf("phase %g (want %g), delay %d samples for θ %g s", b.PhaseDeg.Value, want, b.DelaySamples, b.DeadTimeS.Value)
	}
	if math.Abs(m.SensorTauS-0.0159155) > 1e-6 {
		t.Errorf("sensor τ %g", m.SensorTauS)
	}
	code, stdout, _ = runCmd("model", "-blades", "2", "-step-at", "1,2", "-quiet", p)
	if code != 0 || !strings.Contains(stdout, "zero-order hold") || !strings.Contains(stdout, "K = 1 (normalised") {
		t.Errorf("text: exit %d\n%s", code, stdout)
	}
}
