package dsp

import (
	"fmt"
	"math"
	"unsafe"
)

// Float is the sample type of the FFT: float32 (the STFT's choice, half the
// memory traffic) or float64 (for reference-grade accuracy).
type Float interface{ ~float32 | ~float64 }

// RealFFT is a plan for the discrete Fourier transform of real sequences of
// one power-of-two length n ≥ 4:
//
//	X[k] = Σ_{j=0}^{n−1} x[j]·e^{−2πi·jk/n},  k = 0..n/2
//
// (unnormalised forward transform, the convention of gonum's dsp/fourier).
//
// The real input is packed into a complex sequence of length n/2 (even
// samples as real parts, odd samples as imaginary parts), transformed by a
// radix-4 Stockham autosort FFT (with one radix-2 pass when log₂(n/2) is
// odd) on split real/imaginary arrays, and unpacked with the usual
// even/odd butterfly (E. O. Brigham, The Fast Fourier Transform, 1974,
// §10.10 "real data" (M)). Twiddle factors are computed once, in float64,
// for each pass. Stockham's ordering needs no bit reversal and reads and
// writes memory sequentially (T. G. Stockham, 1966 (M); C. Van Loan,
// Computational Frameworks for the Fast Fourier Transform, SIAM 1992 (M)).
// (M): citation details from memory.
//
// On amd64 CPUs with AVX, float32 plans run hand-vectorised kernels
// (fft_amd64.s, 8 lanes): the first pass fused with packing and windowing,
// the later passes vectorised over the stride, and the unpacking with
// reversed loads for the mirrored bins. Each kernel is the same arithmetic
// as its Go counterpart, and TestRealFFTKernelsAgree checks them against
// each other; the purego build tag or another architecture selects the Go
// code. Measured (one core, CPU time, BENCHMARKS.md): 0.43 µs for n = 1024
// and 1.9 µs for n = 4096 with AVX.
//
// A plan holds work buffers, so one plan must not be used by several
// goroutines at once: give each worker its own (NewRealFFT is cheap next to
// a spectrogram).
type RealFFT[T Float] struct {
	n      int // real length
	m      int // complex length n/2
	passes []fftPass[T]
	// ar, ai and br, bi are the ping-pong buffers of the complex FFT.
	ar, ai, br, bi []T
	// ur, ui hold e^{−2πik/n} for k = 0..m/2 for the real unpacking.
	ur, ui []T
	// simd selects the AVX kernels (float32 plans on CPUs with AVX);
	// fused also runs the first pass straight from the real input.
	simd, fused bool
	// twv holds the first pass's twiddles as vectors for the fused kernel.
	twv []float32
}

// fftPass is one radix-4 (or final radix-2) Stockham pass of a length-m
// complex FFT: l is the length of the sub-transforms it combines (l = 4·q
// or 2·q), s the stride (m/l), and w the twiddles per p = 0..l/r−1.
type fftPass[T Float] struct {
	radix, l, s        int
	w1r, w1i, w2r, w2i []T
	w3r, w3i           []T
	// tw interleaves the twiddles per j for the AVX kernels (float32);
	// tw4 holds them as vectors per pair of j for the stride-4 kernel.
	tw, tw4 []float32
}

