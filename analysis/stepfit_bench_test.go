package analysis

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkAnalyseSteps fits invented tracks of one to four steps, with and
// without the bootstrap cross-check.
func BenchmarkAnalyseSteps(b *testing.B) {
	spec := synthTrackSpec{hopS: 0.0025, windowS: 0.045, durS: 2.4, startHz: 300, noiseHz: 0.5,
		steps: []synthStep{{commandS: 0.5, deadS: 0.01, tauS: 0.025, toHz: 380},
			{commandS: 1.0, deadS: 0.01, tauS: 0.035, toHz: 320},
			{commandS: 1.5, deadS: 0.01, tauS: 0.02, toHz: 420},
			{commandS: 2.0, deadS: 0.01, tauS: 0.05, toHz: 260}}}
	tr := spec.track(rand.New(rand.NewPCG(1, 2)))
	cmds := []float64{0.5, 1.0, 1.5, 2.0}
	for _, c := range []struct {
		name string
		cfg  StepConfig
	}{
		{"detect", StepConfig{Bootstrap: -1}},
		{"commands", StepConfig{CommandTimesS: cmds, Bootstrap: -1}},
		{"commands+bootstrap100", StepConfig{CommandTimesS: cmds}},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				AnalyseSteps(tr, c.cfg)
			}
		})
	}
}
