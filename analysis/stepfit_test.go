package analysis

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// coverageTrial draws one synthetic single-step track (invented data, see
// stepfit_synth_test.go) across the ranges issue 4 asks for: τ 8–120 ms
// (log-uniform), dead time 0–25 ms, window 20–80 ms, hop 2–6 ms, track
// noise for SNR 0–30 dB.
func coverageTrial(rng *rand.Rand) (synthTrackSpec, synthStep) {
	tau := 0.008 * math.Pow(120.0/8, rng.Float64())
	from := 150 + 300*rng.Float64()
	delta := (0.1 + 0.4*rng.Float64()) * from
	if rng.IntN(2) == 0 {
		delta = -delta * 0.7
	}
	st := synthStep{commandS: 0.35 + 0.05*rng.Float64(), deadS: 0.025 * rng.Float64(), tauS: tau, toHz: from + delta}
	snr := 30 * rng.Float64()
	spec := synthTrackSpec{
		hopS:    float64(2+rng.IntN(5)) * 1e-3,
		windowS: 0.02 + 0.06*rng.Float64(),
		startHz: from,
		steps:   []synthStep{st},
		noiseHz: 3 * math.Pow(10, -snr/20),
	}
	spec.durS = st.commandS + st.deadS + math.Max(0.5, 10*tau) + spec.windowS
	return spec, st
}

type trialStats struct {
	n, tauIn, thetaIn int
	tauErr, thetaErr  []float64
}

func (s *trialStats) add(r StepResult, st synthStep) {
	s.n++
	if r.TauS.CI95[0] <= st.tauS && st.tauS <= r.TauS.CI95[1] {
		s.tauIn++
	}
	s.tauErr = append(s.tauErr, math.Abs(r.TauS.Value/st.tauS-1))
	if r.DeadTimeS != nil {
		if r.DeadTimeS.CI95[0] <= st.deadS && st.deadS <= r.DeadTimeS.CI95[1] {
			s.thetaIn++
		}
		s.thetaErr = append(s.thetaErr, math.Abs(r.DeadTimeS.Value-st.deadS))
	}
}

func pct(x []float64, q float64) float64 {
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	return quantileSorted(s, q)
}

func TestStepFitCoverage(t *testing.T) {
	// Self-consistency on invented data; issue 4 acceptance: the true τ
	// inside its 95 % interval in 90–98 % of ≥ 200 trials.
	trials := 240
	rng := rand.New(rand.NewPCG(4, 2026))
	var all, boot trialStats
	for i := 0; i < trials; i++ {
		spec, st := coverageTrial(rng)
		tr := spec.track(rng)
		cfg := StepConfig{CommandTimesS: []float64{st.commandS}, Bootstrap: -1}
		if i%6 == 0 {
			cfg.Bootstrap = 100
			cfg.Seed = uint64(i)
		}
		res, warns := AnalyseSteps(tr, cfg)
		if len(res) != 1 {
			t.Fatalf("trial %d: %d steps (warnings %v)", i, len(res), warns)
		}
		all.add(res[0], st)
		if cfg.Bootstrap > 0 {
			boot.add(res[0], st)
		}
	}
	covTau := float64(all.tauIn) / float64(all.n)
	covTheta := float64(all.thetaIn) / float64(all.n)
	t.Logf("%d trials: τ coverage %.1f %%, θ coverage %.1f %%", all.n, 100*covTau, 100*covTheta)
	t.Logf("|τ error|: median %.2f %%, 95th pct %.2f %%; |θ error|: median %.2f ms, 95th pct %.2f ms",
		100*pct(all.tauErr, 0.5), 100*pct(all.tauErr, 0.95), 1e3*pct(all.thetaErr, 0.5), 1e3*pct(all.thetaErr, 0.95))
	t.Logf("with bootstrap cross-check (%d trials): τ coverage %.1f %%, θ coverage %.1f %%", boot.n,
		100*float64(boot.tauIn)/float64(boot.n), 100*float64(boot.thetaIn)/float64(boot.n))
	if covTau < 0.90 || covTau > 0.98 {
		t.Errorf("τ coverage %.3f, want 0.90–0.98", covTau)
	}
	if covTheta < 0.90 || covTheta > 0.99 {
		t.Errorf("θ coverage %.3f, want 0.90–0.99", covTheta)
	}
}
