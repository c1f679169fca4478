package analysis

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// renderScene renders sc and tracks it with cfg.
func renderAndTrack(t testing.TB, sc synth.Scene, cfg TrackConfig) *Track {
	t.Helper()
	x, err := synth.Render(sc)
	if err != nil {
		t.Fatal(err)
	}
	tr, _, err := TrackSignal(context.Background(), dsp.Signal{Samples: x, SampleRate: float64(sc.SampleRate)}, cfg, nil)
	if err != nil {
		t.Fatal(err)
	}
	return tr
}

// trackStats compares a track with the truth sampled at the track's times
// and convolved with the track's kernel (kernel = true) or not.
type trackStats struct {
	n, voiced, missed, false_ int
	rmsRel, medRel, maxRel    float64
	gross                     int // samples off by more than 5 %
}

func compareTrack(tr *Track, truth synth.Trajectory, kernel bool, fromS, toS float64) trackStats {
	var st trackStats
	var errs []float64
	for i, t := range tr.TimeS {
		if t < fromS || t > toS {
			continue
		}
		want := truth(t)
		if kernel {
			want = 0
			m := len(tr.Kernel)
			for j, w := range tr.Kernel {
				want += w * math.Max(0, truth(t+(float64(j)-float64(m-1)/2)*tr.KernelDtS))
			}
		}
		st.n++
		run := truth(t) > 0
		switch {
		case run && !tr.Valid(i):
			st.missed++
			continue
		case !run && tr.Valid(i):
			st.false_++
			continue
		case !run:
			continue
		}
		st.voiced++
		e := (tr.ShaftHz[i] - want) / want
		if math.Abs(e) > 0.05 {
			st.gross++
		}
		errs = append(errs, math.Abs(e))
		st.rmsRel += e * e
		st.maxRel = math.Max(st.maxRel, math.Abs(e))
	}
	if st.voiced > 0 {
		st.rmsRel = math.Sqrt(st.rmsRel / float64(st.voiced))
		slices.Sort(errs)
		st.medRel = errs[len(errs)/2]
	}
	return st
}

// meanShaft returns the mean of the valid track samples in [fromS, toS].
func meanShaft(tr *Track, fromS, toS float64) (float64, int) {
	var s float64
	n := 0
	for i, t := range tr.TimeS {
		if t >= fromS && t <= toS && tr.Valid(i) {
			s += tr.ShaftHz[i]
			n++
		}
	}
	return s / float64(n), n
}

func TestTrackExplore(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for c := 0; c < 20; c++ {
		cs := synth.RandomScene(rng, nil)
		tr := renderAndTrack(t, cs.Scene, TrackConfig{Blades: cs.Truth.Blades})
		st := compareTrack(tr, cs.Truth.Shaft, true, 0, cs.Scene.DurationS)
		t.Logf("%v", cs)
		t.Logf("  n=%d voiced=%d missed=%d false=%d gross=%d rms=%.4f med=%.5f max=%.3f kernel=%.1fms warn=%q",
			st.n, st.voiced, st.missed, st.false_, st.gross, st.rmsRel, st.medRel, st.maxRel,
			1e3*tr.KernelDtS*float64(len(tr.Kernel)-1), tr.Warnings)
	}
}

func TestTrackDebug(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	want := map[int]bool{0: true, 5: true}
	for c := 0; c < 20; c++ {
		cs := synth.RandomScene(rng, nil)
		if !want[c] {
			continue
		}
		tr := renderAndTrack(t, cs.Scene, TrackConfig{Blades: cs.Truth.Blades})
		t.Logf("%v", cs)
		for i := 0; i < tr.Len(); i += 25 {
			tt := tr.TimeS[i]
			t.Logf("%7.3f truth %7.2f track %7.2f sd %.3f conf %.2f", tt, cs.Truth.Shaft(tt), tr.ShaftHz[i], tr.SigmaHz[i], tr.Confidence[i])
		}
	}
}
