package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"whirlfit/dsp/synth"
)

// writeLinesWAV writes a 16-bit WAV of sines at the given frequencies
// (equal amplitudes) with a little noise, for command-line tests.
func writeLinesWAV(t *testing.T, fs int, durS float64, hz ...float64) string {
	amps := make([]float64, len(hz))
	for i := range amps {
		amps[i] = 0.2
	}
	return writeLinesAmpWAV(t, fs, durS, hz, amps)
}

func writeLinesAmpWAV(t *testing.T, fs int, durS float64, hz, amps []float64) string {
	t.Helper()
	n := int(durS * float64(fs))
	x := make([]float32, n)
	for i := range x {
		var v float64
		for j, f := range hz {
			v += amps[j] * math.Sin(2*math.Pi*f*float64(i)/float64(fs)+float64(j))
		}
		// Deterministic dither-like noise, about −50 dBFS.
		v += 0.003 * math.Sin(float64(i)*float64(i)*1e-3)
		x[i] = float32(v)
	}
	b, err := synth.EncodeWAV([][]float32{x}, fs, 16)
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "lines.wav")
	if err := os.WriteFile(p, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// Common practice: a motor's no-load speed ≈ kV × supply voltage; a
// 5000 kV motor on 7.8 V turns at 39,000 rpm = 650 rev/s, so a two-blade
// propeller's blade-pass line lies at 1,300 Hz.
func TestTrackCommandKV(t *testing.T) {
	for _, c := range []struct {
		blades int
		lines  []float64
	}{
		{2, []float64{650, 1300}},
		{3, []float64{650, 1950}},
	} {
		wav := writeLinesWAV(t, 48000, 1.5, c.lines...)
		var out, errb bytes.Buffer
		code := run(context.Background(), []string{"track", "--blades", strconv.Itoa(c.blades), wav}, &out, &errb)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errb.String())
		}
		recs, err := csv.NewReader(&out).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		if got := strings.Join(recs[0], ","); got != "time_s,rpm,shaft_hz,blade_pass_hz,confidence" {
			t.Fatalf("header %q", got)
		}
		var sum float64
		n := 0
		for _, r := range recs[1:] {
			if r[1] == "" {
				continue
			}
			v, _ := strconv.ParseFloat(r[1], 64)
			sum += v
			n++
		}
		mean := sum / float64(n)
		rel := (mean - 39000) / 39000
		t.Logf("blades %d, lines %v Hz: %d of %d frames, mean %.1f rpm (%.4f %%)", c.blades, c.lines, n, len(recs)-1, mean, 100*rel)
		if math.Abs(rel) > 0.002 || n < (len(recs)-1)*9/10 {
			t.Errorf("blades %d: got %.1f rpm over %d frames, want 39000 ± 0.2 %%", c.blades, mean, n)
		}
	}
}

func TestTrackCommandOut(t *testing.T) {
	wav := writeLinesWAV(t, 16000, 1, 300, 600, 900)
	dst := filepath.Join(t.TempDir(), "track.csv")
	var out, errb bytes.Buffer
	if code := run(context.Background(), []string{"track", "-blades", "2", "-out", dst, wav}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if out.Len() != 0 {
		t.Errorf("stdout not empty with --out: %q", out.String())
	}
	b, err := os.ReadFile(dst)
	if err != nil || !bytes.HasPrefix(b, []byte("time_s,rpm,")) {
		t.Fatalf("output file: %v %q", err, b[:min(len(b), 40)])
	}
	// A second run without --force leaves the file alone and fails.
	if code := run(context.Background(), []string{"track", "-blades", "2", "-out", dst, wav}, &out, &errb); code != 1 {
		t.Errorf("overwrite without --force: exit %d, want 1", code)
	}
}

func TestTrackCommandUsage(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		code int
	}{
		{"no file", []string{"track"}, 2},
		{"bad channel", []string{"track", "--channel", "0", "x.wav"}, 2},
		{"negative blades", []string{"track", "--blades", "-1", "x.wav"}, 2},
		{"missing file", []string{"track", "/nonexistent/x.wav"}, 1},
		{"help", []string{"track", "-help"}, 0},
		{"spectrum no file", []string{"spectrum"}, 2},
		{"spectrum bad interval", []string{"spectrum", "--from", "2", "--to", "1", "x.wav"}, 2},
	} {
		t.Run(c.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			if got := run(context.Background(), c.args, &out, &errb); got != c.code {
				t.Errorf("exit %d, want %d (%s)", got, c.code, errb.String())
			}
			if c.code != 0 && !strings.HasPrefix(errb.String(), "whirlfit: ") && !strings.Contains(errb.String(), "usage") && !strings.Contains(errb.String(), "invalid") {
				t.Errorf("message %q lacks the prefix", errb.String())
			}
		})
	}
}

func TestSpectrumCommand(t *testing.T) {
	// Shaft 200 Hz, 3 blades: a weak shaft line at 200 Hz, blade-pass lines
	// at 600, 1200 and 1800 Hz falling off as 1/k.
	wav := writeLinesAmpWAV(t, 48000, 2, []float64{200, 600, 1200, 1800}, []float64{0.05, 0.2, 0.1, 0.067})
	var out, errb bytes.Buffer
	if code := run(context.Background(), []string{"spectrum", "--from", "0.5", "--to", "1.5", "--blades", "3", wav}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	s := out.String()
	t.Logf("\n%s", s)
	for _, want := range []string{"shaft 200.0", "h=1", "h=3 (blade-pass)", "h=6 (blade-pass)"} {
		if !strings.Contains(s, want) {
			t.Errorf("output lacks %q", want)
		}
	}
}
