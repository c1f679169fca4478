package ui

import (
	"slices"
)

// span is an analysis interval in seconds from the start of the recording;
// the zero span means the whole recording (analysis.Config's FromS/ToS,
// where ToS 0 is the end).
type span struct{ FromS, ToS float64 }

// whole reports whether the span is the whole recording.
func (s span) whole() bool { return s == span{} }

// edit is one state of what the user placed on the recording: the
// command-time markers and the analysis interval.
type edit struct {
	times []float64
	iv    span
}

// markers holds the command-time markers the user placed, in seconds from
// the start of the recording, kept sorted, and the analysis interval, with
// an undo and a redo history of whole states (a handful of floats each, so
// snapshots are cheap). Marker and interval edits share one history, so
// that undo takes back the last edit of either.
type markers struct {
	times []float64
	iv    span
	undo  []edit
	redo  []edit
}

// Times returns a copy of the marker times in ascending order.
func (m *markers) Times() []float64 { return slices.Clone(m.times) }

// Len returns the number of markers.
func (m *markers) Len() int { return len(m.times) }

// Interval returns the analysis interval (zero: the whole recording).
func (m *markers) Interval() span { return m.iv }

func (m *markers) state() edit { return edit{times: slices.Clone(m.times), iv: m.iv} }

func (m *markers) restore(e edit) { m.times, m.iv = e.times, e.iv }

func (m *markers) push() {
	m.undo = append(m.undo, m.state())
	m.redo = nil
}

// Add places a marker at t and returns its index.
func (m *markers) Add(t float64) int {
	m.push()
	i, _ := slices.BinarySearch(m.times, t)
	m.times = slices.Insert(m.times, i, t)
	return i
}

// Move moves marker i to t and returns its new index (markers stay sorted).
// Without record the move is not put in the history, so that a drag makes
// one history entry: the caller records at the start of the drag.
func (m *markers) Move(i int, t float64, record bool) int {
	if i < 0 || i >= len(m.times) {
		return -1
	}
	if record {
		m.push()
	}
	m.times = slices.Delete(m.times, i, i+1)
	j, _ := slices.BinarySearch(m.times, t)
	m.times = slices.Insert(m.times, j, t)
	return j
}

// Remove deletes marker i; it reports whether there was one.
func (m *markers) Remove(i int) bool {
	if i < 0 || i >= len(m.times) {
		return false
	}
	m.push()
	m.times = slices.Delete(m.times, i, i+1)
	return true
}

// Set replaces all markers (recorded in the history).
func (m *markers) Set(times []float64) {
	m.push()
	m.times = slices.Clone(times)
	slices.Sort(m.times)
}

// SetInterval sets the analysis interval (recorded in the history); it
// reports whether it changed.
func (m *markers) SetInterval(iv span) bool {
	if iv == m.iv {
		return false
	}
	m.push()
	m.iv = iv
	return true
}

// ReplaceInterval sets the analysis interval without recording it in the
// history (a correction rather than an edit).
func (m *markers) ReplaceInterval(iv span) { m.iv = iv }

// Reset forgets the markers and their history (a new recording) and
// starts from the interval iv, which is not put in the history.
func (m *markers) Reset(iv span) { *m = markers{iv: iv} }

// Undo restores the state before the last edit; it reports whether there
// was one.
func (m *markers) Undo() bool {
	if len(m.undo) == 0 {
		return false
	}
	m.redo = append(m.redo, m.state())
	m.restore(m.undo[len(m.undo)-1])
	m.undo = m.undo[:len(m.undo)-1]
	return true
}

// Redo reapplies the last undone edit; it reports whether there was one.
func (m *markers) Redo() bool {
	if len(m.redo) == 0 {
		return false
	}
	m.undo = append(m.undo, m.state())
	m.restore(m.redo[len(m.redo)-1])
	m.redo = m.redo[:len(m.redo)-1]
	return true
}

// Nearest returns the index of the marker closest to t within tol seconds,
// or -1.
func (m *markers) Nearest(t, tol float64) int {
	best, bi := tol, -1
	for i, v := range m.times {
		if d := abs(v - t); d <= best {
			best, bi = d, i
		}
	}
	return bi
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
