package dsp

import (
	"encoding/json"
	"math"
	"path/filepath"
	"testing"
)

func TestLevels(t *testing.T) {
	const fs = 48000
	sine := make([]float32, fs) // 1 s of a 1 kHz full-scale sine: 1000 whole cycles
	for i := range sine {
		sine[i] = float32(math.Sin(2 * math.Pi * 1000 * float64(i) / fs))
	}
	tests := []struct {
		name      string
		a         *Audio
		peak, rms float64 // dBFS
		clipped   int
	}{
		// A full-scale sine: peak 0 dBFS, RMS 20·log10(1/√2) = −3.0103 dBFS
		// (textbook). 48 samples per cycle put one sample on each crest
		// and trough: 2 × 1000 samples at |x| = 1 count as clipped.
		{"full-scale sine, float", &Audio{Container: "WAV", Codec: "IEEE float", Bits: 32, Channels: [][]float32{sine}}, 0, -3.0103, 2000},
		{"silence", &Audio{Container: "WAV", Codec: "PCM", Bits: 16, Channels: [][]float32{make([]float32, 100)}}, SilenceDBFS, SilenceDBFS, 0},
		{"16-bit codes at ±full scale", &Audio{Container: "WAV", Codec: "PCM", Bits: 16,
			Channels: [][]float32{{-1, 32767.0 / 32768, 32766.0 / 32768, 0.5}}}, 0, 20 * math.Log10(math.Sqrt((1+math.Pow(32767.0/32768, 2)+math.Pow(32766.0/32768, 2)+0.25)/4)), 2},
		{"float over full scale", &Audio{Container: "WAV", Codec: "IEEE float", Bits: 32, Channels: [][]float32{{2, -0.999, 0.5, 0.5}}},
			20 * math.Log10(2), 10 * math.Log10((4+0.998001+0.25+0.25)/4), 1},
		{"MP3 counts as 16-bit", &Audio{Container: "MP3", Codec: "MP3", Channels: [][]float32{{32767.0 / 32768, 0.25}}},
			20 * math.Log10(32767.0/32768), 10 * math.Log10((math.Pow(32767.0/32768, 2)+0.0625)/2), 1},
		{"two channels pooled", &Audio{Container: "FLAC", Codec: "FLAC", Bits: 24, Channels: [][]float32{{0.5, 0.5}, {0, 0}}},
			20 * math.Log10(0.5), 10 * math.Log10(0.25/2), 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := Levels(tt.a)
			// float32 samples: levels agree to 1e-4 dB.
			if math.Abs(got.PeakDBFS-tt.peak) > 1e-4 || math.Abs(got.RMSDBFS-tt.rms) > 1e-4 || got.Clipped != tt.clipped {
				t.Errorf("got %+v, want peak %.4f rms %.4f clipped %d", got, tt.peak, tt.rms, tt.clipped)
			}
			if _, err := json.Marshal(got); err != nil {
				t.Errorf("JSON: %v", err)
			}
		})
	}
}

// TestLevelsSoxFiles: a sox sine at amplitude 0.5 reads −6.02 dBFS peak and
// −9.03 dBFS RMS (20·log10 0.5 and 20·log10 0.5/√2), within the
// quantization of each coding. sox-generated, see testdata/README.md.
func TestLevelsSoxFiles(t *testing.T) {
	peakWant, rmsWant := 20*math.Log10(0.5), 20*math.Log10(0.5/math.Sqrt2)
	for _, f := range []struct {
		file string
		tol  float64 // dB
	}{
		{"sine1k_s16.wav", 0.001}, // 1 LSB in 16384 ≈ 5e-4 dB
		{"sine1k_f32.wav", 1e-5},
		{"sine1k_s24.flac", 1e-5},
		{"sine1k_u8.wav", 0.15}, // 1 LSB in 64 ≈ 0.14 dB
	} {
		a, err := DecodeFile(filepath.Join(repoTestdata, f.file))
		if err != nil {
			t.Fatal(err)
		}
		l := Levels(a)
		if math.Abs(l.PeakDBFS-peakWant) > f.tol || math.Abs(l.RMSDBFS-rmsWant) > f.tol || l.Clipped != 0 {
			t.Errorf("%s: got %+v, want peak %.4f rms %.4f ±%g dB, none clipped", f.file, l, peakWant, rmsWant, f.tol)
		}
		t.Logf("%s: peak %.5f dBFS, RMS %.5f dBFS", f.file, l.PeakDBFS, l.RMSDBFS)
	}
}
