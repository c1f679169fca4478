package ui

import (
	"slices"
	"testing"
)

func TestMarkersEditUndoRedo(t *testing.T) {
	var m markers
	m.Add(2)
	m.Add(1)
	if i := m.Add(3); i != 2 {
		t.Fatalf("Add(3) index: got %d, want 2", i)
	}
	if got := m.Times(); !slices.Equal(got, []float64{1, 2, 3}) {
		t.Fatalf("after adds: got %v, want [1 2 3]", got)
	}
	// A drag: recorded once at its start, then moved without recording.
	j := m.Move(0, 2.5, true)
	j = m.Move(j, 3.5, false)
	if got := m.Times(); !slices.Equal(got, []float64{2, 3, 3.5}) || j != 2 {
		t.Fatalf("after drag: got %v (index %d), want [2 3 3.5] (index 2)", got, j)
	}
	m.Remove(1)
	for _, c := range []struct {
		name string
		op   func() bool
		want []float64
	}{
		{"undo remove", m.Undo, []float64{2, 3, 3.5}},
		{"undo drag (one step)", m.Undo, []float64{1, 2, 3}},
		{"redo drag", m.Redo, []float64{2, 3, 3.5}},
		{"undo again", m.Undo, []float64{1, 2, 3}},
		{"undo add 3", m.Undo, []float64{1, 2}},
		{"undo add 1", m.Undo, []float64{2}},
		{"undo add 2", m.Undo, nil},
	} {
		if !c.op() {
			t.Fatalf("%s: nothing to do", c.name)
		}
		if got := m.Times(); !slices.Equal(got, c.want) {
			t.Fatalf("%s: got %v, want %v", c.name, got, c.want)
		}
	}
	if m.Undo() {
		t.Fatal("undo past the first edit succeeded")
	}
	m.Redo()
	m.Add(9) // a new edit clears the redo history
	if m.Redo() {
		t.Fatal("redo after a new edit succeeded")
	}
	if i := m.Nearest(8.99, 0.05); i != 1 {
		t.Fatalf("Nearest(8.99): got %d, want 1", i)
	}
	if i := m.Nearest(5, 0.05); i != -1 {
		t.Fatalf("Nearest(5): got %d, want -1", i)
	}
}

func TestViewportRanges(t *testing.T) {
	for _, c := range []struct {
		name               string
		a, b, c, f, lo, hi float64
		wantA, wantB       float64
	}{
		{"zoom in about centre", 0, 10, 5, 0.5, 0, 10, 2.5, 7.5},
		{"zoom in about left edge", 0, 10, 0, 0.5, 0, 10, 0, 5},
		{"zoom out past the data", 2, 4, 3, 10, 0, 10, 0, 10},
		{"minimum span", 0, 10, 5, 1e-9, 0, 10, 5 - minSpanS/2, 5 + minSpanS/2},
	} {
		a, b := zoomRange(c.a, c.b, c.c, c.f, c.lo, c.hi, minSpanS)
		if abs(a-c.wantA) > 1e-12 || abs(b-c.wantB) > 1e-12 {
			t.Errorf("%s: got [%g, %g], want [%g, %g]", c.name, a, b, c.wantA, c.wantB)
		}
	}
	if a, b := panRange(8, 9, 5, 0, 10); a != 9 || b != 10 {
		t.Errorf("pan past the end: got [%g, %g], want [9, 10]", a, b)
	}
}

// Marker and interval edits share one history: undo takes back the last
// edit of either, and a new recording starts from its kept interval with
// an empty history.
func TestMarkersIntervalHistory(t *testing.T) {
	var m markers
	m.Reset(span{FromS: 1})
	m.Add(2)
	if !m.SetInterval(span{FromS: 1.5, ToS: 4}) || m.SetInterval(span{FromS: 1.5, ToS: 4}) {
		t.Fatal("SetInterval must report a change once, and no change for the same span")
	}
	m.Add(3)
	for _, c := range []struct {
		name  string
		op    func() bool
		times []float64
		iv    span
	}{
		{"undo add 3", m.Undo, []float64{2}, span{1.5, 4}},
		{"undo interval", m.Undo, []float64{2}, span{FromS: 1}},
		{"undo add 2", m.Undo, nil, span{FromS: 1}},
		{"redo add 2", m.Redo, []float64{2}, span{FromS: 1}},
		{"redo interval", m.Redo, []float64{2}, span{1.5, 4}},
	} {
		if !c.op() {
			t.Fatalf("%s: nothing to do", c.name)
		}
		if got := m.Times(); !slices.Equal(got, c.times) || m.Interval() != c.iv {
			t.Fatalf("%s: got %v %+v, want %v %+v", c.name, got, m.Interval(), c.times, c.iv)
		}
	}
	m.ReplaceInterval(span{})
	if !m.Interval().whole() || !m.Undo() || m.Interval() != (span{FromS: 1}) {
		t.Fatalf("ReplaceInterval must not be recorded: after undo %+v, want the state before the last recorded edit", m.Interval())
	}
}