// NewRealFFT returns a plan for real transforms of length n. It panics
// unless n is a power of two not below 4.
func NewRealFFT[T Float](n int) *RealFFT[T] {
	if n < 4 || n&(n-1) != 0 {
		panic(fmt.Sprintf("dsp: FFT length %d is not a power of two ≥ 4", n))
	}
	m := n / 2
	f := &RealFFT[T]{n: n, m: m}
	f.ar, f.ai = make([]T, m), make([]T, m)
	f.br, f.bi = make([]T, m), make([]T, m)
	// Passes: sub-transform length l runs over m, m/4, … (decimation in
	// frequency, Stockham form); a final radix-2 pass when log₂ m is odd.
	s := 1
	for l := m; l > 1; {
		r := 4
		if l == 2 {
			r = 2
		}
		q := l / r
		p := fftPass[T]{radix: r, l: l, s: s}
		if r == 4 {
			p.w1r, p.w1i = make([]T, q), make([]T, q)
			p.w2r, p.w2i = make([]T, q), make([]T, q)
			p.w3r, p.w3i = make([]T, q), make([]T, q)
			for j := range q {
				for t, dst := range [3][2][]T{{p.w1r, p.w1i}, {p.w2r, p.w2i}, {p.w3r, p.w3i}} {
					th := -2 * math.Pi * float64((t+1)*j) / float64(l)
					dst[0][j], dst[1][j] = T(math.Cos(th)), T(math.Sin(th))
				}
			}
		}
		if r == 4 {
			p.tw = make([]float32, 6*q)
			for j := range q {
				copy(p.tw[6*j:], []float32{float32(p.w1r[j]), float32(p.w1i[j]), float32(p.w2r[j]), float32(p.w2i[j]), float32(p.w3r[j]), float32(p.w3i[j])})
			}
		}
		if r == 4 && s == 4 && q%2 == 0 {
			p.tw4 = make([]float32, 24*q)
			for j := 0; j < q; j += 2 {
				for v := range 6 {
					for l := range 8 {
						p.tw4[24*j+8*v+l] = p.tw[6*(j+l/4)+v]
					}
				}
			}
		}
		f.passes = append(f.passes, p)
		l /= r
		s *= r
	}
	var zero T
	_, is32 := any(zero).(float32)
	f.simd = is32 && haveAVX
	if q := m / 4; f.simd && m >= 32 && q%8 == 0 && f.passes[0].radix == 4 {
		// Lanes of the fused kernel hold j = 0,1,4,5,2,3,6,7 of each block.
		perm := [8]int{0, 1, 4, 5, 2, 3, 6, 7}
		p := &f.passes[0]
		f.fused = true
		f.twv = make([]float32, 6*q)
		for b := 0; b < q/8; b++ {
			for v, tab := range [6][]T{p.w1r, p.w1i, p.w2r, p.w2i, p.w3r, p.w3i} {
				for l, j := range perm {
					f.twv[48*b+8*v+l] = float32(tab[8*b+j])
				}
			}
		}
	}
	f.ur, f.ui = make([]T, m/2+1), make([]T, m/2+1)
	for k := range f.ur {
		th := -2 * math.Pi * float64(k) / float64(n)
		f.ur[k], f.ui[k] = T(math.Cos(th)), T(math.Sin(th))
	}
	return f
}

// Len returns the real transform length n.
func (f *RealFFT[T]) Len() int { return f.n }

// Bins returns n/2 + 1, the length of the spectrum.
func (f *RealFFT[T]) Bins() int { return f.m + 1 }

// Transform computes the spectrum of x (length n) into re and im (length
// n/2+1 each) and returns them; nil re or im are allocated. x is not
// modified. It panics on a length mismatch.
func (f *RealFFT[T]) Transform(re, im, x []T) ([]T, []T) {
	if len(x) != f.n {
		panic(fmt.Sprintf("dsp: FFT input length %d, plan length %d", len(x), f.n))
	}
	re, im = f.dst(re, im)
	if f.fused {
		f.firstFused(x, nil)
		f.finish(re, im)
		return re, im
	}
	zr, zi := f.inputBuffers()
	for j := range zr {
		zr[j] = x[2*j]
		zi[j] = x[2*j+1]
	}
	f.complexFFT(zr, zi, 0)
	f.finish(re, im)
	return re, im
}

// TransformWindowed computes the spectrum of x[j]·w[j] (x, w of length n),
// fusing the window into the packing step. Samples and window may be of
// different precisions only through the caller's conversion: both are T.
func (f *RealFFT[T]) TransformWindowed(re, im, x, w []T) ([]T, []T) {
	if len(x) != f.n || len(w) != f.n {
		panic(fmt.Sprintf("dsp: FFT input length %d, window length %d, plan length %d", len(x), len(w), f.n))
	}
	re, im = f.dst(re, im)
	if f.fused {
		f.firstFused(x, w)
		f.finish(re, im)
		return re, im
	}
	zr, zi := f.inputBuffers()
	x = x[:2*len(zr)]
	w = w[:2*len(zr)]
	for j := range zr {
		zr[j] = x[2*j] * w[2*j]
		zi[j] = x[2*j+1] * w[2*j+1]
	}
	f.complexFFT(zr, zi, 0)
	f.finish(re, im)
	return re, im
}

// firstFused runs the first pass from the real input x (windowed by w
// unless w is nil) with the AVX kernel, then the remaining passes.
func (f *RealFFT[T]) firstFused(x, w []T) {
	xr, xi := f.inputBuffers()
	yr, yi := f.other(xr, xi)
	var wp *float32
	if w != nil {
		wp = f32p(w)
	}
	q := f.m / 4
	radix4FirstAVX(f32p(x), wp, f32p(yr), f32p(yi), q/8, 8*q, &f.twv[0])
	f.complexFFT(yr, yi, 1)
}

// other returns the ping-pong partner of the buffer pair (xr, xi).
func (f *RealFFT[T]) other(xr, xi []T) ([]T, []T) {
	if &xr[0] == &f.ar[0] {
		return f.br, f.bi
	}
	return f.ar, f.ai
}

