package dsp

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	gofft "github.com/mjibson/go-dsp/fft"
	"gonum.org/v1/gonum/dsp/fourier"
)

func randomSignal(n int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 11))
	x := make([]float64, n)
	for i := range x {
		x[i] = 2*rng.Float64() - 1
	}
	return x
}

// directDFT is the textbook O(n²) definition, accumulated in float64 with
// the angle reduced modulo n so that it stays accurate.
func directDFT(x []float64) []complex128 {
	n := len(x)
	out := make([]complex128, n/2+1)
	for k := range out {
		var sr, si float64
		for j, v := range x {
			th := -2 * math.Pi * float64((j*k)%n) / float64(n)
			sr += v * math.Cos(th)
			si += v * math.Sin(th)
		}
		out[k] = complex(sr, si)
	}
	return out
}

// relErr returns max_k |got_k − want_k| / max_k |want_k|.
func relErr(re, im []float64, want []complex128) float64 {
	var e, scale float64
	for k, w := range want {
		e = math.Max(e, math.Hypot(re[k]-real(w), im[k]-imag(w)))
		scale = math.Max(scale, math.Hypot(real(w), imag(w)))
	}
	return e / scale
}

var fftSizes = []int{4, 8, 16, 32, 64, 128, 256, 512, 1024, 2048, 4096, 8192}

// Float64 transforms agree with gonum dsp/fourier and with the direct DFT to
// a relative error below 1e-12 (issue 3's bound; rounding of an n log n
// algorithm is about 1e-16·log₂n).
func TestRealFFTFloat64(t *testing.T) {
	for _, n := range fftSizes {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			x := randomSignal(n, uint64(n))
			re, im := NewRealFFT[float64](n).Transform(nil, nil, x)
			gonum := fourier.NewFFT(n).Coefficients(nil, x) // gonum dsp/fourier
			eg := relErr(re, im, gonum)
			ed := math.NaN()
			if n <= 4096 {
				ed = relErr(re, im, directDFT(x)) // definition
			}
			cx := make([]complex128, n)
			for i, v := range x {
				cx[i] = complex(v, 0)
			}
			ego := relErr(re, im, gofft.FFT(cx)[:n/2+1]) // go-dsp fft
			t.Logf("n=%d: rel. error vs gonum %.2g, vs direct DFT %.2g, vs go-dsp %.2g", n, eg, ed, ego)
			for name, e := range map[string]float64{"gonum": eg, "go-dsp": ego} {
				if e > 1e-12 {
					t.Errorf("vs %s: relative error %.3g, want < 1e-12", name, e)
				}
			}
			if ed > 1e-12 {
				t.Errorf("vs direct DFT: relative error %.3g, want < 1e-12", ed)
			}
		})
	}
}

// Float32 transforms agree with gonum's float64 transform to 1e-6 relative
// (float32 epsilon 6e-8 times a few log₂n; measured figures printed).
func TestRealFFTFloat32(t *testing.T) {
	for _, n := range fftSizes {
		x := randomSignal(n, uint64(n)+100)
		x32 := make([]float32, n)
		for i, v := range x {
			x32[i] = float32(v)
			x[i] = float64(x32[i])
		}
		re32, im32 := NewRealFFT[float32](n).Transform(nil, nil, x32)
		re, im := make([]float64, len(re32)), make([]float64, len(im32))
		for k := range re {
			re[k], im[k] = float64(re32[k]), float64(im32[k])
		}
		e := relErr(re, im, fourier.NewFFT(n).Coefficients(nil, x)) // gonum dsp/fourier
		t.Logf("n=%d: float32 rel. error vs gonum %.2g", n, e)
		if e > 1e-6 {
			t.Errorf("n=%d: relative error %.3g, want < 1e-6", n, e)
		}
	}
}

// Parseval: Σx² = (|X0|² + |X_{n/2}|² + 2Σ_{0<k<n/2}|Xk|²)/n.
func TestRealFFTParseval(t *testing.T) {
	for _, n := range fftSizes {
		x := randomSignal(n, uint64(n)+200)
		re, im := NewRealFFT[float64](n).Transform(nil, nil, x)
		var et, ef float64
		for _, v := range x {
			et += v * v
		}
		for k := range re {
			p := re[k]*re[k] + im[k]*im[k]
			if k != 0 && k != n/2 {
				p *= 2
			}
			ef += p
		}
		ef /= float64(n)
		if d := math.Abs(et-ef) / et; d > 1e-13 {
			t.Errorf("n=%d: time energy %.15g, frequency energy %.15g (rel. diff %.2g)", n, et, ef, d)
		}
	}
}

