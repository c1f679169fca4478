package export

import (
	"encoding/csv"
	"io"
	"math"
	"strconv"
	"strings"

	"whirlfit/analysis"
)

// SummaryHeader is the header row of WriteSummaryCSV. Each name carries its
// unit (_s seconds, _hz hertz, rpm); _lo and _hi are the ends of the 95 %
// confidence interval of the column before them.
var SummaryHeader = []string{
	"file", "step", "direction", "command_s", "response_start_s",
	"dead_time_s", "dead_time_lo_s", "dead_time_hi_s",
	"tau_s", "tau_lo_s", "tau_hi_s",
	"t63_s", "t63_lo_s", "t63_hi_s",
	"t95_s", "t95_lo_s", "t95_hi_s",
	"rise_10_90_s", "rise_10_90_lo_s", "rise_10_90_hi_s",
	"rpm_before", "rpm_before_lo", "rpm_before_hi",
	"rpm_after", "rpm_after_lo", "rpm_after_hi",
	"delta_rpm", "delta_rpm_lo", "delta_rpm_hi",
	"bandwidth_hz", "bandwidth_lo_hz", "bandwidth_hi_hz",
	"residual_rms_rpm", "r2", "warnings",
}

// WriteSummaryCSV writes one row per step per report under SummaryHeader:
//
//	file,step,direction,command_s,response_start_s,dead_time_s,…
//	a.wav,1,up,1,1.0121,0.0121,0.0104,0.0139,0.03012,…
//
// Steps are numbered from 1 within each file. A report without steps gets
// one row with only file and warnings filled, so that every input file
// appears. Empty cells mean "not available" (no command time, hence no
// dead time; an interval that could not be formed). Numbers have 7
// significant digits; warnings are joined with "; ".
func WriteSummaryCSV(w io.Writer, reps []*analysis.Report) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(SummaryHeader); err != nil {
		return err
	}
	row := make([]string, len(SummaryHeader))
	for _, r := range reps {
		if len(r.Steps) == 0 {
			clear(row)
			row[0] = r.File
			row[len(row)-1] = strings.Join(append([]string{"no step found"}, r.Warnings...), "; ")
			if err := cw.Write(row); err != nil {
				return err
			}
			continue
		}
		for i := range r.Steps {
			summaryRow(row, r.File, i+1, &r.Steps[i])
			if err := cw.Write(row); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

func summaryRow(row []string, file string, n int, s *analysis.StepResult) {
	row = row[:0]
	add := func(v ...string) { row = append(row, v...) }
	e3 := func(e *analysis.Estimate) {
		if e == nil {
			add("", "", "")
			return
		}
		add(FormatNum(e.Value), FormatNum(e.CI95[0]), FormatNum(e.CI95[1]))
	}
	cmd := ""
	if s.CommandS != nil {
		cmd = FormatNum(*s.CommandS)
	}
	add(file, strconv.Itoa(n), string(s.Direction), cmd, FormatNum(s.ResponseStartS))
	e3(s.DeadTimeS)
	e3(&s.TauS)
	e3(s.T63S)
	e3(s.T95S)
	e3(&s.Rise1090S)
	e3(&s.RPMBefore)
	e3(&s.RPMAfter)
	e3(&s.DeltaRPM)
	e3(&s.BandwidthHz)
	add(FormatNum(s.ResidualRMSRPM), FormatNum(s.R2), strings.Join(s.Warnings, "; "))
}

// FormatNum formats a number for CSV with 7 significant digits; non-finite
// values give an empty cell.
func FormatNum(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 7, 64)
}
