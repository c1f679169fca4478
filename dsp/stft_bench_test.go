package dsp

import (
	"context"
	"fmt"
	"math"
	"testing"
)

// benchSignal is 60 s of 48 kHz mono: a 400 Hz tone with harmonics plus
// seeded noise (invented data; the content does not affect FFT speed).
func benchSignal() []float32 {
	const fs, seconds = 48000, 60
	x := noise32(fs*seconds, 9)
	for i := range x {
		t := float64(i) / fs
		x[i] += float32(0.3*math.Sin(2*math.Pi*400*t) + 0.2*math.Sin(2*math.Pi*800*t))
	}
	return x
}

var benchConfigs = []STFTConfig{
	{FrameLen: 1024, Hop: 128},
	{FrameLen: 4096, Hop: 512},
}

// BenchmarkSTFT60s computes the magnitude spectrogram of 60 s of 48 kHz
// mono (the work bench/run.sh times with scipy and FFTW). Measured figures
// are in BENCHMARKS.md.
func BenchmarkSTFT60s(b *testing.B) {
	x := benchSignal()
	for _, cfg := range benchConfigs {
		for _, workers := range []int{1, 2} {
			cfg := cfg
			cfg.Workers = workers
			b.Run(fmt.Sprintf("%d-hop%d-workers%d", cfg.FrameLen, cfg.Hop, workers), func(b *testing.B) {
				b.ReportAllocs()
				frames := cfg.NumFrames(len(x))
				cpu0 := processCPUSeconds()
				for b.Loop() {
					if _, err := ComputeSpectrogram(context.Background(), x, 48000, cfg, nil); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(frames), "ns/frame")
				b.ReportMetric(60/(b.Elapsed().Seconds()/float64(b.N)), "x-realtime")
				b.ReportMetric((processCPUSeconds()-cpu0)/float64(b.N)*1e3, "cpu-ms/op")
			})
		}
	}
}

// BenchmarkProcess60s is the engine alone (spectra handed to a no-op
// FrameFunc): it shows the per-frame cost and that nothing is allocated
// per frame (allocs/op is the fixed per-call set-up).
func BenchmarkProcess60s(b *testing.B) {
	x := benchSignal()
	for _, cfg := range benchConfigs {
		b.Run(fmt.Sprintf("%d-hop%d", cfg.FrameLen, cfg.Hop), func(b *testing.B) {
			b.ReportAllocs()
			nop := func(int, int, []float32, []float32) {}
			for b.Loop() {
				if err := cfg.Process(context.Background(), x, 48000, nop, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
