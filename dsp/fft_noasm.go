//go:build !amd64 || purego

package dsp

// Without the amd64 kernels the portable Go code runs everywhere.
var haveAVX = false

func radix4AVX8(xr, xi, yr, yi *float32, q, sw, sbytes int, tw *float32)  { panic("dsp: no AVX") }
func radix4AVX4(xr, xi, yr, yi *float32, q, sw, sbytes int, tw *float32)  { panic("dsp: no AVX") }
func radix2AVX8(xr, xi, yr, yi *float32, n8, sbytes int)                  { panic("dsp: no AVX") }
func magnitudeAVX8(dst, re, im *float32, n8 int)                          { panic("dsp: no AVX") }
func radix4FirstAVX(x, w, yr, yi *float32, q8, kbytes int, twv *float32)  { panic("dsp: no AVX") }
func unpackAVX(zr, zi, re, im, ur, ui *float32, m, nb int, half *float32) { panic("dsp: no AVX") }
func radix4S4AVX(xr, xi, yr, yi *float32, q2, nbytes int, tw4 *float32)   { panic("dsp: no AVX") }
