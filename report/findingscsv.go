package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
)

// findingsHeader lists the columns of WriteFindingsCSV.
var findingsHeader = []string{
	"severity", "kind", "conductor", "chainage_from_m", "chainage_to_m", "groups",
	"east_m", "north_m", "up_m", "lon_deg", "lat_deg", "values", "message",
	"value_name", "value", "value_sigma", "value_unit", "cover_m", "cover_sigma_m",
	"id", "value_key", "value_keys",
}

// findingsMessage is the index of findings.csv's message column.
var findingsMessage = slices.Index(findingsHeader, "message")

// WriteFindingsCSV writes the findings, one row each, in the document's
// order (most pressing first at each chainage; see SortFindings), for a
// crew's spreadsheet: severity, kind, the conductor (1 for the route's,
// the track's number for a further one, empty for a further line no
// conductor's track follows, Finding.Lone), the chainage range along that
// conductor (conductor 1's for a lone line), the groups, the position
// (with longitude and latitude when the document is geo-referenced), the
// numbers behind the finding as "name = value ± sigma unit" (four
// significant digits for a value without a sigma) joined by "; ", and the
// message. Then, for a spreadsheet to sort and filter on, the finding's
// first value (the one its message leads with: a shallow stretch's least
// cover, a step's size, a weak source's current, a poor fit's reduced
// chi-square, an object's east) as numbers: value_name, value,
// value_sigma (empty when the value has none) and value_unit (empty for
// a dimensionless value); and cover_m and cover_sigma_m, its value named
// "cover" or "depth below ground" (a shallow stretch's, a weak source's,
// an object's), empty for a finding without one. They were in the values
// text alone, where a crew could not sort by cover (found in review).
// Last, id: the finding's id (FindingIDs), as results.json's findings[].id
// and route.geojson's finding feature give it, so the files join on it
// (empty on the cautions' and warnings' rows; added at the end). Then
// value_key, the machine key of the first value (the one in value_name:
// ValueKey, as results.json's findings[].values[].key gives it), and
// value_keys, the keys of all the values in the order of the values
// column, joined by "; ": a program reads the values by key, as the
// phrases in values and value_name may be reworded (added at the end
// after id).
// Numbers are written as results.csv writes them: a sigma to six
// significant digits, a value to two digits past its sigma's leading one
// (six significant digits without a sigma), cover to the millimetre at
// least.
//
// The first rows, before the findings, are the safety cautions every crew
// report carries (Cautions), one row each with severity "caution", kind
// "safety" (SafetyKind, which no finding has), the caution in message and
// every other column empty, so that a crew given only the spreadsheet
// reads them first. Then come the run's warnings (Document.Warnings: the
// residuals of some fits correlated, rows skipped, readings clipped), one
// row each with severity "warning", kind "run-warning" (RunWarningKind)
// and the warning in message, every other column empty: they were in
// results.json and the crew report alone, and a crew given only the
// spreadsheet missed them (found in review). A program wanting the
// findings alone skips the rows of kind "safety" and "run-warning". A
// document with no findings gives the header, the cautions and the
// warnings.
//
// The file starts with a UTF-8 byte order mark (EF BB BF), so that
// spreadsheets that otherwise guess a legacy code page show "±" and "°"
// as written; CSV readers that do not skip it see it at the start of the
// first header name.
//
// The text cells (groups, values, message) go through textCell: one that
// starts with "=", "+", "-", "@", a tab or a carriage return (a group
// named "=1+2") gets a leading apostrophe, so that a spreadsheet shows it
// as text rather than running it as a formula.
func WriteFindingsCSV(w io.Writer, d *Document) error {
	return WriteFindingsCSVWith(w, d, CSVOptions{})
}

