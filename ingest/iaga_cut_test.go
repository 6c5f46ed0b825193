package ingest

import (
	"bytes"
	"os"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// IAGA-2002 data records are fixed-width, 70 characters and a line end
// (the IAGA-2002 format description of IAGA Division V-DAT; every data
// line of the Boulder file, ../shared/data/iaga2002, SOURCE.md, is 70
// characters and CRLF). A copy cut inside its last value, without that
// line end, was read with F = 523 nT for 52 382; now it is refused naming
// the file and the line. A whole file without its last line end, or a
// hand-written file whose lines differ in width, is read.
func TestIAGACutLastLine(t *testing.T) {
	data, err := os.ReadFile(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	lines := bytes.SplitAfter(data, []byte("\n"))
	head := bytes.Join(lines[:1110], nil) // header and data up to 18:04
	full := strings.TrimRight(string(lines[1110]), "\r\n")
	if len(full) != 70 {
		t.Fatalf("line 1111 has %d characters, want the format's 70: %q", len(full), full)
	}
	for _, cut := range []int{65, 60, 42, 20} {
		p := writeFile(t, "bou-cut.min", string(head)+full[:cut])
		_, err := ReadSamples(p)
		wantErr(t, err, "bou-cut.min:1111: the file ends inside this IAGA-2002 data line")
	}
	// The whole line without its line end is read, F and all.
	s, err := ReadSamples(writeFile(t, "bou-noeol.min", string(head)+full))
	if err != nil {
		t.Fatal(err)
	}
	if n := s.Len(); n != 1111-int(countHeader(head)) || s.F[n-1] < 52000 {
		t.Errorf("%d rows, last F %v", s.Len(), s.F[s.Len()-1])
	}
	// Lines of differing widths (hand-written) say nothing of a cut.
	hand := "Format                 IAGA-2002                                    |\n" +
		"DATE       TIME         DOY     BOUX      BOUY      BOUZ      BOUF   |\n" +
		"2014-11-01 00:00:00.000 305 20873.75 -9.99 47477.30 52397.33\n" +
		"2014-11-01 00:01:00.000 305 20873.8 -10 47477.2 52397.3\n" +
		"2014-11-01 00:02:00.000 305 20873.8 -10 47477.2 52397"
	if s, err := ReadSamples(writeFile(t, "hand.min", hand)); err != nil || s.Len() != 3 {
		t.Errorf("hand-written file: %v", err)
	}
}

// countHeader counts the lines of an IAGA-2002 text before its first data
// line (one starting with a digit).
func countHeader(b []byte) int64 {
	var n int64
	for _, l := range bytes.SplitAfter(b, []byte("\n")) {
		if len(l) > 0 && l[0] >= '0' && l[0] <= '9' {
			break
		}
		n++
	}
	return n
}
