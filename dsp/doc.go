// Package dsp holds whirlfit's signal processing that knows nothing about
// rotors: decoding audio files into float32 samples, analysis windows, the
// FFT, the short-time Fourier transform (STFT), averaged spectra and sub-bin
// peak interpolation.
//
// It imports neither analysis nor ui. Domain types are Audio (a decoded file,
// every channel), Signal (one channel or a mix, ready for analysis) and
// Spectrogram (frames × bins of magnitudes in one contiguous slice).
package dsp
