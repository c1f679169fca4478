package compare

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"whirlfit/analysis"
	"whirlfit/analysis/export"
)

// WriteText writes one aligned table per matched step (quantity, each
// file's value ± 95 % half-width, each file's difference from the first and
// whether the intervals overlap), then the verdicts.
func (c *Comparison) WriteText(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	for i, l := range c.Labels {
		fmt.Fprintf(tw, "%s\t%s\n", l, c.Files[i])
	}
	for _, row := range c.Rows {
		fmt.Fprintf(tw, "\n%s step %d\n", row.Direction, row.Order)
		hdr := []string{"  quantity"}
		hdr = append(hdr, c.Labels...)
		for _, l := range c.Labels[1:] {
			hdr = append(hdr, l+" − "+c.Labels[0], "overlap")
		}
		fmt.Fprintln(tw, strings.Join(hdr, "\t")+"\t")
		for _, line := range row.Lines {
			q := line.Quantity
			cells := []string{"  " + q.Name}
			for _, cell := range line.Cells {
				cells = append(cells, orDash(cell.Estimate, q))
			}
			for _, cell := range line.Cells[1:] {
				d, ov := "—", "—"
				if cell.Diff.Value != nil {
					d = FormatPM(*cell.Diff.Value, q.Scale, q.Unit)
					ov = map[bool]string{true: "yes", false: "no"}[*cell.Diff.Overlap]
				}
				cells = append(cells, d, ov)
			}
			fmt.Fprintln(tw, strings.Join(cells, "\t")+"\t")
		}
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if len(c.Verdicts) > 0 {
		fmt.Fprintln(w)
	}
	for _, v := range c.Verdicts {
		if _, err := fmt.Fprintln(w, v); err != nil {
			return err
		}
	}
	return nil
}

func orDash(e *analysis.Estimate, q *Quantity) string {
	if e == nil {
		return "—"
	}
	return FormatPM(*e, q.Scale, q.Unit)
}

// CSVHeader is the header of WriteCSV: one row per matched step, quantity
// and file; values in the unit of the quantity's key (seconds, Hz, rpm),
// differences against the first file.
var CSVHeader = []string{"direction", "order", "quantity", "label", "file",
	"value", "lo", "hi", "diff", "diff_lo", "diff_hi", "intervals_overlap"}

// WriteCSV writes the comparison in long form under CSVHeader:
//
//	direction,order,quantity,label,file,value,lo,hi,diff,diff_lo,diff_hi,intervals_overlap
//	up,1,tau_s,A,a.wav,0.027,0.025,0.029,,,,
//	up,1,tau_s,B,b.wav,0.018,0.017,0.019,-0.009,-0.0112,-0.0068,false
func (c *Comparison) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(CSVHeader); err != nil {
		return err
	}
	for _, row := range c.Rows {
		for _, line := range row.Lines {
			for i, cell := range line.Cells {
				rec := []string{string(row.Direction), strconv.Itoa(row.Order), line.Key, c.Labels[i], c.Files[i]}
				rec = append(rec, est3(cell.Estimate)...)
				rec = append(rec, est3(cell.Diff.Value)...)
				ov := ""
				if cell.Diff.Overlap != nil {
					ov = strconv.FormatBool(*cell.Diff.Overlap)
				}
				if err := cw.Write(append(rec, ov)); err != nil {
					return err
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

func est3(e *analysis.Estimate) []string {
	if e == nil {
		return []string{"", "", ""}
	}
	return []string{export.FormatNum(e.Value), export.FormatNum(e.CI95[0]), export.FormatNum(e.CI95[1])}
}

type jsonEst struct {
	Value export.Num    `json:"value"`
	CI95  [2]export.Num `json:"ci95"`
}

func jest(e *analysis.Estimate) *jsonEst {
	if e == nil {
		return nil
	}
	return &jsonEst{Value: export.Num(e.Value), CI95: [2]export.Num{export.Num(e.CI95[0]), export.Num(e.CI95[1])}}
}

type jsonCell struct {
	Label      string   `json:"label"`
	Estimate   *jsonEst `json:"estimate"`
	Difference *jsonEst `json:"difference"`
	Overlap    *bool    `json:"intervals_overlap"`
}

type jsonLine struct {
	Quantity string     `json:"quantity"`
	Files    []jsonCell `json:"files"`
}

type jsonRow struct {
	Direction  analysis.Direction `json:"direction"`
	Order      int                `json:"order"`
	Quantities []jsonLine         `json:"quantities"`
	Verdicts   []string           `json:"verdicts"`
}

type jsonComparison struct {
	Labels   []string  `json:"labels"`
	Files    []string  `json:"files"`
	Steps    []jsonRow `json:"steps"`
	Verdicts []string  `json:"verdicts"`
}

// WriteJSON writes the comparison as one object:
//
//	{"labels": ["A", "B"], "files": ["a.wav", "b.wav"],
//	 "steps": [{"direction": "up", "order": 1, "quantities": [
//	   {"quantity": "tau_s", "files": [
//	     {"label": "A", "estimate": {"value": 0.027, "ci95": [0.025, 0.029]}, "difference": null, "intervals_overlap": null},
//	     {"label": "B", "estimate": {…}, "difference": {"value": -0.009, "ci95": […]}, "intervals_overlap": false}]}, …],
//	   "verdicts": ["B responds faster than A: τ 18 ± 1 ms vs 27 ± 2 ms", …]}],
//	 "verdicts": ["up step 1: B responds faster than A: …"]}
//
// Values are in the unit of each quantity's name (seconds, Hz, rpm).
func (c *Comparison) WriteJSON(w io.Writer) error {
	out := jsonComparison{Labels: c.Labels, Files: c.Files, Steps: []jsonRow{}, Verdicts: c.Verdicts}
	for _, row := range c.Rows {
		jr := jsonRow{Direction: row.Direction, Order: row.Order, Verdicts: row.Verdicts}
		for _, line := range row.Lines {
			jl := jsonLine{Quantity: line.Key}
			for i, cell := range line.Cells {
				jl.Files = append(jl.Files, jsonCell{Label: c.Labels[i], Estimate: jest(cell.Estimate),
					Difference: jest(cell.Diff.Value), Overlap: cell.Diff.Overlap})
			}
			jr.Quantities = append(jr.Quantities, jl)
		}
		out.Steps = append(out.Steps, jr)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
