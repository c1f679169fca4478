package dsp

import (
	"context"
	"math"
	"testing"
)

// The reduced copy max-pools groups of frames; its frame times are the
// groups' mean centre times.
func TestReduce(t *testing.T) {
	x := noise32(48000, 7)
	cfg := STFTConfig{FrameLen: 512, Hop: 64}
	s, err := ComputeSpectrogram(context.Background(), x, 48000, cfg, nil)
	if err != nil {
		t.Fatal(err)
	}
	if s.Reduce(s.Frames) != s {
		t.Error("Reduce(Frames) made a copy, want s itself")
	}
	const maxFrames = 100
	r := s.Reduce(maxFrames)
	g := (s.Frames + maxFrames - 1) / maxFrames
	t.Logf("%d frames reduced to %d (groups of %d)", s.Frames, r.Frames, g)
	if r.Frames > maxFrames || r.Frames != (s.Frames+g-1)/g || r.Hop != g*s.Hop {
		t.Fatalf("reduced to %d frames, hop %d; want ≤ %d frames, hop %d", r.Frames, r.Hop, maxFrames, g*s.Hop)
	}
	for i := 0; i < r.Frames; i++ {
		if i < r.Frames-1 {
			var mean float64
			for j := i * g; j < (i+1)*g; j++ {
				mean += s.FrameTimeS(j) / float64(g)
			}
			if math.Abs(r.FrameTimeS(i)-mean) > 1e-12 {
				t.Fatalf("reduced frame %d at %.9f s, want mean centre %.9f s", i, r.FrameTimeS(i), mean)
			}
		}
		for k := 0; k < s.Bins; k += 37 {
			var want float32
			for j := i * g; j < min((i+1)*g, s.Frames); j++ {
				want = max(want, s.Row(j)[k])
			}
			if r.Row(i)[k] != want {
				t.Fatalf("reduced frame %d bin %d = %g, want %g", i, k, r.Row(i)[k], want)
			}
		}
	}
}

// Streaming reduction gives exactly what reducing the full spectrogram
// gives, for several worker counts.
func TestReducerMatchesReduce(t *testing.T) {
	x := noise32(60000, 8)
	for _, workers := range []int{1, 2, 3} {
		cfg := STFTConfig{FrameLen: 256, Hop: 16, Workers: workers}
		full, err := ComputeSpectrogram(context.Background(), x, 8000, cfg, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, maxFrames := range []int{1, 97, 1000, 1 << 20} {
			r, err := NewReducer(cfg, 8000, len(x), maxFrames)
			if err != nil {
				t.Fatal(err)
			}
			if err := cfg.Process(context.Background(), x, 8000, r.Frame, nil); err != nil {
				t.Fatal(err)
			}
			got, want := r.Spectrogram(), full.Reduce(maxFrames)
			if got.Frames != want.Frames || got.Hop != want.Hop || got.T0 != want.T0 {
				t.Fatalf("workers %d max %d: %d frames hop %d T0 %g, want %d, %d, %g", workers, maxFrames, got.Frames, got.Hop, got.T0, want.Frames, want.Hop, want.T0)
			}
			for i := range got.Mag {
				if got.Mag[i] != want.Mag[i] {
					t.Fatalf("workers %d max %d: Mag[%d] = %g, want %g", workers, maxFrames, i, got.Mag[i], want.Mag[i])
				}
			}
		}
	}
	if _, err := NewReducer(STFTConfig{FrameLen: 256}, 8000, 100, 10); err == nil {
		t.Error("NewReducer on a signal shorter than a frame: no error")
	}
}

// A 10-minute 48 kHz recording reduced to 2000 frames keeps memory
// bounded: the reduced copy holds 2000·Bins values whatever the length.
func BenchmarkReducer10min(b *testing.B) {
	const fs = 48000
	x := noise32(10*60*fs, 10)
	cfg := STFTConfig{FrameLen: 2048, Hop: 256}
	b.ReportAllocs()
	for b.Loop() {
		r, err := NewReducer(cfg, fs, len(x), 2000)
		if err != nil {
			b.Fatal(err)
		}
		if err := cfg.Process(context.Background(), x, fs, r.Frame, nil); err != nil {
			b.Fatal(err)
		}
		r.Spectrogram()
	}
}
