// Package ui is whirlfit's window: a thin Fyne layer over the headless core
// in whirlfit/dsp and whirlfit/analysis.
//
// The window shows one recording at a time as a spectrogram (or as rpm over
// time) with the tracked ridge, the fitted step responses and their 95 %
// bands, the table of per-step results, and a comparison of several
// recordings. Everything that computes — decoding, tracking, fitting,
// figures, exports — lives in the core; this package collects settings,
// starts the core on a worker goroutine and shows what comes back.
//
// Threading: Fyne runs every callback on its UI goroutine. Long work runs in
// a [job] on its own goroutine; the job's results and its throttled progress
// come back through fyne.Do in one place (job.go). Each new job cancels the
// previous one's context, and a result that arrives from a superseded job is
// dropped, so stale results never replace newer ones.
package ui
