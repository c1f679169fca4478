package ui

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/widget"

	"whirlfit/analysis"
	"whirlfit/analysis/control"
	"whirlfit/analysis/export"
)

// exportKind is one thing the window can write.
type exportKind struct {
	name string // shown in the Export dialog
	ext  string // file name ending, with the dot
	// write produces the file's content for one report. The window
	// writes it into memory first, so that a failure never leaves a
	// half-written or emptied file behind.
	write func(w io.Writer, rep *analysis.Report) error
}

var exportKinds = []exportKind{
	{"rpm track (CSV)", "-rpm.csv", func(w io.Writer, r *analysis.Report) error {
		return export.WriteTrackCSV(w, r.Track)
	}},
	{"Step summary (CSV)", "-steps.csv", func(w io.Writer, r *analysis.Report) error {
		return export.WriteSummaryCSV(w, []*analysis.Report{r})
	}},
	{"Report (JSON)", ".json", func(w io.Writer, r *analysis.Report) error {
		return export.WriteJSON(w, []*analysis.Report{r})
	}},
	{"Figure, spectrogram (PNG)", "-spectrogram.png", figureWriter(figSpectrogram, "png")},
	{"Figure, spectrogram (SVG)", "-spectrogram.svg", figureWriter(figSpectrogram, "svg")},
	{"Figure, spectrogram (PDF)", "-spectrogram.pdf", figureWriter(figSpectrogram, "pdf")},
	{"Figure, rpm and fits (PNG)", "-rpm.png", figureWriter(figRPM, "png")},
	{"Figure, rpm and fits (SVG)", "-rpm.svg", figureWriter(figRPM, "svg")},
	{"Figure, rpm and fits (PDF)", "-rpm.pdf", figureWriter(figRPM, "pdf")},
	{"Control-loop blocks (text)", "-blocks.txt", func(w io.Writer, r *analysis.Report) error {
		m, err := control.Build(r, control.Config{})
		if err != nil {
			return err
		}
		return m.WriteText(w)
	}},
	{"Control-loop blocks (JSON)", "-blocks.json", func(w io.Writer, r *analysis.Report) error {
		m, err := control.Build(r, control.Config{})
		if err != nil {
			return err
		}
		return control.WriteJSON(w, []*control.Model{m})
	}},
}

// render produces kind's content for rep in memory.
func render(kind exportKind, rep *analysis.Report) ([]byte, error) {
	if rep == nil {
		return nil, errors.New("nothing analysed yet")
	}
	var buf bytes.Buffer
	if err := kind.write(&buf, rep); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// exportTo writes kind for rep to path atomically. Without force an
// existing file is left alone and an error wrapping export.ErrExists
// returned.
func exportTo(path string, kind exportKind, rep *analysis.Report, force bool) error {
	data, err := render(kind, rep)
	if err != nil {
		return err
	}
	return export.WriteFileAtomic(path, force, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// showExport asks what to export, then where.
func (w *Window) showExport() {
	if w.cur == nil || w.cur.Report == nil {
		dialog.ShowInformation("Export", "There is no analysis to export yet.", w.win)
		return
	}
	names := make([]string, len(exportKinds))
	for i, k := range exportKinds {
		names[i] = k.name
	}
	sel := widget.NewRadioGroup(names, nil)
	sel.SetSelected(names[1])
	dialog.ShowCustomConfirm("Export", "Choose a file…", "Cancel", sel, func(ok bool) {
		if !ok {
			return
		}
		for _, k := range exportKinds {
			if k.name == sel.Selected {
				w.exportWithDialog(k)
			}
		}
	}, w.win)
}

// exportWithDialog renders kind, then asks for the file.
func (w *Window) exportWithDialog(kind exportKind) {
	rep := w.cur.Report
	data, err := render(kind, rep)
	if err != nil {
		dialog.ShowError(fmt.Errorf("cannot export %s: %w", strings.ToLower(kind.name), err), w.win)
		return
	}
	w.saveWithDialog(labelFor(rep.File)+kind.ext, data)
}

// saveWithDialog asks where to save data, which is already rendered.
// Fyne's save dialog asks before replacing a file; the content is then
// written atomically (a temporary file renamed into place).
func (w *Window) saveWithDialog(fileName string, data []byte) {
	d := dialog.NewFileSave(func(wc fyne.URIWriteCloser, err error) {
		if err != nil {
			dialog.ShowError(err, w.win)
			return
		}
		if wc == nil {
			return
		}
		path := wc.URI().Path()
		// The dialog has opened (and so emptied) the file; close it and
		// write the real content through a temporary file instead.
		wc.Close()
		w.rememberFolder(path)
		err = export.WriteFileAtomic(path, true, func(out io.Writer) error {
			_, err := out.Write(data)
			return err
		})
		if err != nil {
			dialog.ShowError(err, w.win)
			return
		}
		w.status.SetText("Wrote " + path)
	}, w.win)
	d.SetFileName(fileName)
	d.SetFilter(storage.NewExtensionFileFilter([]string{filepath.Ext(fileName)}))
	if l := w.startFolder(); l != nil {
		d.SetLocation(l)
	}
	d.Resize(fyne.NewSize(760, 520))
	d.Show()
}
