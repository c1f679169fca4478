package figure

import (
	"image"
	"image/color"
	"math"
	"slices"

	"whirlfit/analysis"
	"whirlfit/dsp"
)

// View is the visible part of a spectrogram and its colour scale: times in
// seconds, frequencies in Hz, levels in dB relative to RefMag.
type View struct {
	T0, T1     float64
	F0, F1     float64
	DBLo, DBHi float64
	// RefMag is the magnitude of 0 dB; 0 means MagRef(s). DefaultView
	// fills it, so that rendering need not recompute the window.
	RefMag float64
}

// Valid reports whether the view spans a positive time, frequency and level
// range.
func (v View) Valid() bool {
	ok := func(a, b float64) bool { return b > a && !math.IsInf(a, 0) && !math.IsInf(b, 0) }
	return ok(v.T0, v.T1) && ok(v.F0, v.F1) && ok(v.DBLo, v.DBHi)
}

// MagRef is the magnitude taken as 0 dB: the STFT peak magnitude of a
// full-scale sine (amplitude 1) through the spectrogram's window,
// FrameLen/2 × the window's coherent gain (dsp.Spectrogram.FullScaleMag;
// FrameLen/4 for Hann, Harris 1978). Levels are therefore dB relative to
// full scale (dBFS) for tonal lines.
func MagRef(s *dsp.Spectrogram) float64 { return s.FullScaleMag() }

// DB converts an STFT magnitude of s to decibels: 20·log10(mag/MagRef(s)).
func DB(s *dsp.Spectrogram, mag float64) float64 { return 20 * math.Log10(mag/MagRef(s)) }

// OutsideColor fills the pixels of a view that lie outside the recording's
// times or frequencies.
var OutsideColor = color.RGBA{R: 128, G: 128, B: 128, A: 255}

// RenderSpectrogram colours the part of s that v shows into all of dst:
// column x covers times T0 + [x, x+1)·(T1−T0)/W, row y (0 at the top)
// frequencies F1 − [y, y+1)·(F1−F0)/H. Where a pixel covers several frames
// or bins it shows their largest magnitude, so narrow lines survive a
// zoomed-out view; where it covers less than one it shows the nearest cell.
// Levels at or below DBLo get Whirl's first colour, at or above DBHi its
// last. It allocates nothing, so a window can redraw on every zoom or pan.
func RenderSpectrogram(dst *image.RGBA, s *dsp.Spectrogram, v View) {
	b := dst.Bounds()
	w, h := b.Dx(), b.Dy()
	if w <= 0 || h <= 0 {
		return
	}
	if s == nil || s.Frames == 0 || s.Bins == 0 || !v.Valid() {
		fillRGBA(dst, OutsideColor)
		return
	}
	// Magnitude thresholds for the 255 boundaries between colour entries,
	// so that each pixel needs comparisons instead of a logarithm.
	var thr [255]float32
	ref := v.RefMag
	if !(ref > 0) {
		ref = MagRef(s)
	}
	for i := range thr {
		db := v.DBLo + (v.DBHi-v.DBLo)*(float64(i)+0.5)/255
		thr[i] = float32(ref * math.Pow(10, db/20))
	}
	cmap := Whirl

	// Frame i's centre is at tc0 + i·dt; bin k's centre at k·df.
	dt := float64(s.Hop) / s.SampleRate
	tc0 := s.FrameTimeS(0)
	df := s.SampleRate / float64(s.FFTLen)
	pxT := (v.T1 - v.T0) / float64(w)
	pxF := (v.F1 - v.F0) / float64(h)

	// Columns outside, rows inside: a column's frames are contiguous bins
	// in Mag, so this order reads the magnitudes in memory order. Each
	// row's bins are found once (kept on the stack for up to maxCachedRows
	// rows).
	var rows [maxCachedRows]cellSpan
	rowSpan := func(y int) cellSpan {
		fb := v.F1 - float64(y+1)*pxF
		k0, k1, ok := cellRange(fb, fb+pxF, 0, df, s.Bins)
		return cellSpan{int32(k0), int32(k1), ok}
	}
	cached := h <= maxCachedRows
	if cached {
		for y := 0; y < h; y++ {
			rows[y] = rowSpan(y)
		}
	}
	stride := dst.Stride
	prevF0, prevF1, prevOK := -1, -1, false
	for x := 0; x < w; x++ {
		ta := v.T0 + float64(x)*pxT
		f0, f1, okT := cellRange(ta, ta+pxT, tc0, dt, s.Frames)
		off := dst.PixOffset(b.Min.X+x, b.Min.Y)
		if x > 0 && f0 == prevF0 && f1 == prevF1 && okT == prevOK {
			// Zoomed in: the same frames as the previous column.
			for y := 0; y < h; y++ {
				p := off + y*stride
				copy(dst.Pix[p:p+4], dst.Pix[p-4:p])
			}
			continue
		}
		prevF0, prevF1, prevOK = f0, f1, okT
		last := cellSpan{i0: -1}
		var lastC color.RGBA
		for y := 0; y < h; y++ {
			var cs cellSpan
			if cached {
				cs = rows[y]
			} else {
				cs = rowSpan(y)
			}
			px := dst.Pix[off+y*stride : off+y*stride+4 : off+y*stride+4]
			if !okT || !cs.ok {
				px[0], px[1], px[2], px[3] = OutsideColor.R, OutsideColor.G, OutsideColor.B, OutsideColor.A
				continue
			}
			if cs == last {
				// Zoomed in: the same bins as the row above.
				px[0], px[1], px[2], px[3] = lastC.R, lastC.G, lastC.B, lastC.A
				continue
			}
			var m float32
			k0, k1 := int(cs.i0), int(cs.i1)
			for fr := f0; fr < f1; fr++ {
				for _, val := range s.Mag[fr*s.Bins+k0 : fr*s.Bins+k1] {
					if val > m {
						m = val
					}
				}
			}
			// Colour index: number of thresholds below m (binary search).
			lo, hi := 0, len(thr)
			for lo < hi {
				mid := int(uint(lo+hi) >> 1)
				if thr[mid] < m {
					lo = mid + 1
				} else {
					hi = mid
				}
			}
			c := cmap[lo]
			px[0], px[1], px[2], px[3] = c.R, c.G, c.B, c.A
			last, lastC = cs, c
		}
	}
}

