package figure

import (
	"math"
	"testing"
)

func TestViewZoomPanClamp(t *testing.T) {
	s := lineSpectrogram(400, 1025, 100) // 48 kHz, hop 256: 5.33 ms frames
	full := DefaultView(s, 2, nil)
	full.F1 = s.BinHz(1024) // 0 … 24 kHz

	z := full.Zoom(0.5, 0.25, 1.0, 1000)
	if math.Abs((z.T1-z.T0)-(full.T1-full.T0)/2) > 1e-12 || math.Abs((z.F1-z.F0)-(full.F1-full.F0)/4) > 1e-9 {
		t.Errorf("zoom spans %g s, %g Hz", z.T1-z.T0, z.F1-z.F0)
	}
	// The zoom centre stays put on the screen.
	frac := func(a, lo, hi float64) float64 { return (a - lo) / (hi - lo) }
	if math.Abs(frac(1.0, z.T0, z.T1)-frac(1.0, full.T0, full.T1)) > 1e-12 {
		t.Errorf("zoom centre moved")
	}
	if got := full.Zoom(1, 1, 0, 0); got != full {
		t.Errorf("factor 1 changed the view")
	}

	// Panning past the start is moved back inside, span kept.
	p := z.Pan(-100, -1e5).ClampTo(s)
	if math.Abs(p.T0-full.T0) > 1e-12 || math.Abs((p.T1-p.T0)-(z.T1-z.T0)) > 1e-12 || p.F0 != 0 {
		t.Errorf("clamped pan %+v", p)
	}
	// Zooming out past everything shows everything.
	if o := full.Zoom(10, 10, 1, 1000).ClampTo(s); math.Abs(o.T0-full.T0) > 1e-12 || math.Abs(o.T1-full.T1) > 1e-12 || o.F0 != 0 || o.F1 != full.F1 {
		t.Errorf("zoomed out %+v, want %+v", o, full)
	}
	// Zooming in without end stops at 4 frames and 4 bins.
	in := full.Zoom(1e-9, 1e-9, 1, 1000).ClampTo(s)
	dt := float64(s.Hop) / s.SampleRate
	if math.Abs((in.T1-in.T0)-4*dt) > 1e-12 || math.Abs((in.F1-in.F0)-4*s.BinHz(1)) > 1e-9 {
		t.Errorf("deepest zoom %g s × %g Hz", in.T1-in.T0, in.F1-in.F0)
	}

	// At is the inverse of RenderSpectrogram's pixel mapping.
	v := View{T0: 0, T1: 2, F0: 0, F1: 1000}
	if tS, hz := v.At(0, 0, 200, 100); math.Abs(tS-0.005) > 1e-12 || math.Abs(hz-995) > 1e-9 {
		t.Errorf("At(0,0) = %g s, %g Hz", tS, hz)
	}
}
