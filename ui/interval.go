package ui

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"whirlfit/analysis"
)

// intervalPanel edits the analysis interval: From and To entries (empty:
// the start, the end), and buttons that take the span selected on the
// plot or go back to the whole recording.
type intervalPanel struct {
	box      *fyne.Container
	from, to *widget.Entry
	note     *widget.Label
}

func newIntervalPanel(submit func(), useSelection, whole func()) *intervalPanel {
	p := &intervalPanel{}
	entry := func(hint string) *widget.Entry {
		e := widget.NewEntry()
		e.SetPlaceHolder(hint)
		e.Validator = func(s string) error {
			if _, err := parseSeconds(s); err != nil {
				return err
			}
			return nil
		}
		e.OnSubmitted = func(string) { submit() }
		return e
	}
	p.from, p.to = entry("start"), entry("end")
	p.note = widget.NewLabel("")
	p.note.Wrapping = fyne.TextWrapWord
	p.note.Importance = widget.LowImportance
	form := widget.NewForm(
		widget.NewFormItem("From (s)", p.from),
		widget.NewFormItem("To (s)", p.to))
	p.box = container.NewVBox(form,
		container.NewGridWithColumns(3,
			widget.NewButton("Apply", submit),
			widget.NewButton("Selected span", useSelection),
			widget.NewButton("Whole", whole)),
		p.note)
	p.set(span{})
	return p
}

// parseSeconds reads a time entry: empty is 0 (the start, or for To the
// end); anything else must be a number.
func parseSeconds(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return 0, errors.New("not a time in seconds (leave it empty for the start or the end)")
	}
	return v, nil
}

// set shows iv in the entries.
func (p *intervalPanel) set(iv span) {
	text := func(v float64) string {
		if v == 0 {
			return ""
		}
		return strconv.FormatFloat(v, 'f', 3, 64)
	}
	p.from.SetText(text(iv.FromS))
	p.to.SetText(text(iv.ToS))
	if iv.whole() {
		p.note.SetText("Steps are looked for in the whole recording.")
	} else {
		p.note.SetText("Steps are looked for and fitted only in " + intervalText(iv) + "; markers outside it are kept (dimmed) but not fitted.")
	}
}

// get reads the entries.
func (p *intervalPanel) get() (span, error) {
	from, err := parseSeconds(p.from.Text)
	if err != nil {
		return span{}, fmt.Errorf("the From entry %q is %w", p.from.Text, err)
	}
	to, err := parseSeconds(p.to.Text)
	if err != nil {
		return span{}, fmt.Errorf("the To entry %q is %w", p.to.Text, err)
	}
	return span{FromS: from, ToS: to}, nil
}

// intervalText writes an interval for messages.
func intervalText(iv span) string {
	if iv.ToS == 0 {
		return fmt.Sprintf("%.3f s to the end", iv.FromS)
	}
	return fmt.Sprintf("%.3f–%.3f s", iv.FromS, iv.ToS)
}

// Interval edits: each one is checked by the core's rule, recorded in the
// marker history, kept with the recording and refits at once.

// submitInterval takes the interval typed in the panel.
func (w *Window) submitInterval() {
	iv, err := w.ivPanel.get()
	if err != nil {
		w.refuseInterval(err)
		return
	}
	w.setInterval(iv)
}

// analyseSelection makes the span selected on the plot the interval.
func (w *Window) analyseSelection() {
	from, to, ok := w.view.SelectedSpan()
	if !ok {
		w.refuseInterval(errors.New("no span is selected: drag across the plot first"))
		return
	}
	w.setInterval(span{FromS: from, ToS: to})
}

// analyseWhole goes back to the whole recording.
func (w *Window) analyseWhole() { w.setInterval(span{}) }

// setInterval checks iv against the current recording and, when the core
// would take it, makes it the interval and refits; otherwise it says why
// and changes nothing.
func (w *Window) setInterval(iv span) {
	if w.cur == nil {
		w.refuseInterval(errors.New("no recording is open"))
		return
	}
	if !iv.whole() {
		dur := 0.0 // not yet known: the core checks it when it runs
		if w.cur.Audio != nil {
			dur = w.cur.Audio.DurationS()
		}
		if err := analysis.CheckInterval(iv.FromS, iv.ToS, dur); err != nil {
			w.refuseInterval(err)
			return
		}
	}
	if !w.marks.SetInterval(iv) {
		w.ivPanel.set(iv)
		return
	}
	w.intervalChanged()
}

// intervalChanged shows and keeps the interval after an edit, an undo or
// a redo, and refits.
func (w *Window) intervalChanged() {
	iv := w.marks.Interval()
	saveInterval(w.prefs, w.cur.Path, iv)
	w.view.SetInterval(iv)
	w.view.SetMarkers(w.marks.Times(), -1)
	w.ivPanel.set(iv)
	w.analyse(true)
}

// refuseInterval says why an interval was not taken; the interval, the
// markers and the results shown stay as they were.
func (w *Window) refuseInterval(err error) {
	msg := strings.TrimPrefix(err.Error(), "analysis: ")
	w.status.SetText("Interval not changed: " + msg)
	dialog.ShowInformation("Interval not changed", msg+"\n\nThe interval in use is still "+w.intervalInUse()+".", w.win)
}

// intervalInUse describes the current interval for messages.
func (w *Window) intervalInUse() string {
	iv := w.marks.Interval()
	if iv.whole() {
		return "the whole recording"
	}
	return intervalText(iv)
}
