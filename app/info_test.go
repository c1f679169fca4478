package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// sox-generated, see testdata/README.md: amplitude 0.5 sines, so peak
// 20·log10(0.5) = −6.02 dBFS and RMS 20·log10(0.5/√2) = −9.03 dBFS.
var infoFiles = []struct {
	file     string
	format   string
	rate     int
	channels int
	bits     int
	duration float64 // s
}{
	{"sine1k_u8.wav", "WAV PCM", 48000, 1, 8, 0.1},
	{"sine1k_s16.wav", "WAV PCM", 48000, 1, 16, 0.1},
	{"sine1k_s24.wav", "WAV PCM (extensible)", 48000, 1, 24, 0.1},
	{"sine1k_s32.wav", "WAV PCM (extensible)", 48000, 1, 32, 0.1},
	{"sine1k_f32.wav", "WAV IEEE float", 48000, 1, 32, 0.1},
	{"sine1k_f64.wav", "WAV IEEE float", 48000, 1, 64, 0.1},
	{"sine1k_s16_8k.wav", "WAV PCM", 8000, 1, 16, 0.1},
	{"sine1k_s16_192k.wav", "WAV PCM", 192000, 1, 16, 0.05},
	{"sine1k_s16_list.wav", "WAV PCM", 48000, 1, 16, 0.1},
	{"sine_stereo_s16.wav", "WAV PCM", 44100, 2, 16, 0.1},
	{"sine_4ch_s16.wav", "WAV PCM (extensible)", 48000, 4, 16, 0.1},
	{"sine_4ch_f32.wav", "WAV IEEE float", 16000, 4, 32, 0.1},
	{"sine_4ch_f32_ext.wav", "WAV IEEE float (extensible)", 16000, 4, 32, 0.1},
	{"sine1k_s16.flac", "FLAC", 48000, 1, 16, 0.1},
	{"sine1k_s24.flac", "FLAC", 48000, 1, 24, 0.1},
}

func testdataPath(name string) string { return filepath.Join("..", "testdata", name) }

func TestInfoJSON(t *testing.T) {
	args := []string{"--format", "json"}
	for _, f := range infoFiles {
		args = append(args, testdataPath(f.file))
	}
	var out, errb bytes.Buffer
	if code := runInfo(context.Background(), args, &out, &errb); code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errb.String())
	}
	sc := bufio.NewScanner(&out)
	i := 0
	for ; sc.Scan(); i++ {
		var r map[string]any
		if err := json.Unmarshal(sc.Bytes(), &r); err != nil {
			t.Fatalf("line %d: %v: %s", i, err, sc.Text())
		}
		if len(r) != 9 {
			t.Errorf("line %d: got %d fields, want 9: %s", i, len(r), sc.Text())
		}
		w := infoFiles[i]
		num := func(k string) float64 { v, _ := r[k].(float64); return v }
		if r["file"] != testdataPath(w.file) || r["format"] != w.format || int(num("sample_rate_hz")) != w.rate ||
			int(num("channels")) != w.channels || int(num("bits")) != w.bits || math.Abs(num("duration_s")-w.duration) > 1e-9 {
			t.Errorf("got %s, want %+v", sc.Text(), w)
		}
		// u8 quantization (1 step in 64) moves the RMS by 0.02 dB.
		if math.Abs(num("peak_dbfs")+6.0206) > 0.001 || math.Abs(num("rms_dbfs")+9.0309) > 0.03 || num("clipped") != 0 {
			t.Errorf("%s: got peak %v rms %v clipped %v, want -6.02, -9.03, 0", w.file, r["peak_dbfs"], r["rms_dbfs"], r["clipped"])
		}
	}
	if i != len(infoFiles) {
		t.Errorf("got %d lines, want %d", i, len(infoFiles))
	}
}

func TestInfoTextAndErrors(t *testing.T) {
	dir := t.TempDir()
	text := filepath.Join(dir, "notes.wav")
	if err := os.WriteFile(text, []byte("this is a text file\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	silent := filepath.Join(dir, "silent.wav")
	// 16-bit mono 48 kHz header + 4 zero samples.
	hdr := []byte("RIFF\x2c\x00\x00\x00WAVEfmt \x10\x00\x00\x00\x01\x00\x01\x00\x80\xbb\x00\x00\x00\x77\x01\x00\x02\x00\x10\x00data\x08\x00\x00\x00")
	if err := os.WriteFile(silent, append(hdr, make([]byte, 8)...), 0o644); err != nil {
		t.Fatal(err)
	}
	args := []string{testdataPath("sine1k_s16.wav"), text, dir, testdataPath("sine1k.mp3"), silent, filepath.Join(dir, "missing.wav")}
	var out, errb bytes.Buffer
	code := runInfo(context.Background(), args, &out, &errb)
	if code != 1 {
		t.Errorf("exit %d, want 1", code)
	}
	errLines := strings.Split(strings.TrimSpace(errb.String()), "\n")
	if len(errLines) != 3 {
		t.Fatalf("got stderr %q, want 3 lines", errb.String())
	}
	for i, want := range []string{text + ": a text file", dir + ": is a directory", "missing.wav: no such file"} {
		if !strings.HasPrefix(errLines[i], "whirlfit: ") || !strings.Contains(errLines[i], want) {
			t.Errorf("stderr line %d: got %q, want it to contain %q", i, errLines[i], want)
		}
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	if len(lines) != 4 {
		t.Fatalf("got %d lines, want header + 3:\n%s", len(lines), out.String())
	}
	t.Logf("\n%s%s", out.String(), errb.String())
	if !strings.HasPrefix(lines[0], "file") || !strings.Contains(lines[1], "WAV PCM") || !strings.Contains(lines[1], "-6.02") ||
		!strings.Contains(lines[2], "MP3") || !strings.Contains(lines[3], "-inf") {
		t.Errorf("unexpected table:\n%s", out.String())
	}
	// Columns are aligned: every row has "format" text starting at the
	// same position.
	col := strings.Index(lines[0], "format")
	for _, l := range lines[1:] {
		if len(l) <= col || l[col-1] != ' ' || l[col] == ' ' {
			t.Errorf("row not aligned at column %d: %q", col, l)
		}
	}
}

func TestInfoUsage(t *testing.T) {
	tests := []struct {
		name string
		args []string
		code int
	}{
		{"no files", nil, 2},
		{"bad format", []string{"-format", "xml", testdataPath("sine1k_s16.wav")}, 2},
		{"unknown flag", []string{"-x", testdataPath("sine1k_s16.wav")}, 2},
		{"help", []string{"-help"}, 0},
		{"flag after file", []string{testdataPath("sine1k_s16.wav"), "-format", "json"}, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			if code := runInfo(context.Background(), tt.args, &out, &errb); code != tt.code {
				t.Errorf("exit %d, want %d (stderr %q)", code, tt.code, errb.String())
			}
			if tt.name == "help" && !strings.Contains(errb.String(), "-format") {
				t.Errorf("help does not list -format: %q", errb.String())
			}
			if tt.name == "flag after file" && !strings.HasPrefix(out.String(), "{") {
				t.Errorf("got %q, want JSON", out.String())
			}
		})
	}
}
