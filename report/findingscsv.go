package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// findingsHeader lists the columns of WriteFindingsCSV.
var findingsHeader = []string{
	"severity", "kind", "conductor", "chainage_from_m", "chainage_to_m", "groups",
	"east_m", "north_m", "up_m", "lon_deg", "lat_deg", "values", "message",
}

// WriteFindingsCSV writes the findings, one row each, in the document's
// order (most pressing first at each chainage; see SortFindings), for a
// crew's spreadsheet: severity, kind, the conductor (1 for the route's,
// the track's number for a further one), the chainage range along that
// conductor, the groups, the position (with longitude and latitude when
// the document is geo-referenced), the numbers behind the finding as
// "name = value ± sigma unit" joined by "; ", and the message. A document
// with no findings gives the header alone.
func WriteFindingsCSV(w io.Writer, d *Document) error {
	if err := d.Validate(); err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(findingsHeader); err != nil {
		return fmt.Errorf("report: writing findings CSV: %w", err)
	}
	for _, f := range d.Findings {
		conductor := 1
		if f.Conductor > 0 {
			conductor = f.Conductor
		}
		lon, lat := "", ""
		if lo, la, ok := d.wgs84(f.Position); ok {
			lon, lat = fix(lo, 8), fix(la, 8)
		}
		vals := make([]string, 0, len(f.Values))
		for _, v := range f.Values {
			s := v.Name + " = "
			if v.Sigma > 0 {
				s += PlusMinus(v.Value, v.Sigma)
			} else {
				s += strconv.FormatFloat(v.Value, 'g', 6, 64)
			}
			if v.Unit != "" {
				s += " " + v.Unit
			}
			vals = append(vals, s)
		}
		row := []string{
			f.Severity, f.Kind, strconv.Itoa(conductor),
			fix(f.ChainageFrom, 3), fix(f.ChainageTo, 3), strings.Join(f.Groups, " "),
			fix(f.Position[0], 3), fix(f.Position[1], 3), fix(f.Position[2], 3), lon, lat,
			strings.Join(vals, "; "), f.Message,
		}
		if err := cw.Write(row); err != nil {
			return fmt.Errorf("report: writing findings CSV: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("report: writing findings CSV: %w", err)
	}
	return nil
}
