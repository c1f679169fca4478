package ui

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot/vg"

	"whirlfit/analysis"
	"whirlfit/analysis/compare"
	"whirlfit/analysis/figure"
)

// comparePanel is the Compare tab: recordings to add, remove and relabel,
// the overlay of their normalised responses, the comparison table and the
// verdict. Each recording is analysed with the window's settings.
type comparePanel struct {
	w       *Window
	recs    []*recording
	job     job
	content fyne.CanvasObject

	list     *widget.List
	overlay  *canvas.Raster
	table    *widget.Table
	verdict  *widget.Label
	status   *widget.Label
	cmp      *compare.Comparison
	cells    [][]string
	overlayI *overlayImage
	stepSel  *widget.Select
	step     figure.CompareStep
}

func newComparePanel(w *Window) *comparePanel {
	p := &comparePanel{w: w}
	p.list = widget.NewList(
		func() int { return len(p.recs) },
		func() fyne.CanvasObject {
			e := widget.NewEntry()
			rm := widget.NewButtonWithIcon("", theme.DeleteIcon(), nil)
			info := widget.NewLabel("")
			info.Truncation = fyne.TextTruncateEllipsis
			return container.NewBorder(nil, nil, nil, rm, container.NewGridWithColumns(2, e, info))
		},
		func(id widget.ListItemID, o fyne.CanvasObject) {
			b := o.(*fyne.Container)
			grid := b.Objects[0].(*fyne.Container)
			e := grid.Objects[0].(*widget.Entry)
			info := grid.Objects[1].(*widget.Label)
			rm := b.Objects[1].(*widget.Button)
			rec := p.recs[id]
			e.OnChanged = nil
			e.SetText(rec.Label)
			e.OnChanged = func(s string) { p.relabel(id, s) }
			info.SetText(recInfo(rec))
			rm.OnTapped = func() { p.remove(id) }
		})
	p.overlayI = &overlayImage{}
	p.stepSel = widget.NewSelect(nil, func(s string) {
		var st figure.CompareStep
		if _, err := fmt.Sscanf(s, "%s %d", &st.Direction, &st.Order); err == nil && st != p.step {
			p.step = st
			p.rebuild()
		}
	})
	p.stepSel.PlaceHolder = "step to overlay"
	p.overlay = canvas.NewRaster(p.overlayI.draw)
	p.table = widget.NewTable(
		func() (int, int) {
			if len(p.cells) == 0 {
				return 0, 0
			}
			return len(p.cells), len(p.cells[0])
		},
		func() fyne.CanvasObject { return widget.NewLabel("") },
		func(id widget.TableCellID, o fyne.CanvasObject) {
			l := o.(*widget.Label)
			l.TextStyle.Bold = id.Row == 0 || id.Col == 0
			l.SetText(p.cells[id.Row][id.Col])
		})
	p.verdict = widget.NewLabel("Add two or more recordings to compare them.")
	p.verdict.Wrapping = fyne.TextWrapWord
	p.status = widget.NewLabel("")
	add := widget.NewButtonWithIcon("Add recordings…", theme.ContentAddIcon(), p.showAdd)
	addCur := widget.NewButton("Add the current recording", p.addCurrent)
	copyBtn := widget.NewButtonWithIcon("Copy", theme.ContentCopyIcon(), func() {
		w.app.Clipboard().SetContent(p.text())
	})
	exportBtn := widget.NewButtonWithIcon("Export…", theme.DocumentSaveIcon(), p.showExport)
	left := container.NewBorder(
		container.NewVBox(widget.NewLabelWithStyle("Recordings (label, result)", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
			container.NewHBox(add, addCur)),
		p.status, nil, nil, p.list)
	verdicts := container.NewVScroll(p.verdict)
	verdicts.SetMinSize(fyne.NewSize(200, 90))
	top := container.NewBorder(container.NewBorder(nil, nil, widget.NewLabel("Overlay of step"), nil, p.stepSel), nil, nil, nil, p.overlay)
	legend := widget.NewLabel("* the 95 % intervals of this value and the first recording's do not overlap")
	legend.Importance = widget.LowImportance
	bottom := container.NewBorder(container.NewBorder(nil, nil, nil, container.NewVBox(copyBtn, exportBtn), verdicts), legend, nil, nil, p.table)
	right := container.NewVSplit(top, bottom)
	right.Offset = 0.55
	split := container.NewHSplit(left, right)
	split.Offset = 0.3
	p.content = split
	return p
}

func recInfo(r *recording) string {
	switch {
	case r.Err != nil:
		return "error: " + r.Err.Error()
	case r.Report == nil:
		return "analysing…"
	default:
		return fmt.Sprintf("%s, %d step(s)", r.name(), len(r.Report.Steps))
	}
}

// showAdd opens a file dialog that adds one recording to the comparison.
func (p *comparePanel) showAdd() {
	d := dialog.NewFileOpen(func(r fyne.URIReadCloser, err error) {
		if err != nil {
			dialog.ShowError(err, p.w.win)
			return
		}
		if r == nil {
			return
		}
		path := r.URI().Path()
		r.Close()
		p.w.rememberFolder(path)
		p.add(path)
	}, p.w.win)
	if l := p.w.startFolder(); l != nil {
		d.SetLocation(l)
	}
	d.Resize(fyne.NewSize(760, 520))
	d.Show()
}

// addCurrent adds the recording shown in the analysis view.
func (p *comparePanel) addCurrent() {
	c := p.w.cur
	if c == nil {
		return
	}
	rec := &recording{Path: c.Path, Label: c.Label, Audio: c.Audio, Report: c.Report}
	p.recs = append(p.recs, rec)
	p.w.tabs.SelectIndex(1)
	p.refresh()
}

// add puts recordings into the list and analyses those not done yet.
func (p *comparePanel) add(paths ...string) {
	for _, path := range paths {
		p.recs = append(p.recs, &recording{Path: path, Label: labelFor(path)})
	}
	p.refresh()
}

func (p *comparePanel) remove(i int) {
	if i < 0 || i >= len(p.recs) {
		return
	}
	p.recs = append(p.recs[:i], p.recs[i+1:]...)
	p.refresh()
}

func (p *comparePanel) relabel(i int, s string) {
	if i < 0 || i >= len(p.recs) || p.recs[i].Label == s {
		return
	}
	p.recs[i].Label = s
	p.rebuild()
}

// reanalyse drops every result (the settings changed) and starts again.
func (p *comparePanel) reanalyse() {
	for _, r := range p.recs {
		r.Report, r.Err = nil, nil
	}
	p.refresh()
}

// refresh analyses the recordings that have no result yet, one after the
// other in one background job, then rebuilds the comparison.
func (p *comparePanel) refresh() {
	p.list.Refresh()
	var todo []*recording
	for _, r := range p.recs {
		if r.Report == nil && r.Err == nil {
			todo = append(todo, r)
		}
	}
	if len(todo) == 0 {
		p.rebuild()
		return
	}
	cfg := p.w.settings.Config(nil)
	type out struct {
		rec *recording
		res runResult
		err error
	}
	p.status.SetText(fmt.Sprintf("Analysing %d recording(s)…", len(todo)))
	p.job.start(func(ctx context.Context, progress func(float64), _ func(any)) (any, error) {
		outs := make([]out, len(todo))
		for i, r := range todo {
			o := out{rec: r}
			a := r.Audio
			if a == nil {
				a, o.err = decode(r.Path)
			}
			if o.err == nil {
				var rep *analysis.Report
				rep, o.err = analysis.Run(ctx, a, forRecording(cfg, r.Path), stageProgress(func(f float64) {
					progress((float64(i) + f) / float64(len(todo)))
				}))
				if rep != nil {
					rep.File = r.name()
				}
				o.res = runResult{audio: a, report: rep}
			}
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			outs[i] = o
		}
		return outs, nil
	}, func(f float64) {
		p.status.SetText(fmt.Sprintf("Analysing %d recording(s)… %.0f %%", len(todo), 100*f))
	}, nil, func(v any, err error) {
		outs, _ := v.([]out)
		for _, o := range outs {
			o.rec.Audio, o.rec.Report, o.rec.Err = o.res.audio, o.res.report, o.err
		}
		p.status.SetText("")
		if err != nil {
			p.status.SetText("Analysis stopped: " + err.Error())
		}
		p.list.Refresh()
		p.rebuild()
		p.w.done()
	})
}

// reports returns the finished reports and their labels.
func (p *comparePanel) reports() (reps []*analysis.Report, labels []string) {
	for _, r := range p.recs {
		if r.Report != nil {
			reps = append(reps, r.Report)
			labels = append(labels, r.Label)
		}
	}
	return reps, labels
}

// rebuild recomputes the comparison from the finished reports.
func (p *comparePanel) rebuild() {
	reps, labels := p.reports()
	p.cmp, p.cells = nil, nil
	if len(reps) < 2 {
		p.verdict.SetText("Add two or more recordings to compare them.")
	} else if c, err := compare.Compare(reps, labels); err != nil {
		p.verdict.SetText("Cannot compare: " + err.Error())
	} else {
		p.cmp = c
		p.cells = compareCells(c)
		var opts []string
		found := false
		for _, r := range c.Rows {
			opts = append(opts, fmt.Sprintf("%s %d", r.Direction, r.Order))
			if r.Direction == p.step.Direction && r.Order == p.step.Order {
				found = true
			}
		}
		if !found && len(c.Rows) > 0 {
			p.step = figure.CompareStep{Direction: c.Rows[0].Direction, Order: c.Rows[0].Order}
		}
		p.stepSel.SetOptions(opts)
		p.stepSel.SetSelected(fmt.Sprintf("%s %d", p.step.Direction, p.step.Order))
		if len(c.Verdicts) == 0 {
			p.verdict.SetText("No step could be matched across the recordings.")
		} else {
			p.verdict.SetText(strings.Join(c.Verdicts, "\n"))
		}
	}
	p.overlayI.set(reps, labels, p.step)
	p.table.Refresh()
	if len(p.cells) > 0 {
		p.table.SetColumnWidth(0, 170)
		for c := 1; c < len(p.cells[0]); c++ {
			p.table.SetColumnWidth(c, 150)
		}
	}
	p.overlay.Refresh()
}

// compareCells lays the comparison out as a grid: a header row with the
// labels, then per matched step and quantity one row.
func compareCells(c *compare.Comparison) [][]string {
	head := append([]string{"step · quantity"}, c.Labels...)
	cells := [][]string{head}
	for _, row := range c.Rows {
		for _, ln := range row.Lines {
			r := []string{fmt.Sprintf("%s %d · %s (%s)", row.Direction, row.Order, ln.Quantity.Name, ln.Quantity.Unit)}
			for i, cell := range ln.Cells {
				s := "—"
				if cell.Estimate != nil {
					s = compare.FormatPM(*cell.Estimate, ln.Quantity.Scale, "")
				}
				if i > 0 && cell.Diff.Overlap != nil && !*cell.Diff.Overlap {
					s += " *"
				}
				r = append(r, s)
			}
			cells = append(cells, r)
		}
	}
	return cells
}

// text is the comparison as the command line writes it (the core's text
// table and verdicts).
func (p *comparePanel) text() string {
	if p.cmp == nil {
		return ""
	}
	var b strings.Builder
	if err := p.cmp.WriteText(&b); err != nil {
		return err.Error()
	}
	return b.String()
}

// compareKinds are the comparison's exports.
var compareKinds = []struct {
	name, ext string
	write     func(w io.Writer, p *comparePanel) error
}{
	{"Comparison (text)", "-comparison.txt", func(w io.Writer, p *comparePanel) error { return p.cmp.WriteText(w) }},
	{"Comparison (CSV)", "-comparison.csv", func(w io.Writer, p *comparePanel) error { return p.cmp.WriteCSV(w) }},
	{"Comparison (JSON)", "-comparison.json", func(w io.Writer, p *comparePanel) error { return p.cmp.WriteJSON(w) }},
	{"Overlay figure (PNG)", "-overlay.png", overlayWriter("png")},
	{"Overlay figure (SVG)", "-overlay.svg", overlayWriter("svg")},
	{"Overlay figure (PDF)", "-overlay.pdf", overlayWriter("pdf")},
}

func overlayWriter(format string) func(io.Writer, *comparePanel) error {
	return func(w io.Writer, p *comparePanel) error {
		reps, labels := p.reports()
		pl, err := figure.ComparePlotStep(reps, labels, p.step, figure.Options{})
		if err != nil {
			return err
		}
		wt, err := pl.WriterTo(vg.Length(figure.DefaultWidthIn)*vg.Inch, vg.Length(figure.DefaultHeightIn)*vg.Inch, format)
		if err != nil {
			return err
		}
		_, err = wt.WriteTo(w)
		return err
	}
}

// renderCompare produces one comparison export in memory.
func (p *comparePanel) renderCompare(i int) ([]byte, error) {
	if p.cmp == nil {
		return nil, errors.New("add two or more analysed recordings first")
	}
	var buf bytes.Buffer
	if err := compareKinds[i].write(&buf, p); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func (p *comparePanel) showExport() {
	if p.cmp == nil {
		dialog.ShowInformation("Export", "Add two or more analysed recordings first.", p.w.win)
		return
	}
	names := make([]string, len(compareKinds))
	for i, k := range compareKinds {
		names[i] = k.name
	}
	sel := widget.NewRadioGroup(names, nil)
	sel.SetSelected(names[1])
	dialog.ShowCustomConfirm("Export the comparison", "Choose a file…", "Cancel", sel, func(ok bool) {
		if !ok {
			return
		}
		for i, k := range compareKinds {
			if k.name != sel.Selected {
				continue
			}
			data, err := p.renderCompare(i)
			if err != nil {
				dialog.ShowError(err, p.w.win)
				return
			}
			p.w.saveWithDialog("whirlfit"+k.ext, data)
		}
	}, p.w.win)
}
