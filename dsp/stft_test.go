package dsp

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

func noise32(n int, seed uint64) []float32 {
	rng := rand.New(rand.NewPCG(seed, 5))
	x := make([]float32, n)
	for i := range x {
		x[i] = float32(rng.NormFloat64() * 0.1)
	}
	return x
}

// Every frame's magnitudes match gonum dsp/fourier applied to the same
// windowed float64 frame, for unpadded and padded configurations and
// several windows; tolerance 1e-5 of the row's peak (float32 arithmetic).
func TestComputeSpectrogramMatchesGonum(t *testing.T) {
	const fs = 8000
	x := noise32(5000, 1)
	for _, cfg := range []STFTConfig{
		{FrameLen: 256, Hop: 64},
		{FrameLen: 256, Hop: 100, FFTLen: 1024, Window: Window{Kind: BlackmanHarris}},
		{FrameLen: 300, Hop: 77, Window: Window{Kind: Kaiser, Param: 6}, Workers: 3},
		{FrameLen: 64, Hop: 1, Workers: 1},
	} {
		s, err := ComputeSpectrogram(context.Background(), x, fs, cfg, nil)
		if err != nil {
			t.Fatal(err)
		}
		c := cfg.Resolve(fs)
		if s.Frames != c.NumFrames(len(x)) || s.Bins != c.FFTLen/2+1 {
			t.Fatalf("%+v: %d frames × %d bins, want %d × %d", cfg, s.Frames, s.Bins, c.NumFrames(len(x)), c.FFTLen/2+1)
		}
		w := c.Window.Values(c.FrameLen)
		fft := fourier.NewFFT(c.FFTLen)
		buf := make([]float64, c.FFTLen)
		var worst float64
		for i := 0; i < s.Frames; i += max(1, s.Frames/50) {
			for j := range c.FrameLen {
				buf[j] = float64(x[i*c.Hop+j]) * w[j]
			}
			want := fft.Coefficients(nil, buf) // gonum dsp/fourier
			var peak, e float64
			for k, z := range want {
				m := math.Hypot(real(z), imag(z))
				peak = math.Max(peak, m)
				e = math.Max(e, math.Abs(float64(s.Row(i)[k])-m))
			}
			worst = math.Max(worst, e/peak)
		}
		t.Logf("%+v: worst |mag − gonum| / row peak = %.2g", c, worst)
		if worst > 1e-5 {
			t.Errorf("%+v: worst relative error %.3g, want < 1e-5", c, worst)
		}
	}
}

// Frame times are frame centres: frame i covers [i·Hop, i·Hop+FrameLen).
func TestSpectrogramFrameTimes(t *testing.T) {
	s := &Spectrogram{FrameLen: 1024, Hop: 128, FFTLen: 1024, SampleRate: 48000}
	for _, tc := range []struct {
		i    int
		want float64
	}{{0, 512.0 / 48000}, {10, (1280.0 + 512) / 48000}} {
		if got := s.FrameTimeS(tc.i); math.Abs(got-tc.want) > 1e-15 {
			t.Errorf("FrameTimeS(%d) = %g, want %g", tc.i, got, tc.want)
		}
	}
	if got, want := s.BinHz(10.5), 10.5*48000/1024.0; got != want {
		t.Errorf("BinHz(10.5) = %g, want %g", got, want)
	}
}

func TestResolveDefaults(t *testing.T) {
	for _, tc := range []struct {
		fs             float64
		frame, hop, ff int
	}{
		{48000, 2048, 256, 2048},
		{44100, 2048, 256, 2048},
		{96000, 4096, 512, 4096},
		{8000, 256, 32, 256},
	} {
		c := STFTConfig{}.Resolve(tc.fs)
		t.Logf("fs %g Hz: frame %d (%.1f ms), hop %d (%.2f ms)", tc.fs, c.FrameLen, 1e3*float64(c.FrameLen)/tc.fs, c.Hop, 1e3*float64(c.Hop)/tc.fs)
		if c.FrameLen != tc.frame || c.Hop != tc.hop || c.FFTLen != tc.ff || c.Workers < 1 {
			t.Errorf("fs %g: got frame %d hop %d fft %d workers %d, want %d %d %d ≥1", tc.fs, c.FrameLen, c.Hop, c.FFTLen, c.Workers, tc.frame, tc.hop, tc.ff)
		}
	}
}

func TestProcessErrors(t *testing.T) {
	x := make([]float32, 1000)
	ctx := context.Background()
	nop := func(int, int, []float32, []float32) {}
	for _, tc := range []struct {
		name string
		cfg  STFTConfig
		x    []float32
	}{
		{"short signal", STFTConfig{FrameLen: 2048}, x},
		{"fft not power of two", STFTConfig{FrameLen: 256, FFTLen: 300}, x},
		{"bad window", STFTConfig{FrameLen: 256, Window: Window{Kind: 99}}, x},
		{"bad kaiser", STFTConfig{FrameLen: 256, Window: Window{Kind: Kaiser, Param: math.NaN()}}, x},
		{"tiny frame", STFTConfig{FrameLen: 2}, x},
		{"empty", STFTConfig{}, nil},
	} {
		if err := tc.cfg.Process(ctx, tc.x, 8000, nop, nil); err == nil {
			t.Errorf("%s: no error", tc.name)
		} else {
			t.Logf("%s: %v", tc.name, err)
		}
	}
}

