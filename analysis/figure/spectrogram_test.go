package figure

import (
	"image"
	"image/color"
	"math"
	"testing"

	"whirlfit/analysis"
	"whirlfit/dsp"
)

func rgba(r, g, b uint8) color.RGBA { return color.RGBA{R: r, G: g, B: b, A: 255} }

// lineSpectrogram is invented data: a constant background and one line at
// bin lineBin whose level is 0 dB (MagRef), background at −60 dB.
func lineSpectrogram(frames, bins, lineBin int) *dsp.Spectrogram {
	s := &dsp.Spectrogram{Frames: frames, Bins: bins, FrameLen: 2048, Hop: 256, FFTLen: 2 * (bins - 1), SampleRate: 48000}
	s.Mag = make([]float32, frames*bins)
	ref := float32(MagRef(s))
	for i := range s.Mag {
		s.Mag[i] = ref * 1e-3
	}
	for fr := 0; fr < frames; fr++ {
		s.Row(fr)[lineBin] = ref
	}
	return s
}

func TestRenderSpectrogramLine(t *testing.T) {
	s := lineSpectrogram(400, 1025, 100) // bin 100 = 2343.75 Hz
	lineHz := s.BinHz(100)
	v := View{T0: s.FrameTimeS(0), T1: s.FrameTimeS(399), F0: 0, F1: 4000, DBLo: -80, DBHi: 0, RefMag: MagRef(s)}
	dst := image.NewRGBA(image.Rect(0, 0, 300, 200))
	RenderSpectrogram(dst, s, v)
	// The row whose frequency band holds the line shows the top colour.
	y := int((v.F1 - lineHz) / (v.F1 - v.F0) * 200)
	if got := dst.RGBAAt(150, y); got != Whirl[255] {
		t.Errorf("line pixel (150,%d) = %v, want %v", y, got, Whirl[255])
	}
	// Background at −60 dB on a −80…0 dB scale: entry ≈ 0.25·255.
	want := Whirl.At(20.0 / 80)
	got := dst.RGBAAt(150, 10)
	if cdiff(got, want) > 12 {
		t.Errorf("background pixel = %v, want ≈ %v", got, want)
	}
	// A view reaching past the recording paints the outside grey.
	v2 := v
	v2.T1 = v.T1 + (v.T1 - v.T0) // right half beyond the data
	RenderSpectrogram(dst, s, v2)
	if got := dst.RGBAAt(290, 10); got != OutsideColor {
		t.Errorf("outside pixel = %v, want %v", got, OutsideColor)
	}
	if got := dst.RGBAAt(10, 10); cdiff(got, want) > 12 {
		t.Errorf("inside pixel = %v, want ≈ %v", got, want)
	}
}

// A zoomed-out view keeps a one-bin line (max over the pixel's cells).
func TestRenderSpectrogramZoomedOut(t *testing.T) {
	s := lineSpectrogram(2000, 1025, 700)
	v := View{T0: 0, T1: s.FrameTimeS(1999), F0: 0, F1: 24000, DBLo: -80, DBHi: 0, RefMag: MagRef(s)}
	dst := image.NewRGBA(image.Rect(0, 0, 100, 100)) // ~10 bins per row
	RenderSpectrogram(dst, s, v)
	hot := 0
	for y := 0; y < 100; y++ {
		if dst.RGBAAt(50, y) == Whirl[255] {
			hot++
		}
	}
	if hot < 1 || hot > 2 {
		t.Errorf("%d rows show the line, want 1 or 2", hot)
	}
}

func TestRenderSpectrogramAllocs(t *testing.T) {
	s := lineSpectrogram(400, 1025, 100)
	v := DefaultView(s, 2, nil)
	dst := image.NewRGBA(image.Rect(0, 0, 120, 60))
	if n := testing.AllocsPerRun(10, func() { RenderSpectrogram(dst, s, v) }); n != 0 {
		t.Errorf("RenderSpectrogram allocates %v times per call, want 0", n)
	}
}

