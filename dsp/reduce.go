package dsp

import (
	"fmt"
	"math"
	"sync"
)

// Reduced copies for display. A 10-minute recording at 48 kHz with the
// default frame and hop has 112,000 frames × 1025 bins (460 MB of float32);
// a window a few thousand pixels wide needs far fewer rows. Both ways
// below max-pool consecutive frames in groups of g = ⌈frames/maxFrames⌉,
// so a narrow line or a short burst survives reduction, and set Hop to
// g·Hop and T0 so that FrameTimeS(i) is the mean centre time of group i
// (exact for full groups; the last group may hold fewer frames).

// reducedGeometry returns the group size and the shape of the reduced copy.
func reducedGeometry(frames, maxFrames int) (group, rows int) {
	if maxFrames < 1 {
		panic(fmt.Sprintf("dsp: maxFrames %d < 1", maxFrames))
	}
	group = max(1, (frames+maxFrames-1)/maxFrames)
	return group, (frames + group - 1) / group
}

// Reduce returns a copy of s with at most maxFrames frames, each the
// bin-wise maximum over g = ⌈Frames/maxFrames⌉ consecutive frames; Hop
// becomes g·Hop and T0 moves to the first group's mean centre. When s
// already has at most maxFrames frames, Reduce returns s itself. It panics
// if maxFrames < 1.
func (s *Spectrogram) Reduce(maxFrames int) *Spectrogram {
	g, rows := reducedGeometry(s.Frames, maxFrames)
	if g == 1 {
		return s
	}
	r := s.reducedHeader(g, rows)
	for i := range s.Frames {
		maxInto(r.Row(i/g), s.Row(i))
	}
	return r
}

func (s *Spectrogram) reducedHeader(g, rows int) *Spectrogram {
	r := *s
	r.Frames = rows
	r.Hop = g * s.Hop
	r.T0 = s.T0 + float64(g-1)/2*float64(s.Hop)/s.SampleRate
	r.Mag = make([]float32, rows*s.Bins)
	return &r
}

func maxInto(dst, src []float32) {
	src = src[:len(dst)]
	for k, v := range src {
		if v > dst[k] {
			dst[k] = v
		}
	}
}

// Reducer builds a reduced magnitude spectrogram while Process streams the
// frames, so the full spectrogram is never held: memory is maxFrames·Bins
// float32 plus one row per worker, whatever the recording's length. Use
// its Frame method as (or inside) the FrameFunc, then call Spectrogram
// after Process returns:
//
//	r := dsp.NewReducer(cfg, fs, len(x), 2000)
//	err := cfg.Process(ctx, x, fs, r.Frame, progress)
//	s := r.Spectrogram()
//
// Process must run with the cfg given to NewReducer (its Workers count
// sizes the per-worker rows). Each worker pools its consecutive frames into
// a private row and merges
// the row into the shared copy (under a per-row lock) when it moves to
// another group, so the locks are taken about once per group, not per
// frame.
type Reducer struct {
	s       *Spectrogram
	group   int
	locks   []sync.Mutex
	workers []reducerWorker
}

type reducerWorker struct {
	row     []float32
	mag     []float32
	current int // group held in row, −1 for none
}

// NewReducer prepares a reduced spectrogram of at most maxFrames frames for
// the STFT of nSamples samples at rate fs with cfg (resolved as Process
// resolves it). It returns an error when cfg is invalid or the signal is
// shorter than one frame, and panics if maxFrames < 1.
func NewReducer(cfg STFTConfig, fs float64, nSamples, maxFrames int) (*Reducer, error) {
	cfg = cfg.Resolve(fs)
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	nf := cfg.NumFrames(nSamples)
	if nf == 0 {
		return nil, fmt.Errorf("dsp: signal of %d samples is shorter than one frame of %d", nSamples, cfg.FrameLen)
	}
	g, rows := reducedGeometry(nf, maxFrames)
	full := &Spectrogram{Frames: nf, Bins: cfg.Bins(), FrameLen: cfg.FrameLen, Hop: cfg.Hop, FFTLen: cfg.FFTLen, SampleRate: fs, Window: cfg.Window}
	r := &Reducer{s: full.reducedHeader(g, rows), group: g, locks: make([]sync.Mutex, rows)}
	r.workers = make([]reducerWorker, cfg.Workers)
	for w := range r.workers {
		r.workers[w] = reducerWorker{row: make([]float32, full.Bins), mag: make([]float32, full.Bins), current: -1}
	}
	return r, nil
}

// Frame is a FrameFunc: it max-pools frame's magnitudes into its group.
func (r *Reducer) Frame(worker, frame int, re, im []float32) {
	w := &r.workers[worker]
	g := frame / r.group
	if g != w.current {
		r.flush(w)
		w.current = g
		magnitude(w.row, re, im)
		return
	}
	magnitude(w.mag, re, im)
	maxInto(w.row, w.mag)
}

func (r *Reducer) flush(w *reducerWorker) {
	if w.current < 0 {
		return
	}
	r.locks[w.current].Lock()
	maxInto(r.s.Row(w.current), w.row)
	r.locks[w.current].Unlock()
	w.current = -1
}

// Spectrogram merges what the workers still hold and returns the reduced
// spectrogram. Call it once Process has returned (not concurrently with
// Frame).
func (r *Reducer) Spectrogram() *Spectrogram {
	for w := range r.workers {
		r.flush(&r.workers[w])
	}
	return r.s
}

// MaxMag returns the largest magnitude in s (0 for an empty spectrogram),
// a convenient reference for display scaling.
func (s *Spectrogram) MaxMag() float32 {
	var m float32
	for _, v := range s.Mag {
		m = float32(math.Max(float64(m), float64(v)))
	}
	return m
}
