package report

import (
	"bytes"
	"encoding/csv"
	"testing"
)

// TestResultsCSVByteOrderMark: results.csv starts with the UTF-8 byte
// order mark (U+FEFF, encoded EF BB BF; The Unicode Standard, section
// 23.8) when it holds text that is not ASCII, as findings.csv always does,
// so that a spreadsheet does not read a group named "Süd-01" in a legacy
// code page as "SÃ¼d-01"; plain ASCII is written without one. Either way
// the rest parses as CSV (RFC 4180) with the text as written.
func TestResultsCSVByteOrderMark(t *testing.T) {
	for _, key := range []string{"Süd-01", "T01"} {
		d := fenwickLane(false)
		d.Groups[0].Key = key
		var buf bytes.Buffer
		if err := WriteCSV(&buf, d); err != nil {
			t.Fatal(err)
		}
		b := buf.Bytes()
		hasBOM := bytes.HasPrefix(b, []byte{0xEF, 0xBB, 0xBF})
		if want := key != "T01"; hasBOM != want {
			t.Errorf("group %q: byte order mark %v, want %v", key, hasBOM, want)
		}
		rows, err := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(b, []byte{0xEF, 0xBB, 0xBF}))).ReadAll()
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
