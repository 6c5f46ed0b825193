package report

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// decimalCommaNumber parses a number as a spreadsheet set to German or
// French reads it: a comma for the decimal mark, no thousands group, and
// an exponent as "9,51788e-05" (the CLDR number symbols of de and fr, from
// memory: decimal ",", group "." or a space; the files never group
// thousands). A point anywhere is refused: such a spreadsheet would read
// "60.015" as 60015, the fault this style is for.
func decimalCommaNumber(s string) (float64, bool) {
	if strings.Contains(s, ".") || strings.Count(s, ",") > 1 {
		return 0, false
	}
	v, err := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64)
	return v, err == nil
}

// readRecords reads a whole CSV file separated by sep, after its byte
// order mark if it has one.
func readRecords(t *testing.T, b []byte, sep rune) [][]string {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(b, []byte(utf8BOM))))
	r.Comma = sep
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

// TestCSVDecimalCommaNumbers: results.csv and findings.csv written with a
// decimal comma (CSVOptions.DecimalComma) are separated by ";" (RFC 4180
// with ";" for ",") and read back, by a reader that knows the
// convention, to the very numbers of the files written as usual, every
// text cell as it was. Every column that is not listed as text holds a
// number or nothing in the usual files, so that a column of text added
// later and not listed fails here rather than having its points turned to
// commas. Before, a spreadsheet set to German read "60.015" as 60015 and
// "-0.400" as -400 (found in review, with LibreOffice Calc set to de-DE).
func TestCSVDecimalCommaNumbers(t *testing.T) {
	d := fenwickLane(true)
	// A problem holding the new separator and a formula-like group name:
	// text cells, quoted as needed and written as they are.
	d.Groups[3].Problem = "poor fit; see the profile, 0.5 m off"
	d.Groups[4].Key = "-T04"
	files := []struct {
		name  string
		write func(*bytes.Buffer, CSVOptions) error
		text  []string
	}{
		{FileCSV, func(b *bytes.Buffer, o CSVOptions) error { return WriteCSVWith(b, d, o) }, csvTextColumns},
		{FileFindings, func(b *bytes.Buffer, o CSVOptions) error { return WriteFindingsCSVWith(b, d, o) }, findingsTextColumns},
	}
	for _, f := range files {
		var usual, comma bytes.Buffer
		if err := f.write(&usual, CSVOptions{}); err != nil {
			t.Fatal(err)
		}
		if err := f.write(&comma, CSVOptions{DecimalComma: true}); err != nil {
			t.Fatal(err)
		}
		u, c := readRecords(t, usual.Bytes(), ','), readRecords(t, comma.Bytes(), ';')
		if len(u) != len(c) || len(u) < 2 {
			t.Fatalf("%s: %d rows written as usual, %d with a decimal comma", f.name, len(u), len(c))
		}
		if !slices.Equal(u[0], c[0]) {
			t.Errorf("%s: header %v with a decimal comma, want %v", f.name, c[0], u[0])
		}
		numbers, threeDecimals := 0, 0
		for i := 1; i < len(u); i++ {
			if len(u[i]) != len(c[i]) {
				t.Fatalf("%s row %d: %d cells with a decimal comma, want %d", f.name, i, len(c[i]), len(u[i]))
			}
			for j, uc := range u[i] {
				col, cc := u[0][j], c[i][j]
				if slices.Contains(f.text, col) || uc == "" {
					if cc != uc {
						t.Errorf("%s row %d %s: %q with a decimal comma, want %q as written", f.name, i, col, cc, uc)
					}
					continue
				}
				want, err := strconv.ParseFloat(uc, 64)
				if err != nil {
					t.Errorf("%s row %d %s: %q is no number; a column of text belongs in the list of text columns", f.name, i, col, uc)
					continue
				}
				got, ok := decimalCommaNumber(cc)
				if !ok || got != want {
					t.Errorf("%s row %d %s: %q reads %v (ok %v) with a decimal comma, want %v from %q", f.name, i, col, cc, got, ok, want, uc)
				}
				numbers++
				if k := strings.IndexByte(uc, '.'); k >= 0 && len(uc)-k-1 == 3 {
					threeDecimals++ // "60.015": the cells a spreadsheet set to German took for thousands
				}
			}
		}
		if numbers == 0 || threeDecimals == 0 {
			t.Errorf("%s: %d numbers, %d of three decimals compared; the fixture should give both", f.name, numbers, threeDecimals)
		}
	}
}

