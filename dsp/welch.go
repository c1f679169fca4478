package dsp

import (
	"fmt"
	"math"

	"github.com/mjibson/go-dsp/spectral"
)

// AveragedSpectrum is the Welch-averaged power spectral density of one
// interval of a signal: the steady-state view in which the shaft and
// blade-pass lines of one operating point are read off.
//
// Method: P. D. Welch, "The use of fast Fourier transform for the
// estimation of power spectra: a method based on time averaging over
// short, modified periodograms", IEEE Trans. Audio Electroacoust.
// 15(2):70–73, 1967 — Hann-windowed segments of NFFT samples overlapping
// by half (common practice for Hann), periodograms averaged. The
// computation is go-dsp's spectral.Pwelch with Pad = NFFT: its Pad > NFFT
// path zero-pads before windowing (the taper then spans the padding) while
// normalising by the unpadded window, so padding is not offered here.
type AveragedSpectrum struct {
	// FromS and ToS bound the interval analysed, in seconds from the start.
	FromS, ToS float64
	SampleRate float64
	// NFFT is the segment length in samples, Overlap the samples shared by
	// consecutive segments and Segments how many were averaged.
	NFFT, Overlap, Segments int
	Window                  Window
	// Hz[k] = k·SampleRate/NFFT; PSD[k] is the one-sided density in
	// (full scale)²/Hz, so a sine of amplitude A contributes A²/2 of total
	// power; DB[k] = 10·log10 PSD[k], floored at MinDB.
	Hz, PSD, DB []float64
}

// AverageSpectrum returns the Welch spectrum of sig between fromS and toS
// seconds with segments of nfft samples (a power of two ≥ 16; 0 chooses
// the power of two nearest 0.17 s, 8192 at 44.1 and 48 kHz, i.e. 5.9 Hz
// bins at 48 kHz, halved until it fits the interval). The interval's mean is removed
// first. It returns an error when the interval is empty, out of range or
// shorter than one segment.
func AverageSpectrum(sig Signal, fromS, toS float64, nfft int) (*AveragedSpectrum, error) {
	fs := sig.SampleRate
	if !(fs > 0) {
		return nil, fmt.Errorf("dsp: sample rate %g Hz is not positive", fs)
	}
	dur := float64(len(sig.Samples)) / fs
	if math.IsNaN(fromS) || math.IsNaN(toS) || fromS < 0 || toS > dur+0.5/fs || toS <= fromS {
		return nil, fmt.Errorf("dsp: interval %g–%g s is not within the recording of %.3f s", fromS, toS, dur)
	}
	i0 := int(math.Round(fromS * fs))
	i1 := min(len(sig.Samples), int(math.Round(toS*fs)))
	n := i1 - i0
	if nfft == 0 {
		nfft = 1 << int(math.Round(math.Log2(max(16, 0.17*fs))))
		for nfft > 16 && nfft > n {
			nfft /= 2
		}
	}
	if nfft < 16 || nfft&(nfft-1) != 0 {
		return nil, fmt.Errorf("dsp: segment length %d is not a power of two ≥ 16", nfft)
	}
	if n < nfft {
		return nil, fmt.Errorf("dsp: interval %g–%g s holds %d samples, fewer than one segment of %d (%.3f s)", fromS, toS, n, nfft, float64(nfft)/fs)
	}
	x := make([]float64, n)
	var mean float64
	for i, v := range sig.Samples[i0:i1] {
		x[i] = float64(v)
		mean += x[i]
	}
	mean /= float64(n)
	for i := range x {
		x[i] -= mean
	}
	win := Window{Kind: Hann}
	overlap := nfft / 2
	psd, hz := spectral.Pwelch(x, fs, &spectral.PwelchOptions{
		NFFT:     nfft,
		Noverlap: overlap,
		Pad:      nfft,
		Window:   win.Values,
	})
	a := &AveragedSpectrum{
		FromS: float64(i0) / fs, ToS: float64(i1) / fs, SampleRate: fs,
		NFFT: nfft, Overlap: overlap, Segments: 1 + (n-nfft)/(nfft-overlap), Window: win,
		Hz: hz, PSD: psd, DB: make([]float64, len(psd)),
	}
	for k, p := range psd {
		a.DB[k] = 10 * math.Log10(math.Max(p, math.Pow(10, MinDB/10.0)))
	}
	return a, nil
}

// BinHz is the spacing of the spectrum's bins in Hz.
func (a *AveragedSpectrum) BinHz() float64 { return a.SampleRate / float64(a.NFFT) }

// Peaks returns the n strongest local maxima of the spectrum (bins 1 to
// NFFT/2−1), strongest first, with frequency and level refined by a
// parabola through the power-scaled magnitudes √PSD^p, p = PowerQuadHann
// (Werner and Germain 2016, see InterpPowerQuad; averaged periodograms
// carry no phase, so the complex estimators do not apply). For a steady
// tone the bias is below 3e-4 bin (see interp.go). DB is the
// interpolated PSD level in dB.
func (a *AveragedSpectrum) Peaks(n int) []Peak {
	if n <= 0 || len(a.PSD) < 3 {
		return nil
	}
	mag := make([]float32, len(a.PSD))
	for k, p := range a.PSD {
		mag[k] = float32(math.Sqrt(p))
	}
	peaks := FindPeaks(nil, mag, n, 1, len(mag)-2)
	for i := range peaks {
		p := &peaks[i]
		k := p.Bin
		d := InterpPowerQuad(mag, k, PowerQuadHann)
		// Height of the parabola at its vertex, back from the p-scale.
		pa, pb, pc := powf(mag[k-1]), powf(mag[k]), powf(mag[k+1])
		h := pb - (pa-pc)*d/4
		level := math.Pow(math.Max(h, 0), 2/PowerQuadHann) // PSD units
		p.Offset = d
		p.Hz = (float64(k) + d) * a.BinHz()
		p.DB = 10 * math.Log10(math.Max(level, math.Pow(10, MinDB/10.0)))
	}
	return peaks
}

func powf(m float32) float64 { return math.Pow(float64(m), PowerQuadHann) }
