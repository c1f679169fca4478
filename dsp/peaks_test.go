package dsp

import (
	"fmt"
	"math"
	"slices"
	"testing"
)

func TestFindPeaks(t *testing.T) {
	row := []float32{9, 1, 5, 2, 7, 7, 3, 8, 0, 4, 6, 1}
	// Local maxima (bins 1..10): 2 (5), 4 (7, flat top), 7 (8), 10 (6).
	for _, tc := range []struct {
		name     string
		k, lo, h int
		want     []int
	}{
		{"all", 10, 0, 100, []int{7, 4, 10, 2}},
		{"top 2", 2, 0, 100, []int{7, 4}},
		{"range", 10, 3, 9, []int{7, 4}},
		{"none", 3, 5, 6, nil},
		{"k 0", 0, 0, 100, nil},
		{"edges never", 4, -5, 50, []int{7, 4, 10, 2}},
	} {
		got := FindPeaks(nil, row, tc.k, tc.lo, tc.h)
		var bins []int
		for _, p := range got {
			bins = append(bins, p.Bin)
			if p.Mag != row[p.Bin] {
				t.Errorf("%s: peak at %d has Mag %g, want %g", tc.name, p.Bin, p.Mag, row[p.Bin])
			}
		}
		if !slices.Equal(bins, tc.want) {
			t.Errorf("%s: got bins %v, want %v", tc.name, bins, tc.want)
		}
	}
}

// Against a brute-force reference on seeded noise rows.
func TestFindPeaksRandom(t *testing.T) {
	for seed := range uint64(20) {
		row := noise32(700, seed)
		for i := range row {
			row[i] = row[i] * row[i]
		}
		var all []Peak
		for i := 1; i < len(row)-1; i++ {
			if row[i] > row[i-1] && row[i] >= row[i+1] {
				all = append(all, Peak{Bin: i, Mag: row[i]})
			}
		}
		slices.SortStableFunc(all, func(a, b Peak) int {
			if a.Mag > b.Mag {
				return -1
			}
			if a.Mag < b.Mag {
				return 1
			}
			return a.Bin - b.Bin
		})
		got := FindPeaks(make([]Peak, 0, 8), row, 8, 0, len(row))
		if !slices.Equal(got, all[:8]) {
			t.Fatalf("seed %d: got %v, want %v", seed, got, all[:8])
		}
	}
}

func TestFindPeaksNoAlloc(t *testing.T) {
	row := noise32(513, 1)
	dst := make([]Peak, 0, 8)
	if a := testing.AllocsPerRun(100, func() { dst = FindPeaks(dst, row, 8, 1, 512) }); a != 0 {
		t.Errorf("FindPeaks with a reused buffer allocates %g times per call, want 0", a)
	}
}

// BenchmarkFindPeaks is a top-8 scan over one STFT row (513 or 2049 bins of
// a noisy spectrum), the per-frame cost a tracker adds to the FFT.
func BenchmarkFindPeaks(b *testing.B) {
	for _, bins := range []int{513, 2049} {
		b.Run(fmt.Sprint(bins), func(b *testing.B) {
			row := noise32(bins, 2)
			for i := range row {
				row[i] *= row[i]
			}
			dst := make([]Peak, 0, 8)
			b.ReportAllocs()
			for b.Loop() {
				dst = FindPeaks(dst, row, 8, 1, bins-2)
			}
		})
	}
}

// Non-finite values never become peaks or interpolated offsets (never
// panic on data).
func TestPeaksAndInterpNaN(t *testing.T) {
	nan := float32(math.NaN())
	row := []float32{0, 1, nan, 1, 0, 2, 0}
	got := FindPeaks(nil, row, 4, 0, len(row))
	if len(got) != 1 || got[0].Bin != 5 {
		t.Errorf("FindPeaks with a NaN: got %v, want only bin 5", got)
	}
	for name, d := range map[string]float64{
		"jacobsen": InterpJacobsenHann([]float32{1, nan, 1}, []float32{0, 0, 0}, 1),
		"quadlog":  InterpQuadLog([]float32{1, nan, 1}, 1),
		"power":    InterpPowerQuad([]float32{nan, 2, 1}, 1, PowerQuadHann),
	} {
		if d != 0 {
			t.Errorf("%s with a NaN bin: got %g, want 0", name, d)
		}
	}
}
