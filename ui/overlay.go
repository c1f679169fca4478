package ui

import (
	"image"
	"sync"

	"whirlfit/analysis"
)

// overlayImage draws the comparison's overlay of normalised step
// responses at the size the raster asks for, re-rendering only when the
// reports or the size change.
type overlayImage struct {
	mu     sync.Mutex
	reps   []*analysis.Report
	labels []string
	gen    int
	img    *image.RGBA
	key    [3]int
}

func (o *overlayImage) set(reps []*analysis.Report, labels []string) {
	o.mu.Lock()
	o.reps, o.labels = reps, labels
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
	o.img = image.NewRGBA(image.Rect(0, 0, w, h))
	fillImage(o.img, toRGBA(themeBackground()))
	return o.img
}
