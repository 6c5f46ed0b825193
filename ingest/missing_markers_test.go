package ingest

import (
	"math"
	"strings"
	"testing"
)

// TestMissingValueMarkers: the texts read as missing values. The set
// follows what spreadsheets and a reference library write and read for
// "no value": the spreadsheet error value #N/A (ECMA-376 Part 1, the
// formula error values), and pandas.read_csv's default na_values, which
// take "", "#N/A", "N/A", "n/a", "NA", "NULL", "null", "NaN", "nan" and
// "None" (from memory of its documentation). A lone "-" or "--", a
// logger's "no value", is no number (a sign needs digits after it). Any
// case is taken. Before, "n/a", "#N/A", "None", "-" and "--" were refused
// as "not a number" even with missing values allowed; a refused text that
// may be a marker ("n.a.", "#VALUE!") now lists those
// taken; "-1.5" and "-.5" stay numbers; a last line cut after a minus
// sign is still a cut line, not a missing value.
func TestMissingValueMarkers(t *testing.T) {
	const head = "time,x,y,z,bx,by,bz\n0,0,0,0,1,2,3\n"
	for _, m := range []string{"", "NaN", "nan", "NA", "na", "N/A", "n/a", "#N/A", "#n/a", "null", "NULL", "Null", "None", "none", "NONE", "-", "--"} {
		p := writeFile(t, "m.csv", head+"1,0,0,0,"+m+",2,3\n2,0,0,0,1,2,3\n")
		s, err := ReadSamples(p, WithAllowMissing(true))
		if err != nil {
			t.Errorf("%q with missing values allowed: %v", m, err)
			continue
		}
		if s.Len() != 3 || !math.IsNaN(s.Bx[1]) || s.Bx[2] != 1 {
			t.Errorf("%q: %d rows, bx %v; want 3 rows, the second NaN", m, s.Len(), s.Bx)
		}
		_, err = ReadSamples(p)
		if err == nil || !strings.Contains(err.Error(), "m.csv:3:") || !strings.Contains(err.Error(), "missing value") {
			t.Errorf("%q by default: %v, want a missing value refused at m.csv:3", m, err)
		}
	}
	for _, v := range []string{"-1.5", "-.5", "-0"} {
		s, err := ReadSamples(writeFile(t, "n.csv", head+"1,0,0,0,"+v+",2,3\n2,0,0,0,1,2,3\n"))
		if err != nil || s.Bx[1] >= 0 && v != "-0" || math.IsNaN(s.Bx[1]) {
			t.Errorf("%q: %v, bx %v; want a number", v, err, s)
		}
	}
	for _, v := range []string{"n.a.", "#VALUE!", "missing", "?"} {
		_, err := ReadSamples(writeFile(t, "w.csv", head+"1,0,0,0,"+v+",2,3\n2,0,0,0,1,2,3\n"), WithAllowMissing(true))
		if err == nil || !strings.Contains(err.Error(), "w.csv:3:") || !strings.Contains(err.Error(), "if it marks a missing value") ||
			!strings.Contains(err.Error(), missingMarkers) {
			t.Errorf("%q: %v, want it refused at w.csv:3 as a marker not taken, listing those taken", v, err)
		}
	}
	// Not every word is called a marker: a number with a stray letter is
	// not.
	if _, err := ReadSamples(writeFile(t, "x.csv", head+"1,0,0,0,1o0,2,3\n")); err == nil || strings.Contains(err.Error(), "marker") {
		t.Errorf(`"1o0": %v, want "not a number" without the marker hint`, err)
	}
	// A last line cut after a minus sign is still read without that line,
	// with a warning, not taken for a missing value.
	s, err := ReadSamples(writeFile(t, "c.csv", head+"1,0,0,0,1,2,3\n2,0,0,0,1,2,-"), WithAllowMissing(true))
	if err != nil || s.Len() != 2 || !strings.Contains(strings.Join(s.Warnings, "\n"), "c.csv:4") {
		t.Errorf("a last line cut after its sign: %v, %d rows, warnings %q; want 2 rows and a warning naming c.csv:4", err, s.Len(), s.Warnings)
	}
}
