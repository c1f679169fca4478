package compare

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"whirlfit/analysis"
)

// Quantity is one compared number of a step.
type Quantity struct {
	// Key names it in CSV and JSON (with its unit, as in the summary CSV);
	// Name in text; Unit is the display unit, Scale converts the stored
	// SI value to it.
	Key, Name, Unit string
	Scale           float64
	// Get returns the step's estimate, or nil when it has none.
	Get func(s *analysis.StepResult) *analysis.Estimate
	// Better is −1 when smaller is better (faster), +1 when larger is,
	// 0 when the quantity gets no verdict.
	Better int
	// Smaller and Larger are the verdict's words for a smaller and a
	// larger value ("responds faster than", "has a shorter dead time than").
	Smaller, Larger string
}

// Quantities lists what Compare puts side by side, in table order.
var Quantities = []Quantity{
	{Key: "tau_s", Name: "τ", Unit: "ms", Scale: 1e3, Better: -1, Smaller: "responds faster than", Larger: "responds slower than",
		Get: func(s *analysis.StepResult) *analysis.Estimate { return &s.TauS }},
	{Key: "dead_time_s", Name: "θ", Unit: "ms", Scale: 1e3, Better: -1, Smaller: "has a shorter dead time than", Larger: "has a longer dead time than",
		Get: func(s *analysis.StepResult) *analysis.Estimate { return s.DeadTimeS }},
	// Rise time and bandwidth follow from τ (τ·ln 9 and 1/(2πτ)), so they
	// get no verdict of their own.
	{Key: "rise_10_90_s", Name: "rise 10–90 %", Unit: "ms", Scale: 1e3, Smaller: "rises faster than", Larger: "rises slower than",
		Get: func(s *analysis.StepResult) *analysis.Estimate { return &s.Rise1090S }},
	{Key: "bandwidth_hz", Name: "bandwidth", Unit: "Hz", Scale: 1, Smaller: "has less bandwidth than", Larger: "has more bandwidth than",
		Get: func(s *analysis.StepResult) *analysis.Estimate { return &s.BandwidthHz }},
	{Key: "rpm_before", Name: "rpm before", Unit: "rpm", Scale: 1, Smaller: "starts lower than", Larger: "starts higher than",
		Get: func(s *analysis.StepResult) *analysis.Estimate { return &s.RPMBefore }},
	{Key: "rpm_after", Name: "rpm after", Unit: "rpm", Scale: 1, Smaller: "settles lower than", Larger: "settles higher than",
		Get: func(s *analysis.StepResult) *analysis.Estimate { return &s.RPMAfter }},
}

// Difference is one file's quantity against the reference (first) file's.
type Difference struct {
	// Value is this − reference with a 95 % interval from the half-widths
	// in quadrature; nil when either side is missing.
	Value *analysis.Estimate `json:"difference"`
	// Overlap reports whether the two 95 % intervals overlap (no clear
	// difference); nil when either side is missing.
	Overlap *bool `json:"intervals_overlap"`
}

// Cell is one file's value of one quantity in one matched step.
type Cell struct {
	Estimate *analysis.Estimate `json:"estimate"`
	// Diff is against the reference; empty for the reference itself.
	Diff Difference `json:"vs_reference"`
}

// Line is one quantity across files.
type Line struct {
	Quantity *Quantity `json:"-"`
	Key      string    `json:"quantity"`
	Cells    []Cell    `json:"files"`
}

// Row is one matched step: the Order-th (1-based) step of Direction in
// every file.
type Row struct {
	Direction analysis.Direction `json:"direction"`
	Order     int                `json:"order"`
	// Steps has one entry per file; nil where that file lacks the step.
	Steps    []*analysis.StepResult `json:"-"`
	Lines    []Line                 `json:"quantities"`
	Verdicts []string               `json:"verdicts"`
}

// Comparison is the whole side-by-side result.
type Comparison struct {
	Labels []string `json:"labels"`
	Files  []string `json:"files"`
	Rows   []Row    `json:"steps"`
	// Verdicts collects every row's verdicts, prefixed with the step.
	Verdicts []string `json:"verdicts"`
}

// DefaultLabels returns A, B, C, … for n files.
func DefaultLabels(n int) []string {
	l := make([]string, n)
	for i := range l {
		if i < 26 {
			l[i] = string(rune('A' + i))
		} else {
			l[i] = fmt.Sprintf("F%d", i+1)
		}
	}
	return l
}