// TestCSVDecimalCommaOnlyCSVChanges: WriteFiles and WriteFilesWith with
// the zero CSVOptions write the same bytes; with a decimal comma,
// results.json and route.geojson are unchanged and report.html differs
// only in its settings' line on the tables for spreadsheets, which tells
// how to open each style.
func TestCSVDecimalCommaOnlyCSVChanges(t *testing.T) {
	d := fenwickLane(true)
	dir := t.TempDir()
	write := func(name string, opt *CSVOptions) map[string][]byte {
		out := filepath.Join(dir, name)
		var err error
		if opt == nil {
			err = WriteFiles(out, d)
		} else {
			err = WriteFilesWith(out, d, *opt)
		}
		if err != nil {
			t.Fatal(err)
		}
		m := map[string][]byte{}
		for _, f := range []string{FileJSON, FileCSV, FileFindings, FileGeoJSON, FileHTML} {
			b, err := os.ReadFile(filepath.Join(out, f))
			if err != nil {
				t.Fatal(err)
			}
			m[f] = b
		}
		return m
	}
	plain, zero, comma := write("plain", nil), write("zero", &CSVOptions{}), write("comma", &CSVOptions{DecimalComma: true})
	for f, b := range plain {
		if !bytes.Equal(zero[f], b) {
			t.Errorf("%s differs between WriteFiles and WriteFilesWith's zero options", f)
		}
	}
	for _, f := range []string{FileJSON, FileGeoJSON} {
		if !bytes.Equal(comma[f], plain[f]) {
			t.Errorf("%s changes with a decimal comma", f)
		}
	}
	for _, f := range []string{FileCSV, FileFindings} {
		if bytes.Equal(comma[f], plain[f]) {
			t.Errorf("%s is the same with a decimal comma", f)
		}
	}
	const line = "<dt>Tables for spreadsheets</dt><dd>"
	usualText, commaText := csvText(CSVOptions{}), csvText(CSVOptions{DecimalComma: true})
	if !bytes.Contains(plain[FileHTML], []byte(line+usualText)) || !strings.Contains(usualText, "--csv-decimal-comma") {
		t.Errorf("report.html does not say how to open the usual CSV files: want %q", line+usualText)
	}
	if got := bytes.Replace(comma[FileHTML], []byte(commaText), []byte(usualText), 1); !bytes.Equal(got, plain[FileHTML]) {
		t.Errorf("report.html with a decimal comma differs in more than its settings' line %q", commaText)
	}
	if !strings.Contains(commaText, "semicolon") || !strings.Contains(commaText, "60,015") {
		t.Errorf("the decimal-comma files are told as %q; want the semicolon and 60,015 named", commaText)
	}
}