func (f *RealFFT[T]) dst(re, im []T) ([]T, []T) {
	if re == nil {
		re = make([]T, f.m+1)
	}
	if im == nil {
		im = make([]T, f.m+1)
	}
	if len(re) != f.m+1 || len(im) != f.m+1 {
		panic(fmt.Sprintf("dsp: FFT output lengths %d, %d, want %d", len(re), len(im), f.m+1))
	}
	return re, im
}

// inputBuffers returns the buffer the packed input must go to so that the
// complex FFT's result lands in f.ar, f.ai.
func (f *RealFFT[T]) inputBuffers() ([]T, []T) {
	if len(f.passes)%2 == 0 {
		return f.ar, f.ai
	}
	return f.br, f.bi
}

// finish unpacks the real spectrum into re, im from the complex FFT's
// result in f.ar, f.ai.
func (f *RealFFT[T]) finish(re, im []T) {
	// Z = f.ar, f.ai. X[k] = E[k] + W^k·O[k] with E = (Z[k] + conj Z[m−k])/2,
	// O = (Z[k] − conj Z[m−k])/(2i), W = e^{−2πi/n}; pairs k, m−k together.
	m := f.m
	zr, zi := f.ar[:m], f.ai[:m]
	re, im = re[:m+1], im[:m+1]
	re[0], im[0] = zr[0]+zi[0], 0
	re[m], im[m] = zr[0]-zi[0], 0
	ur, ui := f.ur[:m/2+1], f.ui[:m/2+1]
	k1 := 1
	if nb := (m/2 - 1) / 8; f.simd && nb > 0 {
		// Blocks k = 1+8b .. 8+8b entirely below m/2 (mirrors above it).
		unpackAVX(f32p(zr), f32p(zi), f32p(re), f32p(im), f32p(ur), f32p(ui), m, nb, &halfF32)
		k1 = 1 + 8*nb
	}
	for k := k1; k <= m/2; k++ {
		a, b := zr[k], zi[k]
		c, d := zr[m-k], zi[m-k]
		er, ei := (a+c)*0.5, (b-d)*0.5
		or, oi := (b+d)*0.5, (c-a)*0.5
		wr, wi := ur[k], ui[k]
		tr := wr*or - wi*oi
		ti := wr*oi + wi*or
		re[k], im[k] = er+tr, ei+ti
		// At m−k: E' = conj E, O' = conj O, W^{m−k} = −conj W^k.
		re[m-k], im[m-k] = er-tr, ti-ei
	}
}

// Inverse computes x (length n) from the spectrum re, im (length n/2+1) of a
// real sequence so that Inverse(Transform(x)) = x; nil x is allocated. The
// imaginary parts of bins 0 and n/2 are ignored.
func (f *RealFFT[T]) Inverse(x, re, im []T) []T {
	m := f.m
	if len(re) != m+1 || len(im) != m+1 {
		panic(fmt.Sprintf("dsp: inverse FFT input lengths %d, %d, want %d", len(re), len(im), m+1))
	}
	if x == nil {
		x = make([]T, f.n)
	}
	if len(x) != f.n {
		panic(fmt.Sprintf("dsp: inverse FFT output length %d, plan length %d", len(x), f.n))
	}
	// Z[k] = E[k] + i·O[k], E = (X[k] + conj X[m−k])/2,
	// O = conj(W^k)·(X[k] − conj X[m−k])/2. The inverse complex FFT is the
	// forward one with real and imaginary parts swapped on input and output.
	xr, xi := f.inputBuffers()
	for k := 0; k < m; k++ {
		a, b := re[k], im[k]
		c, d := re[m-k], -im[m-k]
		if k == 0 {
			b, d = 0, 0
		}
		er, ei := (a+c)*0.5, (b+d)*0.5
		dr, di := (a-c)*0.5, (b-d)*0.5
		wr, wi := f.twiddleN(k)
		or := wr*dr + wi*di // conj(W)·D
		oi := wr*di - wi*dr
		// Z = E + i·O; swapped for the inverse: (Im Z, Re Z).
		xi[k] = er - oi
		xr[k] = ei + or
	}
	f.complexFFT(xr, xi, 0)
	scale := 1 / T(m)
	for j := 0; j < m; j++ {
		x[2*j] = f.ai[j] * scale
		x[2*j+1] = f.ar[j] * scale
	}
	return x
}

