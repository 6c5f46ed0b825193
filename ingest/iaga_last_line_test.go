package ingest

import (
	"bytes"
	"fmt"
	"os"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// Whether a last IAGA-2002 data line without its line end is cut is told
// by its content, not its width. A data line holds date, time, day of year
// and four values written with two decimals (the IAGA-2002 format
// description of IAGA Division V-DAT; every line of the Boulder file,
// ../shared/data/iaga2002, SOURCE.md, does). The last record of that file
// typed again with single spaces and no line end is whole: it is read with
// its values as written. The 70-character record cut after any of its
// first 69 characters lacks a field or a decimal of its last value, and is
// refused naming the line; so is the retyped line cut inside its F.
func TestIAGALastLineRetypedOrCut(t *testing.T) {
	data, err := os.ReadFile(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	lines := bytes.SplitAfter(data, []byte("\n"))
	if len(lines[len(lines)-1]) == 0 {
		lines = lines[:len(lines)-1]
	}
	n := len(lines)
	head := string(bytes.Join(lines[:n-1], nil))
	full := strings.TrimRight(string(lines[n-1]), "\r\n")
	f := strings.Fields(full)
	if len(full) != 70 || len(f) != 7 || f[0] != "2014-11-01" || f[1] != "23:59:00.000" {
		t.Fatalf("last line %q: want the 70-character record of 23:59", full)
	}
	retyped := strings.Join(f, " ")
	for _, c := range []struct{ name, text string }{
		{"retyped, LF file", head + retyped},
		{"retyped, CRLF file", strings.ReplaceAll(strings.ReplaceAll(head, "\r\n", "\n"), "\n", "\r\n") + retyped},
		{"retyped with tabs", head + strings.Join(f, "\t")},
		{"whole record", head + full},
	} {
		s, err := ReadSamples(writeFile(t, "bou-last.min", c.text))
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if got, want := fmt.Sprintf("%.2f", s.F[s.Len()-1]), f[6]; s.Len() != 1440 || got != want {
			t.Errorf("%s: %d rows, last F %s; want 1440 rows (a day of minutes), F %s", c.name, s.Len(), got, want)
		}
	}
	line := fmt.Sprintf("bou-cut.min:%d: the file ends inside this IAGA-2002 data line", n)
	for cut := 1; cut < len(full); cut++ {
		if strings.TrimSpace(full[:cut]) == "" {
			continue
		}
		_, err := ReadSamples(writeFile(t, "bou-cut.min", head+full[:cut]))
		if err == nil || !strings.Contains(err.Error(), line) {
			t.Errorf("cut after %d characters (%q): error %v, want %q", cut, full[:cut], err, line)
		}
	}
	for _, cut := range []string{retyped[:len(retyped)-1], retyped[:len(retyped)-3], retyped[:len(retyped)-4]} {
		_, err := ReadSamples(writeFile(t, "bou-cut.min", head+cut))
		if err == nil || !strings.Contains(err.Error(), line) || !strings.Contains(err.Error(), "decimals") && !strings.Contains(err.Error(), "fields") {
			t.Errorf("retyped line cut to %q: error %v, want %q", cut, err, line)
		}
	}
}