// TestFindingsCSVNumbers: findings.csv gives each finding's first value
// (value_name, value, value_sigma, value_unit) and its cover
// (cover_m, cover_sigma_m, from the value named "cover" or "depth below
// ground") as numbers a spreadsheet sorts, after the 13 columns it had,
// which keep their places. Before, a shallow stretch's cover was only in
// the values text ("cover = 0.400 ± 0.020 m; minimum cover = 0.6 m";
// found in review). The numbers are the document's (results.json's
// findings[].values) to the digits the file keeps: two past the sigma's
// leading one, six significant digits without a sigma.
func TestFindingsCSVNumbers(t *testing.T) {
	d := fenwickLane(true)
	d.Findings = append(d.Findings,
		Finding{Kind: "shallow-cover", Severity: SeverityWarning, Message: "shallow",
			Values: []Value{{Name: "cover", Value: 0.40046, Sigma: 0.0200007, Unit: "m"}, {Name: "minimum cover", Value: 0.6, Unit: "m"}}},
		Finding{Kind: "weak-source", Severity: SeverityInfo, Message: "weak",
			Values: []Value{{Name: "current", Value: 0.851, Sigma: 0.012, Unit: "A"}, {Name: "dip", Value: 72.13, Unit: "deg"},
				{Name: "depth below ground", Value: 0.449, Sigma: 0.046, Unit: "m"}}},
		Finding{Kind: "poor-fit", Severity: SeverityCaution, Message: "poor",
			Values: []Value{{Name: "reduced chi-square", Value: 3780.123}}},
		Finding{Kind: "shallow-cover", Severity: SeverityInfo, Message: "no values"},
	)
	var buf bytes.Buffer
	if err := WriteFindingsCSV(&buf, d); err != nil {
		t.Fatal(err)
	}
	recs := readRecords(t, buf.Bytes(), ',')
	old := []string{"severity", "kind", "conductor", "chainage_from_m", "chainage_to_m", "groups",
		"east_m", "north_m", "up_m", "lon_deg", "lat_deg", "values", "message"}
	if !slices.Equal(recs[0][:len(old)], old) {
		t.Fatalf("findings.csv's first columns %v, want %v as before", recs[0][:len(old)], old)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	rows := recs[1+len(Cautions)+len(d.Warnings):]
	if len(rows) != len(d.Findings) {
		t.Fatalf("%d finding rows, want %d", len(rows), len(d.Findings))
	}
	num := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Errorf("%q is no number", s)
		}
		return v
	}
	for i, f := range d.Findings {
		r := rows[i]
		if r[col["message"]] != f.Message {
			t.Fatalf("row %d: message %q, want %q", i, r[col["message"]], f.Message)
		}
		if len(f.Values) == 0 {
			for _, c := range []string{"value_name", "value", "value_sigma", "value_unit", "cover_m", "cover_sigma_m"} {
				if r[col[c]] != "" {
					t.Errorf("%s without values: %s %q, want it empty", f.Kind, c, r[col[c]])
				}
			}
			continue
		}
		v := f.Values[0]
		if r[col["value_name"]] != v.Name || r[col["value_unit"]] != v.Unit {
			t.Errorf("%s: value_name %q, value_unit %q; want %q, %q", f.Kind, r[col["value_name"]], r[col["value_unit"]], v.Name, v.Unit)
		}
		// Two digits past the sigma's leading one: within a twentieth of
		// the sigma; six significant digits without one.
		tol := v.Sigma / 20
		if v.Sigma == 0 {
			tol = 1e-5 * max(1, abs(v.Value))
			if r[col["value_sigma"]] != "" {
				t.Errorf("%s: value_sigma %q for a value without one", f.Kind, r[col["value_sigma"]])
			}
		} else if got := num(r[col["value_sigma"]]); abs(got-v.Sigma) > 1e-5*v.Sigma {
			t.Errorf("%s: value_sigma %v, want %v", f.Kind, got, v.Sigma)
		}
		if got := num(r[col["value"]]); abs(got-v.Value) > tol {
			t.Errorf("%s: value %v, want %v within %v", f.Kind, got, v.Value, tol)
		}
		var cover *Value
		for k := range f.Values {
			if n := f.Values[k].Name; n == "cover" || n == "depth below ground" {
				cover = &f.Values[k]
				break
			}
		}
		switch {
		case cover == nil && (r[col["cover_m"]] != "" || r[col["cover_sigma_m"]] != ""):
			t.Errorf("%s: cover_m %q without a cover value", f.Kind, r[col["cover_m"]])
		case cover != nil:
			if got := num(r[col["cover_m"]]); abs(got-cover.Value) > max(cover.Sigma/20, 5e-4) {
				t.Errorf("%s: cover_m %v, want %v", f.Kind, got, cover.Value)
			}
			if got := num(r[col["cover_sigma_m"]]); abs(got-cover.Sigma) > 1e-5*cover.Sigma {
				t.Errorf("%s: cover_sigma_m %v, want %v", f.Kind, got, cover.Sigma)
			}
		}
	}
	if r := rows[len(rows)-4]; r[col["cover_m"]] != "0.4005" || r[col["value"]] != "0.4005" {
		t.Errorf("shallow stretch: cover_m %q, value %q; want 0.4005 (two digits past a sigma of 0.020)", r[col["cover_m"]], r[col["value"]])
	}
}

func abs(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}