// Compare matches the reports' steps by direction and order and compares
// every quantity with the first report's. labels may be nil (A, B, …).
func Compare(reps []*analysis.Report, labels []string) (*Comparison, error) {
	if len(reps) < 2 {
		return nil, errors.New("compare: need at least two recordings")
	}
	if labels == nil {
		labels = DefaultLabels(len(reps))
	}
	if len(labels) != len(reps) {
		return nil, fmt.Errorf("compare: %d labels for %d recordings", len(labels), len(reps))
	}
	c := &Comparison{Labels: labels, Verdicts: []string{}}
	for _, r := range reps {
		c.Files = append(c.Files, r.File)
	}
	for _, dir := range []analysis.Direction{analysis.Up, analysis.Down} {
		byFile := make([][]*analysis.StepResult, len(reps))
		most := 0
		for i, r := range reps {
			for j := range r.Steps {
				if r.Steps[j].Direction == dir {
					byFile[i] = append(byFile[i], &r.Steps[j])
				}
			}
			most = max(most, len(byFile[i]))
		}
		for k := 0; k < most; k++ {
			row := Row{Direction: dir, Order: k + 1, Steps: make([]*analysis.StepResult, len(reps)), Verdicts: []string{}}
			for i := range reps {
				if k < len(byFile[i]) {
					row.Steps[i] = byFile[i][k]
				}
			}
			fillRow(&row, labels)
			for _, v := range row.Verdicts {
				c.Verdicts = append(c.Verdicts, fmt.Sprintf("%s step %d: %s", dir, k+1, v))
			}
			c.Rows = append(c.Rows, row)
		}
	}
	if len(c.Rows) == 0 {
		c.Verdicts = append(c.Verdicts, "no steps in any recording, nothing to compare")
	}
	return c, nil
}

// usable reports whether e has a proper interval: finite ends around the
// value with a positive width (a zero interval means "none was formed").
func usable(e *analysis.Estimate) bool {
	return e != nil && finite(e.Value) && finite(e.CI95[0]) && finite(e.CI95[1]) &&
		e.CI95[0] <= e.Value && e.Value <= e.CI95[1] && e.CI95[1] > e.CI95[0]
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func fillRow(row *Row, labels []string) {
	for qi := range Quantities {
		q := &Quantities[qi]
		line := Line{Quantity: q, Key: q.Key, Cells: make([]Cell, len(row.Steps))}
		var ref *analysis.Estimate
		if row.Steps[0] != nil {
			ref = q.Get(row.Steps[0])
		}
		for i, s := range row.Steps {
			if s == nil {
				continue
			}
			e := q.Get(s)
			line.Cells[i].Estimate = e
			if i == 0 || !usable(e) || !usable(ref) {
				continue
			}
			d := diff(*e, *ref)
			ov := e.CI95[0] <= ref.CI95[1] && ref.CI95[0] <= e.CI95[1]
			line.Cells[i].Diff = Difference{Value: &d, Overlap: &ov}
			if q.Better != 0 {
				row.Verdicts = append(row.Verdicts, verdict(q, labels[i], labels[0], *e, *ref, ov))
			}
		}
		row.Lines = append(row.Lines, line)
	}
}

func halfWidth(e analysis.Estimate) float64 { return (e.CI95[1] - e.CI95[0]) / 2 }

func diff(e, ref analysis.Estimate) analysis.Estimate {
	d := e.Value - ref.Value
	hw := math.Hypot(halfWidth(e), halfWidth(ref))
	return analysis.Estimate{Value: d, CI95: [2]float64{d - hw, d + hw}}
}

// verdict words one quantity of file b against the reference a, e.g.
// "B responds faster than A: τ 18 ± 1 ms vs 27 ± 2 ms".
func verdict(q *Quantity, b, a string, eb, ea analysis.Estimate, overlap bool) string {
	vals := fmt.Sprintf("%s %s vs %s", q.Name, FormatPM(eb, q.Scale, q.Unit), FormatPM(ea, q.Scale, q.Unit))
	if overlap {
		return fmt.Sprintf("no clear difference between %s and %s in %s (%s; the 95 %% intervals overlap)", b, a, q.Name, vals)
	}
	words := q.Larger
	if eb.Value < ea.Value {
		words = q.Smaller
	}
	return fmt.Sprintf("%s %s %s: %s", b, words, a, vals)
}

// FormatPM writes an estimate as "value ± u unit", with u the larger
// distance from the value to an interval end, rounded to one significant
// digit (two when it starts with 1), and the value to the same place
// (common practice for reporting an uncertainty). Without a usable
// interval only the value is written.
func FormatPM(e analysis.Estimate, scale float64, unit string) string {
	v := e.Value * scale
	if !usable(&e) {
		return fmt.Sprintf("%.4g %s", v, unit)
	}
	u := math.Max(e.Value-e.CI95[0], e.CI95[1]-e.Value) * math.Abs(scale)
	if !(u > 0) {
		return fmt.Sprintf("%.4g %s", v, unit)
	}
	exp := int(math.Floor(math.Log10(u)))
	if lead := u / math.Pow(10, float64(exp)); lead < 2 {
		exp--
	}
	dec := max(0, -exp)
	q := math.Pow(10, float64(exp))
	u = math.Round(u/q) * q
	r := math.Round(v/q) * q
	if r == 0 {
		r = 0 // no "-0"
	}
	return strings.TrimSpace(fmt.Sprintf("%.*f ± %.*f %s", dec, r, dec, u, unit))
}
