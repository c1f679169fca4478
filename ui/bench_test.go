package ui

import (
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"sync/atomic"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/data/binding"
	"fyne.io/fyne/v2/storage"

	"whirlfit/dsp/synth"
)

// benchScene is a bench-test recording of durS seconds made by the
// project's synthesizer: a three-blade rotor stepping between 150 and
// 250 Hz shaft every 5 s (τ 40 ms, dead time 8 ms), 48 kHz, 20 dB SNR
// (invented data for speed measurements).
func benchScene(durS float64) synth.Scene {
	var steps []synth.Step
	for t, up := 2.0, true; t < durS-1; t, up = t+5, !up {
		target := 250.0
		if !up {
			target = 150
		}
		steps = append(steps, synth.Step{CommandS: t, TargetHz: target, TauS: 0.04, DeadS: 0.008})
	}
	return synth.Scene{
		SampleRate: 48000, DurationS: durS,
		Shaft: synth.Steps(150, steps...), Rotor: synth.NewRotor(3, 7),
		SNRdB: 20, Seed: 6,
	}
}

// writeBenchWAV renders the scene for chunkS seconds and writes it tiled
// to totalS seconds as a 16-bit WAV file (tiling keeps the synthesizer's
// memory out of a long recording's measurement).
func writeBenchWAV(b *testing.B, dir string, chunkS, totalS float64) string {
	b.Helper()
	x, err := synth.Render(benchScene(chunkS))
	if err != nil {
		b.Fatal(err)
	}
	all := make([]float32, 0, int(totalS/chunkS+0.5)*len(x))
	for len(all) < cap(all) {
		all = append(all, x...)
	}
	data, err := synth.EncodeWAV([][]float32{all}, 48000, 16)
	if err != nil {
		b.Fatal(err)
	}
	path := filepath.Join(dir, "bench.wav")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.Fatal(err)
	}
	return path
}

// BenchmarkDropToResults60s measures the time from dropping a 60 s
// recording on the window to its results being shown (decode, track, fit,
// the table and the plot data), and to its preview spectrogram being shown
// (s-to-spectrogram).
func BenchmarkDropToResults60s(b *testing.B) {
	path := writeBenchWAV(b, b.TempDir(), 60, 60)
	w, ch := newTestWindow(b)
	uri := []fyne.URI{storage.NewFileURI(path)}
	var start time.Time
	var toPreview time.Duration
	w.afterPreview = func() { toPreview += time.Since(start) }
	b.ReportAllocs()
	b.ResetTimer()
	cpu0 := cpuTime()
	for i := 0; i < b.N; i++ {
		start = time.Now()
		onUI(func() { w.HandleDrop(uri) })
		await(b, ch, 1)
	}
	b.StopTimer()
	b.ReportMetric((cpuTime()-cpu0).Seconds()/float64(b.N), "cpu-s/op")
	b.ReportMetric(toPreview.Seconds()/float64(b.N), "s-to-spectrogram")
	if w.cur.Err != nil {
		b.Fatal(w.cur.Err)
	}
	b.Logf("60 s recording: %d step(s) found", len(w.cur.Report.Steps))
}

// BenchmarkRecording30Min opens a 30 min recording and reports the peak
// resident memory of the process while it is decoded and analysed
// (peak-RSS-MB), the time to its spectrogram (s-to-spectrogram) and to
// results (s-to-results), how many progress
// updates reached the window (progress-updates) and the longest gap
// between two of them (max-progress-gap-ms). The UI goroutine itself never
// waits for the work: it only starts the job and takes the result.
func BenchmarkRecording30Min(b *testing.B) {
	path := writeBenchWAV(b, b.TempDir(), 60, 30*60)
	runtime.GC()
	debug.FreeOSMemory()
	for i := 0; i < b.N; i++ {
		w, ch := newTestWindow(b)
		var updates atomic.Int64
		var lastNs, maxGapNs atomic.Int64
		lastNs.Store(time.Now().UnixNano())
		w.progress.AddListener(binding.NewDataListener(func() {
			now := time.Now().UnixNano()
			if gap := now - lastNs.Swap(now); gap > maxGapNs.Load() {
				maxGapNs.Store(gap)
			}
			updates.Add(1)
		}))
		resetPeakRSS()
		cpu0 := cpuTime()
		start := time.Now()
		var toPreview time.Duration
		w.afterPreview = func() { toPreview = time.Since(start) }
		onUI(func() { w.HandleDrop([]fyne.URI{storage.NewFileURI(path)}) })
		awaitFor(b, ch, 1, 40*time.Minute)
		el := time.Since(start)
		if w.cur.Err != nil {
			b.Fatal(w.cur.Err)
		}
		b.ReportMetric(float64(peakRSS())/(1<<20), "peak-RSS-MB")
		b.ReportMetric(el.Seconds(), "s-to-results")
		b.ReportMetric(toPreview.Seconds(), "s-to-spectrogram")
		b.ReportMetric((cpuTime() - cpu0).Seconds(), "cpu-s")
		b.ReportMetric(float64(updates.Load()), "progress-updates")
		b.ReportMetric(float64(maxGapNs.Load())/1e6, "max-progress-gap-ms")
		b.Logf("30 min: %d step(s), %.1f s to results, peak RSS %d MB", len(w.cur.Report.Steps), el.Seconds(), peakRSS()>>20)
	}
}

// BenchmarkZoomRender measures one zoom step of the plot of a 60 s
// recording: the view change and the re-render of a 1000×400 pixel image
// (what a wheel notch costs on the UI goroutine).
func BenchmarkZoomRender(b *testing.B) {
	path := writeBenchWAV(b, b.TempDir(), 60, 60)
	w, ch := newTestWindow(b)
	onUI(func() { w.Open([]string{path}) })
	await(b, ch, 1)
	if w.cur.Err != nil {
		b.Fatal(w.cur.Err)
	}
	s := w.cur.Report.Spectrogram
	b.Logf("display spectrogram: %d frames × %d bins", s.Frames, s.Bins)
	v := w.view
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		f := 1 / zoomStep
		if i%8 >= 4 {
			f = zoomStep
		}
		v.Zoom(f, true)
		v.draw(1000, 400)
	}
}
