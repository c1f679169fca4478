package figure

import (
	"math"
	"testing"
)

// The sRGB conversions against the standard's primaries and white
// (IEC 61966-2-1; CIELAB of the sRGB primaries as commonly tabulated, from
// memory: red L*=53.24, a*=80.09, b*=67.20; white L*=100).
func TestSRGBLab(t *testing.T) {
	L, a, b := srgbToLab(Whirl[0]) // exercise the path once
	_ = L + a + b
	cases := []struct {
		name    string
		r, g, b uint8
		L, A, B float64
	}{
		{"white", 255, 255, 255, 100, 0, 0},
		{"red", 255, 0, 0, 53.24, 80.09, 67.20},
		{"black", 0, 0, 0, 0, 0, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			L, a, b := srgbToLab(rgba(c.r, c.g, c.b))
			if math.Abs(L-c.L) > 0.1 || math.Abs(a-c.A) > 0.2 || math.Abs(b-c.B) > 0.2 {
				t.Errorf("Lab = %.2f %.2f %.2f, want %.2f %.2f %.2f", L, a, b, c.L, c.A, c.B)
			}
			r, g, bl, ok := labToSRGB(c.L, c.A, c.B)
			if !ok || math.Abs(r*255-float64(c.r)) > 0.6 || math.Abs(g*255-float64(c.g)) > 0.6 || math.Abs(bl*255-float64(c.b)) > 0.6 {
				t.Errorf("back to sRGB %.1f %.1f %.1f ok=%v", r*255, g*255, bl*255, ok)
			}
		})
	}
}

// The colour map's design properties: lightness rises monotonically (the
// requirement for a sequential map to be read in grey scale), every
// entry is inside the sRGB gamut, and equal steps are near-equal colour
// differences.
func TestWhirlPerceptual(t *testing.T) {
	prevL := -1.0
	for i := range Whirl {
		L, a, b := WhirlLab(float64(i) / 255)
		if L <= prevL {
			t.Fatalf("entry %d: L* = %.3f not above %.3f", i, L, prevL)
		}
		prevL = L
		if _, _, _, ok := labToSRGB(L, a, b); !ok {
			t.Errorf("entry %d outside the sRGB gamut", i)
		}
		// 8-bit entries stay within ΔE 1 of the design (rounding only).
		L8, a8, b8 := srgbToLab(Whirl[i])
		if d := dist(L, a, b, L8, a8, b8); d > 1 {
			t.Errorf("entry %d: 8-bit colour %.2f ΔE from design", i, d)
		}
	}
	const step = 8
	lo, hi := math.Inf(1), 0.0
	for i := step; i < 256; i += step {
		L0, a0, b0 := WhirlLab(float64(i-step) / 255)
		L1, a1, b1 := WhirlLab(float64(i) / 255)
		d := dist(L0, a0, b0, L1, a1, b1)
		lo, hi = min(lo, d), max(hi, d)
	}
	t.Logf("ΔE*ab over %d entries: %.2f … %.2f; L* %.1f … %.1f", step, lo, hi, LightnessLo, prevL)
	if hi/lo > 1.25 {
		t.Errorf("colour steps uneven: ΔE %.2f … %.2f", lo, hi)
	}
	if c := Whirl.At(math.NaN()); c != Whirl[0] {
		t.Errorf("At(NaN) = %v, want first entry", c)
	}
	if c := Whirl.At(2); c != Whirl[255] {
		t.Errorf("At(2) = %v, want last entry", c)
	}
}

func dist(L0, a0, b0, L1, a1, b1 float64) float64 {
	return math.Sqrt((L1-L0)*(L1-L0) + (a1-a0)*(a1-a0) + (b1-b0)*(b1-b0))
}
