package dsp

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/dsp/fourier"
)

// STFTConfig sets up a short-time Fourier transform. The zero value means
// defaults chosen from the sample rate (see Resolve).
type STFTConfig struct {
	// FrameLen is the window length in samples.
	FrameLen int
	// Hop is the step between frame starts in samples.
	Hop int
	// FFTLen is the transform length (FrameLen plus zero padding); a power
	// of two not below FrameLen.
	FFTLen int
	// Window is the analysis window (Hann by default).
	Window Window
	// Workers is the number of goroutines; 0 means GOMAXPROCS.
	Workers int
}

// Resolve fills zero fields with defaults for the sample rate fs: a frame of
// about 43 ms (2048 samples at 48 kHz, rounded to a power of two), a hop of
// an eighth of the frame and no zero padding.
func (c STFTConfig) Resolve(fs float64) STFTConfig {
	if c.FrameLen <= 0 {
		c.FrameLen = nextPow2(int(math.Round(fs * 0.0427)))
	}
	if c.Hop <= 0 {
		c.Hop = max(1, c.FrameLen/8)
	}
	if c.FFTLen < c.FrameLen {
		c.FFTLen = nextPow2(c.FrameLen)
	}
	if c.Workers <= 0 {
		c.Workers = runtime.GOMAXPROCS(0)
	}
	return c
}

// NumFrames returns how many whole frames fit in n samples.
func (c STFTConfig) NumFrames(n int) int {
	if n < c.FrameLen || c.Hop <= 0 {
		return 0
	}
	return 1 + (n-c.FrameLen)/c.Hop
}

// Bins returns the number of non-negative-frequency bins, FFTLen/2 + 1.
func (c STFTConfig) Bins() int { return c.FFTLen/2 + 1 }

func nextPow2(n int) int {
	p := 1
	for p < n {
		p <<= 1
	}
	return p
}

// FrameFunc receives one frame's spectrum. It is called concurrently from
// several goroutines; worker (0 ≤ worker < Workers) identifies the calling
// goroutine so that the callee can keep scratch space per worker. re and im
// hold Bins() values and are reused after the call returns.
type FrameFunc func(worker, frame int, re, im []float32)

// Process runs the STFT of x over every whole frame and hands each frame's
// spectrum to fn. Frame i covers samples [i·Hop, i·Hop+FrameLen); its time
// is the frame centre. Process checks ctx between frames and returns its
// error (wrapped) when cancelled; progress, if not nil, is called from a
// worker goroutine with the frames done so far.
func (c STFTConfig) Process(ctx context.Context, x []float32, fs float64, fn FrameFunc, progress func(done, total int)) error {
	c = c.Resolve(fs)
	if c.FFTLen&(c.FFTLen-1) != 0 {
		return fmt.Errorf("dsp: FFT length %d is not a power of two", c.FFTLen)
	}
	nf := c.NumFrames(len(x))
	if nf == 0 {
		return fmt.Errorf("dsp: signal of %d samples is shorter than one frame of %d", len(x), c.FrameLen)
	}
	win := c.Window.Values(c.FrameLen)
	var next atomic.Int64
	var done atomic.Int64
	var wg sync.WaitGroup
	errs := make([]error, c.Workers)
	const chunk = 16
	for w := 0; w < c.Workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			fft := fourier.NewFFT(c.FFTLen)
			buf := make([]float64, c.FFTLen)
			coef := make([]complex128, c.Bins())
			re := make([]float32, c.Bins())
			im := make([]float32, c.Bins())
			for {
				start := int(next.Add(chunk)) - chunk
				if start >= nf {
					return
				}
				if err := ctx.Err(); err != nil {
					errs[w] = fmt.Errorf("dsp: STFT cancelled: %w", err)
					return
				}
				for i := start; i < min(start+chunk, nf); i++ {
					off := i * c.Hop
					for j, v := range x[off : off+c.FrameLen] {
						buf[j] = float64(v) * win[j]
					}
					fft.Coefficients(coef, buf)
					for k, z := range coef {
						re[k] = float32(real(z))
						im[k] = float32(imag(z))
					}
					fn(w, i, re, im)
				}
				d := done.Add(int64(min(start+chunk, nf) - start))
				if progress != nil {
					progress(int(d), nf)
				}
			}
		}(w)
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// Spectrogram holds STFT magnitudes, frames × bins in one contiguous slice.
type Spectrogram struct {
	Frames, Bins int
	// Mag holds |X| row by row: frame i is Mag[i*Bins : (i+1)*Bins].
	Mag []float32
	// FrameLen, Hop and FFTLen are in samples; T0 is the time of the first
	// sample in seconds (non-zero for a reduced or cropped copy).
	FrameLen, Hop, FFTLen int
	SampleRate            float64
	T0                    float64
}

// Row returns frame i's magnitudes (no copy).
func (s *Spectrogram) Row(i int) []float32 { return s.Mag[i*s.Bins : (i+1)*s.Bins] }

// BinHz returns the frequency of (fractional) bin k.
func (s *Spectrogram) BinHz(k float64) float64 { return k * s.SampleRate / float64(s.FFTLen) }

// FrameTimeS returns the time of frame i's centre in seconds.
func (s *Spectrogram) FrameTimeS(i int) float64 {
	return s.T0 + (float64(i*s.Hop)+float64(s.FrameLen)/2)/s.SampleRate
}

// ComputeSpectrogram runs the STFT and keeps every frame's magnitudes.
func ComputeSpectrogram(ctx context.Context, x []float32, fs float64, cfg STFTConfig, progress func(done, total int)) (*Spectrogram, error) {
	cfg = cfg.Resolve(fs)
	nf := cfg.NumFrames(len(x))
	s := &Spectrogram{Frames: nf, Bins: cfg.Bins(), FrameLen: cfg.FrameLen, Hop: cfg.Hop, FFTLen: cfg.FFTLen, SampleRate: fs}
	s.Mag = make([]float32, nf*s.Bins)
	err := cfg.Process(ctx, x, fs, func(_, i int, re, im []float32) {
		row := s.Row(i)
		for k := range row {
			row[k] = float32(math.Sqrt(float64(re[k]*re[k] + im[k]*im[k])))
		}
	}, progress)
	if err != nil {
		return nil, err
	}
	return s, nil
}
