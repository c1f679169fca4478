package dsp

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"
)

// Default STFT settings, in seconds so that they mean the same at every
// sample rate (Resolve rounds them to samples).
const (
	// DefaultFrameS is the nominal frame length: 43 ms, 2048 samples at
	// 48 kHz and 44.1 kHz, giving bins of 23 Hz (48 kHz) — fine enough to
	// separate the shaft line of a motor above about 80 Hz from its
	// neighbours, short enough to follow throttle steps of tens of ms.
	DefaultFrameS = 0.0427
	// DefaultHopFraction is the hop as a fraction of the frame: 1/8, 5.3 ms
	// at the default frame and 48 kHz. A Hann window needs a hop of at most
	// half the frame for every sample to count; 1/8 samples the time axis
	// finely enough for the step fit (common practice).
	DefaultHopFraction = 0.125
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

// Resolve fills zero fields with defaults for the sample rate fs: a frame
// of DefaultFrameS seconds rounded to the nearest power of two in samples
// (2048 at 44.1 and 48 kHz, 4096 at 96 kHz), a hop of DefaultHopFraction of
// the frame, no zero padding (FFTLen = the next power of two ≥ FrameLen)
// and GOMAXPROCS workers.
func (c STFTConfig) Resolve(fs float64) STFTConfig {
	if c.FrameLen <= 0 {
		n := fs * DefaultFrameS
		if !(n >= 4) {
			n = 4
		}
		c.FrameLen = 1 << int(math.Round(math.Log2(n)))
	}
	if c.Hop <= 0 {
		c.Hop = max(1, int(float64(c.FrameLen)*DefaultHopFraction))
	}
	if c.FFTLen < c.FrameLen {
		c.FFTLen = nextPow2(c.FrameLen)
	}
	if c.Workers <= 0 {
		c.Workers = runtime.GOMAXPROCS(0)
	}
	return c
}

// Validate reports a configuration (after Resolve) that Process cannot run.
func (c STFTConfig) Validate() error {
	switch {
	case c.FrameLen < 4:
		return fmt.Errorf("dsp: frame of %d samples is too short (minimum 4)", c.FrameLen)
	case c.FFTLen < c.FrameLen:
		return fmt.Errorf("dsp: FFT length %d is shorter than the frame of %d samples", c.FFTLen, c.FrameLen)
	case c.FFTLen&(c.FFTLen-1) != 0:
		return fmt.Errorf("dsp: FFT length %d is not a power of two", c.FFTLen)
	case c.Hop <= 0:
		return fmt.Errorf("dsp: hop of %d samples must be positive", c.Hop)
	}
	return c.Window.validate()
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

// Pad returns the zero-padding factor FFTLen/FrameLen (1 without padding);
// InterpJacobsenHannPadded takes it when FFTLen is a multiple of FrameLen.
func (c STFTConfig) Pad() int { return c.FFTLen / c.FrameLen }

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

// framesPerChunk is how many consecutive frames a worker takes at once;
// ctx is checked and progress reported once per chunk.
const framesPerChunk = 64

// Process runs the STFT of x over every whole frame and hands each frame's
// spectrum to fn. Frame i covers samples [i·Hop, i·Hop+FrameLen); its time
// is the frame centre. The window (indexed n = 0..FrameLen−1, DFT kernel
// e^{−2πikn/FFTLen}) is computed once; each worker owns its FFT plan,
// frame and spectrum buffers, so no frame allocates.
//
// Frames are shared among Workers goroutines in chunks of consecutive
// frames. Process checks ctx before every chunk and, when it is cancelled,
// returns an error wrapping ctx.Err() (errors.Is(err, context.Canceled)
// holds). progress, if not nil, is called from a worker goroutine after
// every chunk with the frames done so far and the total; throttling it is
// the caller's job.
func (c STFTConfig) Process(ctx context.Context, x []float32, fs float64, fn FrameFunc, progress func(done, total int)) error {
	c = c.Resolve(fs)
	if err := c.Validate(); err != nil {
		return err
	}
	nf := c.NumFrames(len(x))
	if nf == 0 {
		return fmt.Errorf("dsp: signal of %d samples is shorter than one frame of %d", len(x), c.FrameLen)
	}
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("dsp: STFT cancelled: %w", err)
	}
	win := c.Window.values32(c.FrameLen)
	workers := min(c.Workers, (nf+framesPerChunk-1)/framesPerChunk)
	var next, done atomic.Int64
	var wg sync.WaitGroup
	errs := make([]error, workers)
	for w := range workers {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			errs[w] = c.worker(ctx, w, x, win, nf, &next, &done, fn, progress)
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

func (c STFTConfig) worker(ctx context.Context, w int, x, win []float32, nf int, next, done *atomic.Int64, fn FrameFunc, progress func(int, int)) error {
	fft := NewRealFFT[float32](c.FFTLen)
	re := make([]float32, c.Bins())
	im := make([]float32, c.Bins())
	var buf []float32
	if c.FFTLen != c.FrameLen {
		buf = make([]float32, c.FFTLen) // the tail stays zero
	}
	for {
		start := int(next.Add(framesPerChunk)) - framesPerChunk
		if start >= nf {
			return nil
		}
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("dsp: STFT cancelled: %w", err)
		}
		end := min(start+framesPerChunk, nf)
		for i := start; i < end; i++ {
			frame := x[i*c.Hop : i*c.Hop+c.FrameLen]
			if buf == nil {
				fft.TransformWindowed(re, im, frame, win)
			} else {
				head := buf[:len(frame)]
				for j, v := range frame {
					head[j] = v * win[j]
				}
				fft.Transform(re, im, buf)
			}
			fn(w, i, re, im)
		}
		d := done.Add(int64(end - start))
		if progress != nil {
			progress(int(d), nf)
		}
	}
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
	// Window is the analysis window used.
	Window Window
}

// Row returns frame i's magnitudes (no copy).
func (s *Spectrogram) Row(i int) []float32 { return s.Mag[i*s.Bins : (i+1)*s.Bins] }

// BinHz returns the frequency of (fractional) bin k.
func (s *Spectrogram) BinHz(k float64) float64 { return k * s.SampleRate / float64(s.FFTLen) }

// FrameTimeS returns the time of frame i's centre in seconds.
func (s *Spectrogram) FrameTimeS(i int) float64 {
	return s.T0 + (float64(i*s.Hop)+float64(s.FrameLen)/2)/s.SampleRate
}

// FullScaleMag returns the magnitude that a sine of amplitude 1 centred on
// a bin produces: CoherentGain · FrameLen / 2 (FrameLen/4 for Hann).
func (s *Spectrogram) FullScaleMag() float64 {
	return s.Window.CoherentGain(s.FrameLen) * float64(s.FrameLen) / 2
}

// MinDB is the floor of DB: magnitudes below it (including zero) map to it.
const MinDB = -200

// DB writes the magnitudes in decibels relative to FullScaleMag (0 dB is a
// full-scale sine, "dBFS") into dst, row by row like Mag, and returns it;
// nil dst is allocated, a wrong length panics. Values are floored at MinDB.
func (s *Spectrogram) DB(dst []float32) []float32 {
	if dst == nil {
		dst = make([]float32, len(s.Mag))
	}
	if len(dst) != len(s.Mag) {
		panic(fmt.Sprintf("dsp: DB destination length %d, want %d", len(dst), len(s.Mag)))
	}
	inv := 1 / s.FullScaleMag()
	floor := math.Pow(10, MinDB/20.0)
	for i, m := range s.Mag {
		dst[i] = float32(20 * math.Log10(max(float64(m)*inv, floor)))
	}
	return dst
}

// ComputeSpectrogram runs the STFT and keeps every frame's magnitudes. For
// long recordings where only a display copy is needed, use NewReducer.
func ComputeSpectrogram(ctx context.Context, x []float32, fs float64, cfg STFTConfig, progress func(done, total int)) (*Spectrogram, error) {
	cfg = cfg.Resolve(fs)
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	nf := cfg.NumFrames(len(x))
	s := &Spectrogram{Frames: nf, Bins: cfg.Bins(), FrameLen: cfg.FrameLen, Hop: cfg.Hop, FFTLen: cfg.FFTLen, SampleRate: fs, Window: cfg.Window}
	s.Mag = make([]float32, nf*s.Bins)
	err := cfg.Process(ctx, x, fs, func(_, i int, re, im []float32) {
		magnitude(s.Row(i), re, im)
	}, progress)
	if err != nil {
		return nil, err
	}
	return s, nil
}

// magnitude writes |re + i·im| into dst (all of one length).
func magnitude(dst, re, im []float32) {
	re, im = re[:len(dst)], im[:len(dst)]
	k0 := 0
	if haveAVX && len(dst) >= 8 {
		k0 = len(dst) &^ 7
		magnitudeAVX8(&dst[0], &re[0], &im[0], k0/8)
	}
	for k := k0; k < len(dst); k++ {
		dst[k] = float32(math.Sqrt(float64(re[k]*re[k] + im[k]*im[k])))
	}
}
