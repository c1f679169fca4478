//go:build amd64 && !purego

package dsp

import "golang.org/x/sys/cpu"

// haveAVX enables the AVX kernels of fft_amd64.s for float32 plans and
// magnitudes (AVX1 only: 256-bit VADDPS/VMULPS/VSQRTPS, VBROADCASTSS).
// Build with the purego tag to use the portable Go code instead.
var haveAVX = cpu.X86.HasAVX

// radix4AVX8 is radix4Pass for float32 with stride s = 8·sw, vectorised
// over the stride offset t, 8 lanes: xr..yi point at the pass's input and
// output arrays, q is the number of sub-transform positions j, sbytes = 4·s
// and tw holds (w1r, w1i, w2r, w2i, w3r, w3i) for each j.
//
//go:noescape
func radix4AVX8(xr, xi, yr, yi *float32, q, sw, sbytes int, tw *float32)

// radix4AVX4 is radix4AVX8 with 4 lanes, for stride 4 (sw = 1).
//
//go:noescape
func radix4AVX4(xr, xi, yr, yi *float32, q, sw, sbytes int, tw *float32)

// radix2AVX8 is radix2Pass for float32 with s = 8·n8, sbytes = 4·s.
//
//go:noescape
func radix2AVX8(xr, xi, yr, yi *float32, n8, sbytes int)

// magnitudeAVX8 writes √(re²+im²) for the first 8·n8 values.
//
//go:noescape
func magnitudeAVX8(dst, re, im *float32, n8 int)

// radix4FirstAVX is the first radix-4 pass (stride 1) fused with packing
// the real input x into complex pairs and, unless w is nil, windowing it;
// q = 8·q8, kbytes = 8·q, twv as built by NewRealFFT.
//
//go:noescape
func radix4FirstAVX(x, w, yr, yi *float32, q8, kbytes int, twv *float32)

// unpackAVX is the real-FFT unpacking of RealFFT.finish for k = 1..8·nb and
// m−k; *half must be 0.5.
//
//go:noescape
func unpackAVX(zr, zi, re, im, ur, ui *float32, m, nb int, half *float32)

// radix4S4AVX is the stride-4 radix-4 pass, two positions j per 8-lane
// step; q2 = q/2, nbytes = 16·q, tw4 as built by NewRealFFT.
//
//go:noescape
func radix4S4AVX(xr, xi, yr, yi *float32, q2, nbytes int, tw4 *float32)