// twiddleN returns e^{−2πik/n} for 0 ≤ k < m from the table of k ≤ m/2.
func (f *RealFFT[T]) twiddleN(k int) (T, T) {
	if k <= f.m/2 {
		return f.ur[k], f.ui[k]
	}
	// e^{−2πik/n} = −conj(e^{−2πi(m−k)/n}) since e^{−2πim/n} = −1.
	j := f.m - k
	return -f.ur[j], f.ui[j]
}

// complexFFT runs passes start, start+1, … on (xr, xi), one of the two
// ping-pong buffer pairs (the one inputBuffers returns when start = 0),
// leaving the result in f.ar, f.ai.
func (f *RealFFT[T]) complexFFT(xr, xi []T, start int) {
	yr, yi := f.other(xr, xi)
	for i := start; i < len(f.passes); i++ {
		p := &f.passes[i]
		switch {
		case f.simd && p.radix == 4 && p.s%8 == 0:
			radix4AVX8(f32p(xr), f32p(xi), f32p(yr), f32p(yi), p.l/4, p.s/8, 4*p.s, &p.tw[0])
		case f.simd && p.radix == 4 && p.s == 4 && p.tw4 != nil:
			radix4S4AVX(f32p(xr), f32p(xi), f32p(yr), f32p(yi), p.l/8, 4*p.l, &p.tw4[0])
		case f.simd && p.radix == 4 && p.s == 4:
			radix4AVX4(f32p(xr), f32p(xi), f32p(yr), f32p(yi), p.l/4, 1, 4*p.s, &p.tw[0])
		case f.simd && p.radix == 2 && p.s%8 == 0:
			radix2AVX8(f32p(xr), f32p(xi), f32p(yr), f32p(yi), p.s/8, 4*p.s)
		case p.radix == 4:
			radix4Pass(p, xr, xi, yr, yi)
		default:
			radix2Pass(p, xr, xi, yr, yi)
		}
		xr, xi, yr, yi = yr, yi, xr, xi
	}
}

var halfF32 = float32(0.5)

// f32p returns the address of a float32 slice's first element; the AVX
// paths run only for float32 plans, so T is float32 there.
func f32p[T Float](s []T) *float32 { return (*float32)(unsafe.Pointer(unsafe.SliceData(s))) }

// radix4Pass is one Stockham decimation-in-frequency pass: for each
// sub-transform position j < q = l/4 and stride offset t < s,
//
//	a, b, c, d = x[t + s·(j + k·q)], k = 0..3
//	y[t + s·(4j + 0)] = (a + c) + (b + d)
//	y[t + s·(4j + 1)] = w^j  · ((a − c) − i(b − d))
//	y[t + s·(4j + 2)] = w^2j · ((a + c) − (b + d))
//	y[t + s·(4j + 3)] = w^3j · ((a − c) + i(b − d)),  w = e^{−2πi/l}.
func radix4Pass[T Float](p *fftPass[T], xr, xi, yr, yi []T) {
	q, s := p.l/4, p.s
	n := q * s
	if s == 1 {
		radix4First(p, xr, xi, yr, yi)
		return
	}
	if q == 1 {
		// Last pass: all twiddles are 1.
		x0r, x1r, x2r, x3r := xr[0:s], xr[s:2*s], xr[2*s:3*s], xr[3*s:4*s]
		x0i, x1i, x2i, x3i := xi[0:s], xi[s:2*s], xi[2*s:3*s], xi[3*s:4*s]
		y0r, y1r, y2r, y3r := yr[0:s], yr[s:2*s], yr[2*s:3*s], yr[3*s:4*s]
		y0i, y1i, y2i, y3i := yi[0:s], yi[s:2*s], yi[2*s:3*s], yi[3*s:4*s]
		for t := range x0r {
			ar, ai := x0r[t], x0i[t]
			br, bi := x1r[t], x1i[t]
			cr, ci := x2r[t], x2i[t]
			dr, di := x3r[t], x3i[t]
			apcr, apci := ar+cr, ai+ci
			amcr, amci := ar-cr, ai-ci
			bpdr, bpdi := br+dr, bi+di
			bmdr, bmdi := br-dr, bi-di
			y0r[t], y0i[t] = apcr+bpdr, apci+bpdi
			y1r[t], y1i[t] = amcr+bmdi, amci-bmdr
			y2r[t], y2i[t] = apcr-bpdr, apci-bpdi
			y3r[t], y3i[t] = amcr-bmdi, amci+bmdr
		}
		return
	}
	for j := range q {
		w1r, w1i := p.w1r[j], p.w1i[j]
		w2r, w2i := p.w2r[j], p.w2i[j]
		w3r, w3i := p.w3r[j], p.w3i[j]
		i0 := s * j
		o0 := 4 * s * j
		x0r, x0i := xr[i0:i0+s], xi[i0:i0+s]
		x1r, x1i := xr[i0+n:i0+n+s], xi[i0+n:i0+n+s]
		x2r, x2i := xr[i0+2*n:i0+2*n+s], xi[i0+2*n:i0+2*n+s]
		x3r, x3i := xr[i0+3*n:i0+3*n+s], xi[i0+3*n:i0+3*n+s]
		y0r, y0i := yr[o0:o0+s], yi[o0:o0+s]
		y1r, y1i := yr[o0+s:o0+2*s], yi[o0+s:o0+2*s]
		y2r, y2i := yr[o0+2*s:o0+3*s], yi[o0+2*s:o0+3*s]
		y3r, y3i := yr[o0+3*s:o0+4*s], yi[o0+3*s:o0+4*s]
		for t := range x0r {
			ar, ai := x0r[t], x0i[t]
			br, bi := x1r[t], x1i[t]
			cr, ci := x2r[t], x2i[t]
			dr, di := x3r[t], x3i[t]
			apcr, apci := ar+cr, ai+ci
			amcr, amci := ar-cr, ai-ci
			bpdr, bpdi := br+dr, bi+di
			bmdr, bmdi := br-dr, bi-di
			y0r[t], y0i[t] = apcr+bpdr, apci+bpdi
			u1r, u1i := amcr+bmdi, amci-bmdr
			u2r, u2i := apcr-bpdr, apci-bpdi
			u3r, u3i := amcr-bmdi, amci+bmdr
			y1r[t], y1i[t] = w1r*u1r-w1i*u1i, w1r*u1i+w1i*u1r
			y2r[t], y2i[t] = w2r*u2r-w2i*u2i, w2r*u2i+w2i*u2r
			y3r[t], y3i[t] = w3r*u3r-w3i*u3i, w3r*u3i+w3i*u3r
		}
	}
}