func TestRealFFTRoundTrip(t *testing.T) {
	for _, n := range fftSizes {
		x := randomSignal(n, uint64(n)+300)
		f := NewRealFFT[float64](n)
		re, im := f.Transform(nil, nil, x)
		y := f.Inverse(nil, re, im)
		var e float64
		for i := range x {
			e = math.Max(e, math.Abs(x[i]-y[i]))
		}
		if e > 1e-14 {
			t.Errorf("n=%d: round trip max error %.3g, want < 1e-14", n, e)
		}
	}
}

func TestRealFFTWindowed(t *testing.T) {
	const n = 256
	x := randomSignal(n, 5)
	w := Window{Kind: Hann}.Values(n)
	xw := make([]float64, n)
	for i := range x {
		xw[i] = x[i] * w[i]
	}
	f := NewRealFFT[float64](n)
	re1, im1 := f.Transform(nil, nil, xw)
	re2, im2 := f.TransformWindowed(nil, nil, x, w)
	for k := range re1 {
		if re1[k] != re2[k] || im1[k] != im2[k] {
			t.Fatalf("bin %d: windowed transform %g%+gi, want %g%+gi", k, re2[k], im2[k], re1[k], im1[k])
		}
	}
}

func TestNewRealFFTPanics(t *testing.T) {
	for _, n := range []int{0, 2, 3, 1000} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("NewRealFFT(%d) did not panic", n)
				}
			}()
			NewRealFFT[float32](n)
		}()
	}
}

func benchSizes(b *testing.B, fn func(b *testing.B, n int)) {
	for _, n := range []int{1024, 4096} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			b.ReportAllocs()
			fn(b, n)
		})
	}
}

func BenchmarkRealFFTFloat32(b *testing.B) {
	benchSizes(b, func(b *testing.B, n int) {
		x := make([]float32, n)
		for i, v := range randomSignal(n, 1) {
			x[i] = float32(v)
		}
		f := NewRealFFT[float32](n)
		re, im := make([]float32, n/2+1), make([]float32, n/2+1)
		for b.Loop() {
			f.Transform(re, im, x)
		}
	})
}

func BenchmarkRealFFTFloat64(b *testing.B) {
	benchSizes(b, func(b *testing.B, n int) {
		x := randomSignal(n, 1)
		f := NewRealFFT[float64](n)
		re, im := make([]float64, n/2+1), make([]float64, n/2+1)
		for b.Loop() {
			f.Transform(re, im, x)
		}
	})
}

func BenchmarkGonumFFT(b *testing.B) {
	benchSizes(b, func(b *testing.B, n int) {
		x := randomSignal(n, 1)
		f := fourier.NewFFT(n)
		dst := make([]complex128, n/2+1)
		for b.Loop() {
			f.Coefficients(dst, x)
		}
	})
}

func BenchmarkGoDSPFFTReal(b *testing.B) {
	benchSizes(b, func(b *testing.B, n int) {
		x := randomSignal(n, 1)
		for b.Loop() {
			gofft.FFTReal(x)
		}
	})
}

// The AVX kernels (amd64) and the portable Go code agree on float32 plans,
// plain and windowed, at every size; on other architectures both plans
// run the Go code and the test is trivially true.
func TestRealFFTKernelsAgree(t *testing.T) {
	for _, n := range fftSizes {
		x, w := make([]float32, n), Window{Kind: Hann}.values32(n)
		for i, v := range randomSignal(n, uint64(n)+400) {
			x[i] = float32(v)
		}
		fast := NewRealFFT[float32](n)
		slow := NewRealFFT[float32](n)
		slow.simd, slow.fused = false, false
		for _, win := range [][]float32{nil, w} {
			var r1, i1, r2, i2 []float32
			if win == nil {
				r1, i1 = fast.Transform(nil, nil, x)
				r2, i2 = slow.Transform(nil, nil, x)
			} else {
				r1, i1 = fast.TransformWindowed(nil, nil, x, win)
				r2, i2 = slow.TransformWindowed(nil, nil, x, win)
			}
			var e, scale float64
			for k := range r1 {
				e = math.Max(e, math.Hypot(float64(r1[k]-r2[k]), float64(i1[k]-i2[k])))
				scale = math.Max(scale, math.Hypot(float64(r2[k]), float64(i2[k])))
			}
			if e/scale > 1e-6 {
				t.Errorf("n=%d windowed=%v: kernels differ by %.3g relative (simd %v, fused %v)", n, win != nil, e/scale, fast.simd, fast.fused)
			}
		}
	}
	t.Logf("AVX kernels in use: %v", haveAVX)
}
