package analysis

import (
	"math"
	"testing"
)

// stepTrack returns a track of len(levels)·n samples, n at each level (Hz),
// with sample gap emptied.
func stepTrack(n int, levels []float64, gap int) *Track {
	tr := &Track{Blades: 2}
	for _, f := range levels {
		for range n {
			tr.ShaftHz = append(tr.ShaftHz, f)
		}
	}
	if gap >= 0 {
		tr.ShaftHz[gap] = math.NaN()
	}
	return tr
}

// The stretch vote's candidates: a stretch an octave, or the blade count,
// off both neighbours (a slip to another line of the comb and back), not
// one at an end, not a step to another speed, not a jump of 1.8 or 2.35
// (a fast change across a gap, another source), not two different factors.
func TestOctaveExcursion(t *testing.T) {
	for _, c := range []struct {
		name     string
		levels   []float64
		gap      int
		stretchN int
		j        int
		num, den int
		ok       bool
	}{
		{"slip down and back", []float64{400, 200, 402}, -1, 3, 1, 2, 1, true},
		{"slip up and back, across a gap", []float64{150, 301, 149}, 30, 3, 1, 1, 2, true},
		{"slip up at the end", []float64{150, 300}, -1, 2, 1, 0, 0, false},
		{"up an octave and up again", []float64{100, 200, 400}, -1, 3, 1, 0, 0, false},
		{"ratio 1.8 both ways", []float64{360, 200, 360}, -1, 3, 1, 0, 0, false},
		{"octave and a step", []float64{400, 200, 300}, -1, 2, 1, 0, 0, false},
		{"slip by 3 blades to the shaft line's comb and back", []float64{362, 120.7, 361}, -1, 3, 1, 3, 1, true},
		{"slip up by 5 and back", []float64{60, 300, 61}, -1, 3, 1, 1, 5, true},
		{"down by 3, up by 2", []float64{360, 120, 240}, -1, 3, 1, 0, 0, false},
		{"another source at 2.35 times the speed", []float64{186, 448, 190}, -1, 3, 1, 0, 0, false},
	} {
		tr := stepTrack(30, c.levels, c.gap)
		st := octaveStretches(tr)
		if len(st) != c.stretchN {
			t.Errorf("%s: %d stretches, want %d", c.name, len(st), c.stretchN)
			continue
		}
		num, den, ok := octaveExcursion(tr, st, c.j)
		if ok != c.ok || num != c.num || den != c.den {
			t.Errorf("%s: stretch %d gives %d/%d %v, want %d/%d %v", c.name, c.j, num, den, ok, c.num, c.den, c.ok)
		}
	}
	// A short excursion (fewer than stretchMinFrames samples) is left.
	tr := stepTrack(stretchMinFrames-1, []float64{400, 200, 400}, -1)
	if _, _, ok := octaveExcursion(tr, octaveStretches(tr), 1); ok {
		t.Errorf("an excursion of %d samples taken", stretchMinFrames-1)
	}
}
