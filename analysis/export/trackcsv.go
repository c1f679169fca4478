package export

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"

	"whirlfit/analysis"
)

// TrackCSVHeader is the header row WriteTrackCSV writes.
var TrackCSVHeader = []string{"time_s", "rpm", "shaft_hz", "blade_pass_hz", "confidence"}

// WriteTrackCSV writes the rpm track as CSV, one row per track sample:
//
//	time_s,rpm,shaft_hz,blade_pass_hz,confidence
//	0.0213,18000.12,300.002,600.004,0.953
//
// time_s is the centre of the sample's frame in seconds, rpm = 60 × shaft_hz
// and blade_pass_hz = blades × shaft_hz. Frames in which no motor was found
// keep their time and leave the other fields empty. Numbers use '.' as the
// decimal point and enough digits for the track's precision.
func WriteTrackCSV(w io.Writer, tr *analysis.Track) error {
	if tr == nil {
		return fmt.Errorf("export: no track to write")
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(TrackCSVHeader); err != nil {
		return err
	}
	rec := make([]string, len(TrackCSVHeader))
	for i := 0; i < tr.Len(); i++ {
		rec[0] = strconv.FormatFloat(tr.TimeS[i], 'f', 5, 64)
		if tr.Valid(i) {
			rec[1] = strconv.FormatFloat(tr.RPMAt(i), 'f', 2, 64)
			rec[2] = strconv.FormatFloat(tr.ShaftHz[i], 'f', 4, 64)
			rec[3] = strconv.FormatFloat(tr.BladePassHzAt(i), 'f', 4, 64)
			c := 0.0
			if i < len(tr.Confidence) {
				c = tr.Confidence[i]
			}
			rec[4] = strconv.FormatFloat(c, 'f', 3, 64)
		} else {
			rec[1], rec[2], rec[3], rec[4] = "", "", "", ""
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