// maxCachedRows bounds the per-row table RenderSpectrogram keeps on the
// stack (48 KB); taller images compute each row's bins per pixel.
const maxCachedRows = 4096

type cellSpan struct {
	i0, i1 int32
	ok     bool
}

// cellRange returns the cells [i0, i1) of a grid with centres c0 + i·step
// (0 ≤ i < n) whose centres lie in [a, b), or the nearest cell when none
// does. ok is false when [a, b) lies wholly beyond half a step outside the
// grid.
func cellRange(a, b, c0, step float64, n int) (i0, i1 int, ok bool) {
	lo := (a - c0) / step
	hi := (b - c0) / step
	if hi < -0.5 || lo > float64(n)-0.5 {
		return 0, 0, false
	}
	i0 = int(math.Ceil(lo))
	i1 = int(math.Ceil(hi))
	i0 = max(i0, 0)
	i1 = min(i1, n)
	if i1 <= i0 {
		i := int(math.Round((lo + hi) / 2))
		i = min(max(i, 0), n-1)
		return i, i + 1, true
	}
	return i0, i1, true
}

func fillRGBA(dst *image.RGBA, c color.RGBA) {
	b := dst.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		off := dst.PixOffset(b.Min.X, y)
		row := dst.Pix[off : off+4*b.Dx()]
		for i := 0; i < len(row); i += 4 {
			row[i], row[i+1], row[i+2], row[i+3] = c.R, c.G, c.B, c.A
		}
	}
}

// Default view settings.
const (
	// viewHeadroom is how far above the highest blade-pass frequency the
	// default view reaches (25 % more), so the line is not on the edge.
	viewHeadroom = 1.25
	// viewFallbackHz is the top of the default view when no motor was
	// tracked.
	viewFallbackHz = 4000
	// Level percentiles of the visible cells that set the colour scale:
	// the floor sits at the median (most cells are background noise), the
	// top at the 99.9th percentile (the tonal lines).
	viewPctLo = 0.50
	viewPctHi = 0.999
	// viewMinRangeDB keeps a flat recording from giving a degenerate scale.
	viewMinRangeDB = 20
	// viewSampleCells bounds how many cells the percentiles look at.
	viewSampleCells = 200000
)

// DefaultView shows the whole recording from 0 Hz to 25 % above the highest
// tracked blade-pass frequency (blades × the 99th-percentile shaft
// frequency; blades ≤ 0 takes the track's count), so both the shaft line
// and the blade-pass line are in view; without a usable track it shows 0 to
// 4 kHz. The colour scale runs from the median level of the visible cells
// (the noise floor) to their 99.9th percentile.
func DefaultView(s *dsp.Spectrogram, blades int, track *analysis.Track) View {
	var v View
	if s == nil || s.Frames == 0 || s.Bins == 0 {
		return View{T0: 0, T1: 1, F0: 0, F1: viewFallbackHz, DBLo: -100, DBHi: 0, RefMag: 1}
	}
	dt := float64(s.Hop) / s.SampleRate
	v.T0 = s.FrameTimeS(0) - dt/2
	v.T1 = s.FrameTimeS(s.Frames-1) + dt/2
	nyq := s.BinHz(float64(s.Bins - 1))
	v.F1 = min(viewFallbackHz, nyq)
	if track != nil {
		if blades <= 0 {
			blades = track.Blades
		}
		blades = max(blades, 1)
		var hz []float64
		for i := range track.ShaftHz {
			if track.Valid(i) {
				hz = append(hz, track.ShaftHz[i])
			}
		}
		if len(hz) > 0 {
			slices.Sort(hz)
			top := hz[int(0.99*float64(len(hz)-1))]
			v.F1 = min(nyq, viewHeadroom*analysis.BladePassHz(top, blades))
		}
	}
	v.RefMag = MagRef(s)
	v.DBLo, v.DBHi = levelRange(s, v.F1, v.RefMag)
	return v
}

// levelRange returns the dB levels at the view percentiles of the cells
// from 0 to fTop Hz.
func levelRange(s *dsp.Spectrogram, fTop, ref float64) (lo, hi float64) {
	kTop := min(s.Bins, int(fTop/s.BinHz(1))+1)
	frStride := max(1, s.Frames*kTop/viewSampleCells)
	vals := make([]float32, 0, (s.Frames/frStride+1)*kTop)
	for fr := 0; fr < s.Frames; fr += frStride {
		vals = append(vals, s.Row(fr)[:kTop]...)
	}
	// Two order statistics, not a sort: the values a sort would put there.
	q := func(p float64) float64 {
		m := float64(dsp.SelectK(vals, int(p*float64(len(vals)-1))))
		return 20 * math.Log10(max(m, 1e-12)/ref)
	}
	lo, hi = q(viewPctLo), q(viewPctHi)
	if hi-lo < viewMinRangeDB {
		lo = hi - viewMinRangeDB
	}
	return lo, hi
}