// radix4First is radix4Pass for stride 1 (the first pass), looping over j.
func radix4First[T Float](p *fftPass[T], xr, xi, yr, yi []T) {
	q := p.l / 4
	x0r, x1r, x2r, x3r := xr[0:q], xr[q:2*q], xr[2*q:3*q], xr[3*q:4*q]
	x0i, x1i, x2i, x3i := xi[0:q], xi[q:2*q], xi[2*q:3*q], xi[3*q:4*q]
	w1r, w1i := p.w1r[:q], p.w1i[:q]
	w2r, w2i := p.w2r[:q], p.w2i[:q]
	w3r, w3i := p.w3r[:q], p.w3i[:q]
	yr, yi = yr[:4*q], yi[:4*q]
	for j := range x0r {
		ar, ai := x0r[j], x0i[j]
		br, bi := x1r[j], x1i[j]
		cr, ci := x2r[j], x2i[j]
		dr, di := x3r[j], x3i[j]
		apcr, apci := ar+cr, ai+ci
		amcr, amci := ar-cr, ai-ci
		bpdr, bpdi := br+dr, bi+di
		bmdr, bmdi := br-dr, bi-di
		u1r, u1i := amcr+bmdi, amci-bmdr
		u2r, u2i := apcr-bpdr, apci-bpdi
		u3r, u3i := amcr-bmdi, amci+bmdr
		o := yr[4*j : 4*j+4]
		oi := yi[4*j : 4*j+4]
		o[0], oi[0] = apcr+bpdr, apci+bpdi
		o[1], oi[1] = w1r[j]*u1r-w1i[j]*u1i, w1r[j]*u1i+w1i[j]*u1r
		o[2], oi[2] = w2r[j]*u2r-w2i[j]*u2i, w2r[j]*u2i+w2i[j]*u2r
		o[3], oi[3] = w3r[j]*u3r-w3i[j]*u3i, w3r[j]*u3i+w3i[j]*u3r
	}
}

// radix2Pass is the final radix-2 pass (sub-transform length 2, no
// twiddles): y[t] = x[t] + x[t+s], y[t+s] = x[t] − x[t+s].
func radix2Pass[T Float](p *fftPass[T], xr, xi, yr, yi []T) {
	s := p.s
	x0r, x1r, x0i, x1i := xr[:s], xr[s:2*s], xi[:s], xi[s:2*s]
	y0r, y1r, y0i, y1i := yr[:s], yr[s:2*s], yi[:s], yi[s:2*s]
	for t := range x0r {
		ar, ai, br, bi := x0r[t], x0i[t], x1r[t], x1i[t]
		y0r[t], y0i[t] = ar+br, ai+bi
		y1r[t], y1i[t] = ar-br, ai-bi
	}
}
