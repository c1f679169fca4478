package ui

import (
	"context"
	"sync/atomic"
	"testing"

	"fyne.io/fyne/v2/test"
)

// A second start cancels the first job, whose result never arrives.
func TestJobSupersedes(t *testing.T) {
	test.NewTempApp(t)
	var j job
	started := make(chan struct{})
	var firstDone, secondDone atomic.Int32
	var firstErr error
	j.start(func(ctx context.Context, _ func(float64), _ func(any)) (any, error) {
		close(started)
		<-ctx.Done()
		firstErr = ctx.Err()
		return "first", nil
	}, nil, nil, func(any, error) { firstDone.Add(1) })
	<-started
	var got any
	var partials []any
	j.start(func(ctx context.Context, p func(float64), part func(any)) (any, error) {
		for i := 0; i <= 1000; i++ {
			p(float64(i) / 1000)
		}
		part("preview")
		return "second", nil
	}, func(float64) {}, func(v any) { partials = append(partials, v) }, func(v any, _ error) { got = v; secondDone.Add(1) })
	j.wait()
	if firstDone.Load() != 0 {
		t.Error("the superseded job delivered its result")
	}
	if firstErr != context.Canceled {
		t.Errorf("first job's context: got %v, want context.Canceled", firstErr)
	}
	if secondDone.Load() != 1 || got != "second" {
		t.Errorf("second job: delivered %d time(s) with %v, want once with \"second\"", secondDone.Load(), got)
	}
	if len(partials) != 1 || partials[0] != "preview" {
		t.Errorf("partial results: got %v, want [preview]", partials)
	}
	if j.running() {
		t.Error("job still marked running after it finished")
	}
}
