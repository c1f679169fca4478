package figure

import (
	"image/color"
	"math"
)

// ColorMap is a 256-entry colour table: entry 0 is the lowest value shown,
// entry 255 the highest.
type ColorMap [256]color.RGBA

// At returns the colour for x in [0, 1] (clamped; NaN gives entry 0).
func (m *ColorMap) At(x float64) color.RGBA {
	if !(x > 0) {
		return m[0]
	}
	if x >= 1 {
		return m[255]
	}
	return m[int(x*255+0.5)]
}

// Lightness is the design path of the whirlfit colour map in CIELAB: the
// lightness L* rises linearly from LightnessLo to LightnessHi while the hue
// angle turns from violet through blue, teal and green to yellow.
const (
	LightnessLo = 14.0
	LightnessHi = 93.0
	hueLoDeg    = 300.0
	hueHiDeg    = 100.0
)

// Whirl is whirlfit's own perceptually ordered colour map, designed in CIELAB
// (D65): lightness L* rises linearly with the value (so brightness alone
// orders the values, also in grey-scale print and for colour-blind
// readers), the hue turns from violet (low) to yellow (high), and the chroma
// follows a smooth curve kept inside the sRGB gamut. The neighbouring-entry
// colour difference ΔE*ab is near constant (see the tests). Built from the
// formulas in colorLab, not copied from any table.
var Whirl = buildWhirl()

func buildWhirl() *ColorMap {
	var m ColorMap
	for i := range m {
		L, a, b := WhirlLab(float64(i) / 255)
		r, g, bl, _ := labToSRGB(L, a, b)
		m[i] = color.RGBA{R: to8(r), G: to8(g), B: to8(bl), A: 255}
	}
	return &m
}

// whirlArc holds the design path's cumulative colour difference ΔE*ab at
// whirlArcN+1 equally spaced path parameters, normalised to end at 1.
var whirlArc = func() []float64 {
	arc := make([]float64, whirlArcN+1)
	L0, a0, b0 := whirlPath(0)
	for i := 1; i <= whirlArcN; i++ {
		L, a, b := whirlPath(float64(i) / whirlArcN)
		arc[i] = arc[i-1] + math.Sqrt((L-L0)*(L-L0)+(a-a0)*(a-a0)+(b-b0)*(b-b0))
		L0, a0, b0 = L, a, b
	}
	for i := range arc {
		arc[i] /= arc[whirlArcN]
	}
	return arc
}()

const whirlArcN = 4096

// WhirlLab returns the CIELAB coordinates of the colour map at x in [0, 1].
// The design path (whirlPath) is re-parametrised by its arc length in
// ΔE*ab, so that equal steps in x are equal perceived colour steps.
func WhirlLab(x float64) (L, a, b float64) {
	x = min(max(x, 0), 1)
	// Find u with arc(u) = x by bisection on the monotone table.
	lo, hi := 0, whirlArcN
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if whirlArc[mid] <= x {
			lo = mid
		} else {
			hi = mid
		}
	}
	f := 0.0
	if d := whirlArc[hi] - whirlArc[lo]; d > 0 {
		f = (x - whirlArc[lo]) / d
	}
	return whirlPath((float64(lo) + f) / whirlArcN)
}

// whirlPath is the design path at parameter u in [0, 1].
func whirlPath(x float64) (L, a, b float64) {
	L = LightnessLo + (LightnessHi-LightnessLo)*x
	h := (hueLoDeg + (hueHiDeg-hueLoDeg)*x) * math.Pi / 180
	c := whirlChroma(x, L, h)
	return L, c * math.Cos(h), c * math.Sin(h)
}

// whirlChroma is the chroma along the path: a gentle bow (lower in the
// dark end, fuller at the yellow end) limited to 92 % of the largest
// in-gamut chroma at that lightness and hue.
func whirlChroma(x, L, h float64) float64 {
	want := 38 + 20*x + 12*math.Sin(math.Pi*x)
	lo, hi := 0.0, 160.0
	for range 40 {
		mid := (lo + hi) / 2
		if inGamut(L, mid*math.Cos(h), mid*math.Sin(h)) {
			lo = mid
		} else {
			hi = mid
		}
	}
	return min(want, 0.92*lo)
}

func inGamut(L, a, b float64) bool {
	_, _, _, ok := labToSRGB(L, a, b)
	return ok
}

// labToSRGB converts CIELAB (D65 white) to gamma-encoded sRGB in [0, 1]
// (IEC 61966-2-1 matrix and transfer curve; CIE 15 Lab definition). ok is
// false when the colour lies outside the sRGB gamut (the result is clamped).
func labToSRGB(L, a, b float64) (r, g, bl float64, ok bool) {
	const xn, yn, zn = 0.95047, 1.0, 1.08883 // D65 reference white
	fy := (L + 16) / 116
	fx := fy + a/500
	fz := fy - b/200
	finv := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d {
			return t * t * t
		}
		return 3 * d * d * (t - 4.0/29)
	}
	X, Y, Z := xn*finv(fx), yn*finv(fy), zn*finv(fz)
	lr := 3.2406*X - 1.5372*Y - 0.4986*Z
	lg := -0.9689*X + 1.8758*Y + 0.0415*Z
	lb := 0.0557*X - 0.2040*Y + 1.0570*Z
	const eps = 5e-4 // the D65 white maps to 1 + 3e-5 with the 4-digit matrix
	ok = lr >= -eps && lr <= 1+eps && lg >= -eps && lg <= 1+eps && lb >= -eps && lb <= 1+eps
	return gammaSRGB(lr), gammaSRGB(lg), gammaSRGB(lb), ok
}

func gammaSRGB(c float64) float64 {
	c = min(max(c, 0), 1)
	if c <= 0.0031308 {
		return 12.92 * c
	}
	return 1.055*math.Pow(c, 1/2.4) - 0.055
}

// srgbToLab is the inverse of labToSRGB for 8-bit colours (used by tests
// and by the colour bar's checks).
func srgbToLab(c color.RGBA) (L, a, b float64) {
	lin := func(u uint8) float64 {
		v := float64(u) / 255
		if v <= 0.04045 {
			return v / 12.92
		}
		return math.Pow((v+0.055)/1.055, 2.4)
	}
	r, g, bl := lin(c.R), lin(c.G), lin(c.B)
	X := 0.4124*r + 0.3576*g + 0.1805*bl
	Y := 0.2126*r + 0.7152*g + 0.0722*bl
	Z := 0.0193*r + 0.1192*g + 0.9505*bl
	f := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d*d*d {
			return math.Cbrt(t)
		}
		return t/(3*d*d) + 4.0/29
	}
	fx, fy, fz := f(X/0.95047), f(Y), f(Z/1.08883)
	return 116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)
}

func to8(v float64) uint8 { return uint8(math.Round(min(max(v, 0), 1) * 255)) }
