package report

import (
	"bytes"
	"encoding/csv"
	"testing"
)

// TestResultsCSVByteOrderMark: results.csv is UTF-8 without a byte
// order mark (U+FEFF, encoded EF BB BF; The Unicode Standard, section
// 23.8) whatever its text, so that its first column is "chainage_m" to
// every CSV reader (RFC 4180 says nothing of a mark; Go's encoding/csv,
// like most, reads one as part of the first field). Before, a group named
// "Süd-01" or a "±" in a problem put one in front, and a script's first
// column changed name from run to run (found in review). findings.csv,
// for a spreadsheet, keeps its mark (TestWriteFindingsCSV). The text is
// written as given.
func TestResultsCSVByteOrderMark(t *testing.T) {
	for _, key := range []string{"Süd-01", "T01"} {
		d := fenwickLane(false)
		d.Groups[0].Key = key
		var buf bytes.Buffer
		if err := WriteCSV(&buf, d); err != nil {
			t.Fatal(err)
		}
		b := buf.Bytes()
		if bytes.HasPrefix(b, []byte{0xEF, 0xBB, 0xBF}) {
			t.Errorf("group %q: results.csv starts with a byte order mark", key)
		}
		rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		if rows[0][0] != "chainage_m" {
			t.Errorf("first header %q", rows[0][0])
		}
		found := false
		for _, r := range rows[1:] {
			found = found || r[2] == key
		}
		if !found {
			t.Errorf("no row for group %q", key)
		}
	}
}
