package ui

import (
	"context"
	"sync"
	"time"

	"fyne.io/fyne/v2"
)

// progressInterval caps progress updates at about 60 per second, the rate
// a display refreshes at (common practice).
const progressInterval = time.Second / 60

// uiMu serialises the UI-side callbacks of all jobs. Under the desktop
// driver they already run one at a time on the UI goroutine and the lock is
// never contended; under Fyne's test driver fyne.Do runs them inline on the
// worker goroutines, and the lock keeps them (and tests, through onUI) from
// touching widgets at the same time.
var uiMu sync.Mutex

// onUI runs f under uiMu; tests use it for their own widget actions while
// jobs may be running.
func onUI(f func()) {
	uiMu.Lock()
	defer uiMu.Unlock()
	f()
}

// job runs one background computation at a time. Starting a new one
// cancels the previous one; only the latest job's progress and result reach
// the UI. It is the one place where worker goroutines hand back to the UI
// goroutine (through fyne.Do).
type job struct {
	mu     sync.Mutex
	gen    uint64
	cancel context.CancelFunc
	// wg counts running workers so that tests can wait for them.
	wg sync.WaitGroup
}

// work is a background computation. progress(frac) may be called from any
// goroutine, as often as the work likes; frac runs from 0 to 1. partial
// hands an intermediate result to the UI (a preview before the final one).
type work func(ctx context.Context, progress func(frac float64), partial func(v any)) (any, error)

// start cancels whatever runs and starts w on a new goroutine. onProgress,
// onPartial and onDone run on the UI goroutine, and only while this job is
// the latest one; onDone is not called for a job that was superseded or
// cancelled. onProgress and onPartial may be nil.
func (j *job) start(w work, onProgress func(frac float64), onPartial func(v any), onDone func(v any, err error)) {
	j.mu.Lock()
	if j.cancel != nil {
		j.cancel()
	}
	ctx, cancel := context.WithCancel(context.Background())
	j.gen++
	gen := j.gen
	j.cancel = cancel
	j.wg.Add(1)
	j.mu.Unlock()

	current := func() bool {
		j.mu.Lock()
		defer j.mu.Unlock()
		return j.gen == gen
	}
	var (
		pmu  sync.Mutex
		last time.Time
	)
	progress := func(frac float64) {
		if onProgress == nil {
			return
		}
		pmu.Lock()
		now := time.Now()
		if now.Sub(last) < progressInterval && frac < 1 {
			pmu.Unlock()
			return
		}
		last = now
		pmu.Unlock()
		fyne.Do(func() {
			onUI(func() {
				if current() {
					onProgress(frac)
				}
			})
		})
	}
	partial := func(v any) {
		if onPartial == nil {
			return
		}
		fyne.Do(func() {
			onUI(func() {
				if current() {
					onPartial(v)
				}
			})
		})
	}
	go func() {
		defer j.wg.Done()
		defer cancel()
		v, err := w(ctx, progress, partial)
		fyne.Do(func() {
			onUI(func() {
				if current() {
					j.mu.Lock()
					j.cancel = nil
					j.mu.Unlock()
					onDone(v, err)
				}
			})
		})
	}()
}

// stop cancels the running job, if any; its onDone is not called.
func (j *job) stop() {
	j.mu.Lock()
	defer j.mu.Unlock()
	if j.cancel != nil {
		j.cancel()
		j.cancel = nil
	}
	j.gen++
}

// running reports whether a job has been started and not yet finished.
func (j *job) running() bool {
	j.mu.Lock()
	defer j.mu.Unlock()
	return j.cancel != nil
}

// wait blocks until every started worker goroutine has returned. Tests use
// it; the UI never does.
func (j *job) wait() { j.wg.Wait() }
