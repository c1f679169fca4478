package dsp_test

import (
	"context"
	"fmt"
	"math"

	"whirlfit/dsp"
)

// A steady tone between bins, located to a small fraction of a bin by
// the strongest local maximum of each frame and Jacobsen's Hann estimator
// on the complex bins the STFT hands to its FrameFunc.
func ExampleSTFTConfig_Process() {
	const fs, f0 = 48000.0, 1234.5
	x := make([]float32, fs/2)
	for i := range x {
		x[i] = float32(0.5 * math.Sin(2*math.Pi*f0*float64(i)/fs))
	}
	cfg := dsp.STFTConfig{FrameLen: 2048, Hop: 2048, FFTLen: 4096, Workers: 1}
	est := make([]float64, cfg.NumFrames(len(x)))
	mag := make([]float32, cfg.Bins())
	peaks := make([]dsp.Peak, 0, 1)
	err := cfg.Process(context.Background(), x, fs, func(_, i int, re, im []float32) {
		for k := range mag {
			mag[k] = float32(math.Hypot(float64(re[k]), float64(im[k])))
		}
		peaks = dsp.FindPeaks(peaks, mag, 1, 1, len(mag)-2)
		k := peaks[0].Bin
		d := dsp.InterpJacobsenHannPadded(re, im, k, cfg.Pad())
		est[i] = (float64(k) + d) * fs / float64(cfg.FFTLen)
	}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d frames, bin spacing %.2f Hz, first frame %.4f Hz, last %.4f Hz\n",
		len(est), fs/float64(cfg.FFTLen), est[0], est[len(est)-1])
	// Output:
	// 11 frames, bin spacing 11.72 Hz, first frame 1234.5000 Hz, last 1234.5000 Hz
}

// A long recording reduced for display while it streams through the STFT:
// memory holds only the reduced rows.
func ExampleNewReducer() {
	const fs = 8000.0
	x := make([]float32, 60*fs) // one minute of silence
	cfg := dsp.STFTConfig{FrameLen: 256, Hop: 32}
	r, err := dsp.NewReducer(cfg, fs, len(x), 500)
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := cfg.Process(context.Background(), x, fs, r.Frame, nil); err != nil {
		fmt.Println(err)
		return
	}
	s := r.Spectrogram()
	fmt.Printf("%d frames of %d bins, %.0f ms apart, first at %.4f s\n", s.Frames, s.Bins, 1e3*float64(s.Hop)/fs, s.FrameTimeS(0))
	// Output:
	// 500 frames of 129 bins, 120 ms apart, first at 0.0740 s
}