func TestDefaultView(t *testing.T) {
	s := lineSpectrogram(400, 1025, 16) // bin 16 = 375 Hz
	tr := &analysis.Track{Blades: 3}
	for i := 0; i < 400; i++ {
		tr.TimeS = append(tr.TimeS, s.FrameTimeS(i))
		hz := 200.0 + float64(i%2)*50 // 200 and 250 Hz shaft
		if i == 7 {
			hz = math.NaN()
		}
		tr.ShaftHz = append(tr.ShaftHz, hz)
	}
	v := DefaultView(s, 0, tr)
	// 1.25 × 3 blades × 250 Hz = 937.5 Hz
	if math.Abs(v.F1-937.5) > 1e-9 || v.F0 != 0 {
		t.Errorf("frequency range %g…%g Hz, want 0…937.5", v.F0, v.F1)
	}
	if !(v.T0 < s.FrameTimeS(0) && v.T1 > s.FrameTimeS(399)) {
		t.Errorf("time range %g…%g does not cover the frames", v.T0, v.T1)
	}
	// Background −60 dB is the median; the line's 0 dB is above the 99.9th
	// percentile: it fills 1 of the 41 visible bins (> 0.1 %).
	t.Logf("dB range %.1f … %.1f", v.DBLo, v.DBHi)
	if math.Abs(v.DBLo+60) > 0.01 || math.Abs(v.DBHi) > 0.01 {
		t.Errorf("dB range %.2f…%.2f, want −60…0", v.DBLo, v.DBHi)
	}
	if nv := DefaultView(nil, 2, nil); !nv.Valid() {
		t.Errorf("view of nil spectrogram invalid: %+v", nv)
	}
}

func cdiff(a, b color.RGBA) int {
	d := func(x, y uint8) int {
		if x > y {
			return int(x - y)
		}
		return int(y - x)
	}
	return max(d(a.R, b.R), d(a.G, b.G), d(a.B, b.B))
}

func BenchmarkRenderSpectrogram(b *testing.B) {
	for _, c := range []struct {
		name         string
		frames, bins int
		f1           float64
	}{
		{"2000x1025-1200x600-4kHz", 2000, 1025, 4000},
		{"2000x1025-1200x600-full", 2000, 1025, 24000},
		{"8000x2049-1200x600-full", 8000, 2049, 24000},
		{"2000x1025-1200x600-zoomed", 2000, 1025, -2000},
	} {
		b.Run(c.name, func(b *testing.B) {
			s := lineSpectrogram(c.frames, c.bins, 100)
			v := DefaultView(s, 2, nil)
			v.F1 = c.f1
			if c.f1 < 0 { // a window zoomed to 0.5 s and 0–2 kHz
				v.F1 = -c.f1
				v.T1 = v.T0 + 0.5
			}
			dst := image.NewRGBA(image.Rect(0, 0, 1200, 600))
			b.ReportAllocs()
			for b.Loop() {
				RenderSpectrogram(dst, s, v)
			}
		})
	}
}

// Images taller than the row table take the uncached path: same pixels.
func TestRenderSpectrogramTall(t *testing.T) {
	s := lineSpectrogram(50, 1025, 100)
	v := DefaultView(s, 2, nil)
	tall := image.NewRGBA(image.Rect(0, 0, 3, maxCachedRows+10))
	RenderSpectrogram(tall, s, v)
	short := image.NewRGBA(image.Rect(0, 0, 3, maxCachedRows+10))
	// Same view drawn in two halves of rows each under the limit.
	top := short.SubImage(image.Rect(0, 0, 3, 2048)).(*image.RGBA)
	bot := short.SubImage(image.Rect(0, 2048, 3, maxCachedRows+10)).(*image.RGBA)
	split := v.F1 - (v.F1-v.F0)*2048/float64(maxCachedRows+10)
	vt, vb := v, v
	vt.F0, vb.F1 = split, split
	RenderSpectrogram(top, s, vt)
	RenderSpectrogram(bot, s, vb)
	diff := 0
	for y := 0; y < maxCachedRows+10; y++ {
		if tall.RGBAAt(1, y) != short.RGBAAt(1, y) {
			diff++
		}
	}
	if diff > 2 { // rounding at the seam
		t.Errorf("%d rows differ between the cached and uncached paths", diff)
	}
}