// Cancelling the context stops Process early with an error that wraps
// context.Canceled.
func TestProcessCancel(t *testing.T) {
	x := noise32(200000, 2)
	ctx, cancel := context.WithCancel(context.Background())
	var seen atomic.Int64
	err := STFTConfig{FrameLen: 256, Hop: 8}.Process(ctx, x, 8000, func(int, int, []float32, []float32) {
		if seen.Add(1) == 100 {
			cancel()
		}
	}, nil)
	total := STFTConfig{FrameLen: 256, Hop: 8}.NumFrames(len(x))
	t.Logf("cancelled after %d of %d frames: %v", seen.Load(), total, err)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("got %v, want an error wrapping context.Canceled", err)
	}
	if int(seen.Load()) >= total {
		t.Errorf("all %d frames were processed despite cancellation", total)
	}
}

func TestProcessProgress(t *testing.T) {
	x := noise32(20000, 3)
	cfg := STFTConfig{FrameLen: 256, Hop: 32, Workers: 2}
	var last, calls atomic.Int64
	err := cfg.Process(context.Background(), x, 8000, func(int, int, []float32, []float32) {}, func(done, total int) {
		calls.Add(1)
		if done > int(last.Load()) {
			last.Store(int64(done))
		}
		if total != cfg.NumFrames(len(x)) {
			t.Errorf("progress total %d, want %d", total, cfg.NumFrames(len(x)))
		}
	})
	if err != nil {
		t.Fatal(err)
	}
	if int(last.Load()) != cfg.NumFrames(len(x)) || calls.Load() == 0 {
		t.Errorf("progress reached %d in %d calls, want %d", last.Load(), calls.Load(), cfg.NumFrames(len(x)))
	}
}

// Allocation does not grow with the number of frames: the per-call cost
// (worker buffers, FFT plans, window) is fixed.
func TestProcessAllocsPerFrame(t *testing.T) {
	cfg := STFTConfig{FrameLen: 1024, Hop: 128, Workers: 2}
	nop := func(int, int, []float32, []float32) {}
	allocs := func(n int) float64 {
		x := noise32(n, 4)
		return testing.AllocsPerRun(5, func() {
			if err := cfg.Process(context.Background(), x, 48000, nop, nil); err != nil {
				t.Fatal(err)
			}
		})
	}
	short, long := allocs(1024+128*200), allocs(1024+128*5000)
	t.Logf("allocations per Process call: %.0f for 201 frames, %.0f for 5001 frames", short, long)
	if long > short+2 {
		t.Errorf("allocations grow with frames: %.0f for 201 frames, %.0f for 5001", short, long)
	}
}

// Jacobsen's Hann estimator on Process's own float32 spectra (padded and
// unpadded) recovers a tone's frequency; this re-measures interp.go's
// figures through the real engine.
func TestProcessJacobsenTone(t *testing.T) {
	const fs = 48000.0
	for _, pad := range []int{1, 2, 4} {
		cfg := STFTConfig{FrameLen: 1024, Hop: 512, FFTLen: 1024 * pad}
		var worst float64
		for i := range 41 {
			f0 := (100 + float64(i-20)/40) * fs / 1024 // natural bin 100 ± 0.5
			x := make([]float32, 4096)
			for n := range x {
				x[n] = float32(0.5 * math.Cos(2*math.Pi*f0*float64(n)/fs+0.3*float64(i)))
			}
			ests := make([]float64, cfg.NumFrames(len(x)))
			err := cfg.Process(context.Background(), x, fs, func(_, fr int, re, im []float32) {
				mag := make([]float32, len(re))
				magnitude(mag, re, im)
				k := argmax(mag)
				ests[fr] = (float64(k) + InterpJacobsenHannPadded(re, im, k, pad)) * fs / float64(cfg.FFTLen)
			}, nil)
			if err != nil {
				t.Fatal(err)
			}
			for _, e := range ests {
				worst = math.Max(worst, math.Abs(e-f0)/(fs/1024))
			}
		}
		t.Logf("pad %d: worst Jacobsen-Hann error through Process %.2g natural bins", pad, worst)
		if worst > 5e-7 {
			t.Errorf("pad %d: worst error %.3g bins, want < 5e-7", pad, worst)
		}
	}
}

func TestSpectrogramDB(t *testing.T) {
	// A full-scale sine centred on a bin reads 0 dBFS (definition of
	// FullScaleMag); a zero magnitude reads MinDB.
	const fs, n = 48000.0, 1024
	x := make([]float32, 4*n)
	for i := range x {
		x[i] = float32(math.Sin(2 * math.Pi * 64 * float64(i) / n))
	}
	for _, w := range []Window{{Kind: Hann}, {Kind: BlackmanHarris}, {Kind: Kaiser, Param: 8}} {
		s, err := ComputeSpectrogram(context.Background(), x, fs, STFTConfig{FrameLen: n, Hop: n, Window: w}, nil)
		if err != nil {
			t.Fatal(err)
		}
		db := s.DB(nil)
		if got := db[64]; math.Abs(float64(got)) > 1e-4 {
			t.Errorf("%s: full-scale bin-centred sine reads %.5f dBFS, want 0", w, got)
		}
	}
	s := &Spectrogram{Frames: 1, Bins: 2, Mag: []float32{0, 256}, FrameLen: 1024}
	if db := s.DB(nil); db[0] != MinDB || math.Abs(float64(db[1])) > 1e-6 {
		t.Errorf("DB of {0, FullScale} = %v, want [%d 0]", db, MinDB)
	}
}
