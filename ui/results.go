package ui

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"

	"whirlfit/analysis"
	"whirlfit/analysis/compare"
)

// resultColumns are the results table's columns; the cells hold the same
// numbers as the command line's report, rounded for reading.
var resultColumns = []struct {
	title string
	width float32
	cell  func(n int, s *analysis.StepResult) string
}{
	{"#", 36, func(n int, s *analysis.StepResult) string { return strconv.Itoa(n) }},
	{"dir", 60, func(n int, s *analysis.StepResult) string { return string(s.Direction) }},
	{"command (s)", 120, func(n int, s *analysis.StepResult) string {
		if s.CommandS == nil {
			return "—"
		}
		return fmt.Sprintf("%.3f", *s.CommandS)
	}},
	{"start (s)", 80, func(n int, s *analysis.StepResult) string { return fmt.Sprintf("%.3f", s.ResponseStartS) }},
	{"dead time (ms)", 130, func(n int, s *analysis.StepResult) string { return msEst(s.DeadTimeS) }},
	{"τ (ms)", 120, func(n int, s *analysis.StepResult) string { return msEst(&s.TauS) }},
	{"t63 (ms)", 120, func(n int, s *analysis.StepResult) string { return msEst(s.T63S) }},
	{"t95 (ms)", 120, func(n int, s *analysis.StepResult) string { return msEst(s.T95S) }},
	{"rise 10–90 (ms)", 130, func(n int, s *analysis.StepResult) string { return msEst(&s.Rise1090S) }},
	{"rpm before", 130, func(n int, s *analysis.StepResult) string { return rpmEst(&s.RPMBefore) }},
	{"rpm after", 130, func(n int, s *analysis.StepResult) string { return rpmEst(&s.RPMAfter) }},
	{"Δ rpm", 130, func(n int, s *analysis.StepResult) string { return rpmEst(&s.DeltaRPM) }},
	{"bandwidth (Hz)", 130, func(n int, s *analysis.StepResult) string { return est(&s.BandwidthHz, 1) }},
	{"RMS residual (rpm)", 130, func(n int, s *analysis.StepResult) string { return num(s.ResidualRMSRPM, 1) }},
	{"R²", 70, func(n int, s *analysis.StepResult) string { return num(s.R2, 4) }},
	{"warnings", 420, func(n int, s *analysis.StepResult) string { return strings.Join(s.Warnings, "; ") }},
}

// msPerS converts seconds to milliseconds for display.
const msPerS = 1000

func num(v float64, prec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	return strconv.FormatFloat(v, 'f', prec, 64)
}

// est formats a value with its 95 % interval, scaled by k, as the command
// line does: "value ± u" with u the larger distance to an interval end,
// rounded to the uncertainty (compare.FormatPM).
func est(e *analysis.Estimate, k float64) string {
	if e == nil {
		return "—"
	}
	return strings.TrimSpace(compare.FormatPM(*e, k, ""))
}

func msEst(e *analysis.Estimate) string  { return est(e, msPerS) }
func rpmEst(e *analysis.Estimate) string { return est(e, 1) }

// resultsTable is the per-step table under the plot. Row 0 is the header.
type resultsTable struct {
	table  *widget.Table
	rep    *analysis.Report
	onStep func(i int)
}

func newResultsTable(onStep func(int)) *resultsTable {
	r := &resultsTable{onStep: onStep}
	r.table = widget.NewTable(r.size,
		func() fyne.CanvasObject {
			l := widget.NewLabel("")
			l.Truncation = fyne.TextTruncateEllipsis
			return l
		},
		r.update)
	for c, col := range resultColumns {
		r.table.SetColumnWidth(c, col.width)
	}
	r.table.OnSelected = func(id widget.TableCellID) {
		if id.Row > 0 && r.onStep != nil {
			r.onStep(id.Row - 1)
		}
	}
	return r
}

func (r *resultsTable) size() (int, int) {
	rows := 1
	if r.rep != nil {
		rows += max(len(r.rep.Steps), 1)
	}
	return rows, len(resultColumns)
}

// cell returns the text of a cell (row 0 is the header).
func (r *resultsTable) cell(row, col int) string {
	if row == 0 {
		return resultColumns[col].title
	}
	if r.rep == nil {
		return ""
	}
	if len(r.rep.Steps) == 0 {
		// The message goes in the wide warnings column.
		if col == len(resultColumns)-1 {
			return strings.Join(append([]string{"no step found"}, r.rep.Warnings...), "; ")
		}
		return "—"
	}
	return resultColumns[col].cell(row, &r.rep.Steps[row-1])
}

func (r *resultsTable) update(id widget.TableCellID, o fyne.CanvasObject) {
	l := o.(*widget.Label)
	l.TextStyle.Bold = id.Row == 0
	l.SetText(r.cell(id.Row, id.Col))
}

func (r *resultsTable) set(rep *analysis.Report) {
	r.rep = rep
	r.table.UnselectAll()
	r.table.Refresh()
}

// resultsText is the table as tab-separated text, for the clipboard, with
// the recording's warnings at the end.
func resultsText(rep *analysis.Report) string {
	t := &resultsTable{rep: rep}
	rows, cols := t.size()
	var b strings.Builder
	fmt.Fprintf(&b, "%s\t%d blade(s)\t%.2f s\n", rep.File, rep.Blades, rep.DurationS)
	for row := 0; row < rows; row++ {
		for col := 0; col < cols; col++ {
			if col > 0 {
				b.WriteByte('\t')
			}
			b.WriteString(t.cell(row, col))
		}
		b.WriteByte('\n')
	}
	for _, w := range rep.Warnings {
		b.WriteString("warning: " + w + "\n")
	}
	return b.String()
}
