package ui

import (
	"image"
	"sync"

	"whirlfit/analysis"
	"whirlfit/analysis/figure"
)

// overlayImage draws the comparison's overlay of normalised step
// responses (the core's ComparePlot) at the size the raster asks for,
// re-rendering only when the reports, the chosen step or the size change.
type overlayImage struct {
	mu     sync.Mutex
	reps   []*analysis.Report
	labels []string
	step   figure.CompareStep
	gen    int
	img    *image.RGBA
	key    [3]int
	err    error
}

func (o *overlayImage) set(reps []*analysis.Report, labels []string, step figure.CompareStep) {
	o.mu.Lock()
	o.reps, o.labels, o.step = reps, labels, step
	o.gen++
	o.mu.Unlock()
}

func (o *overlayImage) draw(w, h int) image.Image {
	o.mu.Lock()
	defer o.mu.Unlock()
	k := [3]int{w, h, o.gen}
	if o.img != nil && k == o.key {
		return o.img
	}
	o.key = k
	o.err = nil
	if len(o.reps) > 0 {
		p, err := figure.ComparePlotStep(o.reps, o.labels, o.step, figure.Options{})
		if err == nil {
			o.img = figure.RenderImage(p, w, h)
			return o.img
		}
		o.err = err
	}
	o.img = image.NewRGBA(image.Rect(0, 0, w, h))
	fillImage(o.img, toRGBA(themeBackground()))
	return o.img
}