// WriteFindingsCSVWith is WriteFindingsCSV in the style opt asks for:
// with opt.DecimalComma, a semicolon between fields and a decimal comma in
// every number (chainages, positions, longitude and latitude), the text
// cells (values and message too) as WriteFindingsCSV writes them.
func WriteFindingsCSVWith(w io.Writer, d *Document, opt CSVOptions) error {
	if err := d.Validate(); err != nil {
		return err
	}
	if _, err := io.WriteString(w, utf8BOM); err != nil {
		return fmt.Errorf("report: writing findings CSV: %w", err)
	}
	wr := csv.NewWriter(w)
	cw := newCSVRowWriter(wr, opt, findingsHeader, findingsTextColumns...)
	if err := wr.Write(findingsHeader); err != nil {
		return fmt.Errorf("report: writing findings CSV: %w", err)
	}
	for _, c := range Cautions {
		row := make([]string, len(findingsHeader))
		row[0], row[1], row[findingsMessage] = SeverityCaution, SafetyKind, c
		if err := cw.Write(row); err != nil {
			return fmt.Errorf("report: writing findings CSV: %w", err)
		}
	}
	for _, m := range d.Warnings {
		row := make([]string, len(findingsHeader))
		row[0], row[1], row[findingsMessage] = SeverityWarning, RunWarningKind, textCell(m)
		if err := cw.Write(row); err != nil {
			return fmt.Errorf("report: writing findings CSV: %w", err)
		}
	}
	ids := d.FindingIDs()
	for fi, f := range d.Findings {
		conductor := "1"
		switch {
		case f.Lone:
			conductor = "" // a line no track follows: not conductor 1
		case f.Conductor > 0:
			conductor = strconv.Itoa(f.Conductor)
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
				s += sig4(v.Value)
			}
			if v.Unit != "" {
				s += " " + v.Unit
			}
			vals = append(vals, s)
		}
		row := []string{
			f.Severity, f.Kind, conductor,
			fix(f.ChainageFrom, 3), fix(f.ChainageTo, 3), textCell(strings.Join(f.Groups, "; ")),
			fix(f.Position[0], 3), fix(f.Position[1], 3), fix(f.Position[2], 3), lon, lat,
			textCell(strings.Join(vals, "; ")), textCell(f.Message),
		}
		row = append(row, findingNumbers(f.Values)...)
		row = append(row, textCell(ids[fi]))
		keys := make([]string, len(f.Values))
		for k, v := range f.Values {
			keys[k] = ValueKey(f.Kind, v)
		}
		first := ""
		if len(keys) > 0 {
			first = keys[0]
		}
		row = append(row, first, strings.Join(keys, "; "))
		if err := cw.Write(row); err != nil {
			return fmt.Errorf("report: writing findings CSV: %w", err)
		}
	}
	wr.Flush()
	if err := wr.Error(); err != nil {
		return fmt.Errorf("report: writing findings CSV: %w", err)
	}
	return nil
}

// findingNumbers are the cells value_name, value, value_sigma,
// value_unit, cover_m and cover_sigma_m of a finding with values vs
// (WriteFindingsCSV).
func findingNumbers(vs []Value) []string {
	out := make([]string, 6)
	if len(vs) > 0 {
		v := vs[0]
		out[0], out[3] = textCell(v.Name), v.Unit
		if s := sigCell(v.Sigma); s != "" {
			out[1], out[2] = fixSig(v.Value, v.Sigma, 0), s
		} else {
			out[1] = sig(v.Value)
		}
	}
	for _, v := range vs {
		if v.Name == "cover" || v.Name == "depth below ground" {
			out[4], out[5] = fixSig(v.Value, v.Sigma, 3), sigCell(v.Sigma)
			break
		}
	}
	return out
}

// SafetyKind is the kind of the rows of findings.csv that hold the
// safety cautions (Cautions) rather than a finding.
const SafetyKind = "safety"

// RunWarningKind is the kind of the rows of findings.csv that hold the
// run's warnings (Document.Warnings) rather than a finding.
const RunWarningKind = "run-warning"

// utf8BOM is the UTF-8 encoding of U+FEFF, the byte order mark.
const utf8BOM = "\uFEFF"

// sig4 formats a value without a sigma to four significant digits,
// trailing zeros dropped ("0.02959", "1.8"); a whole number of five or
// more digits is written whole ("12346", not "1.235e+04"), and only very
// small magnitudes take an exponent.
func sig4(v float64) string {
	s := strconv.FormatFloat(v, 'g', 4, 64)
	if strings.ContainsRune(s, 'e') && math.Abs(v) >= 1 {
		s = strconv.FormatFloat(v, 'f', 0, 64)
	}
	return s
}
