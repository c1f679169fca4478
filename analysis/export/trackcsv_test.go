package export

import (
	"bytes"
	"errors"
	"math"
	"testing"

	"whirlfit/analysis"
)

func TestWriteTrackCSV(t *testing.T) {
	tr := &analysis.Track{
		Blades:     2,
		TimeS:      []float64{0.01, 0.02, 0.03},
		ShaftHz:    []float64{650, math.NaN(), 325.5},
		SigmaHz:    []float64{0.1, math.NaN(), 0.2},
		Confidence: []float64{0.9, 0, 0.5},
	}
	var b bytes.Buffer
	if err := WriteTrackCSV(&b, tr); err != nil {
		t.Fatal(err)
	}
	// 650 Hz × 60 = 39,000 rpm; blade-pass 2 × 650 = 1,300 Hz.
	want := "time_s,rpm,shaft_hz,blade_pass_hz,confidence\n" +
		"0.01000,39000.00,650.0000,1300.0000,0.900\n" +
		"0.02000,,,,\n" +
		"0.03000,19530.00,325.5000,651.0000,0.500\n"
	if got := b.String(); got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

func TestWriteTrackCSVError(t *testing.T) {
	tr := &analysis.Track{Blades: 2, TimeS: []float64{0}, ShaftHz: []float64{1}, SigmaHz: []float64{0}, Confidence: []float64{1}}
	if err := WriteTrackCSV(failWriter{}, tr); err == nil {
		t.Error("write error not reported")
	}
	if err := WriteTrackCSV(&bytes.Buffer{}, nil); err == nil {
		t.Error("nil track accepted")
	}
}
