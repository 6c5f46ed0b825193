package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// cutLog is an invented Fenwick Lane traverse, 40 rows, with its values
// written as a logger prints them: bz with two decimals, or (shortest)
// with as many as the float64 needs (strconv's shortest form).
func cutLog(shortest bool) string {
	var b strings.Builder
	b.WriteString("# Fenwick Lane, traverse F03\ntime,x,y,z,bx,by,bz\n")
	for i := 0; i < 40; i++ {
		bz := -46214.04 - 0.37*float64(i)
		f := fmt.Sprintf("%.2f", bz)
		if shortest {
			bz += 1e-7 * float64(i%7+1)
			f = fmt.Sprint(bz)
		}
		fmt.Fprintf(&b, "%d,%.1f,2.0,0.3,%.2f,18859.19,%s\n", 1000+i, 0.1*float64(i), 120.5+0.1*float64(i), f)
	}
	return b.String()
}

// TestCSVCutLastLine: a CSV log whose last line stops inside its last
// value, with no line end (a logger that lost power, a copy that stopped),
// is refused naming its file, line and column, and read without that line,
// with a warning naming it, when unterminated input is allowed; a last line
// without a line end whose values are whole is read as before. The log is
// invented; the cut is simulated by dropping the file's last bytes.
func TestCSVCutLastLine(t *testing.T) {
	for _, shortest := range []bool{false, true} {
		whole := cutLog(shortest)
		lastLine := strings.Count(whole, "\n") // the 40th row's line number
		last := strings.LastIndex(whole[:len(whole)-1], "\n") + 1
		lastText := whole[last : len(whole)-1]
		bz := lastText[strings.LastIndex(lastText, ",")+1:]
		for _, chunk := range []int{1 << 20, len(lastText) + 2} {
			opts := func(o ...Option) []Option {
				return append([]Option{WithAllocator(checked(t)), withChunkBytes(chunk), WithWorkers(2)}, o...)
			}
			// Whole, with and without the last line end: 40 rows.
			for _, text := range []string{whole, whole[:len(whole)-1], strings.TrimSuffix(whole, "\n") + "\r"} {
				s, err := ReadSamples(writeFile(t, "fenwick-lane.csv", text), opts()...)
				if err != nil {
					t.Fatalf("shortest %v chunk %d: whole log: %v", shortest, chunk, err)
				}
				if s.Len() != 40 || len(s.Warnings) != 0 {
					t.Fatalf("shortest %v chunk %d: whole log: %d rows, warnings %q; want 40 and none", shortest, chunk, s.Len(), s.Warnings)
				}
			}
			// Cut inside bz: after its point, before it, and inside its
			// integer part ("-462" from "-46214.04"); cut after the
			// delimiter (bz empty) and inside by (a field short).
			// In shortest form, where the decimals vary from line to line,
			// a cut is found when it leaves fewer decimals than every line
			// before has: one a few digits in, not one of the last digit
			// alone (an error of 1e-11 nT).
			first := bz[:len(bz)-1]
			if shortest {
				first = bz[:strings.Index(bz, ".")+3]
			}
			cuts := []struct{ keep, col string }{
				{first, "bz"}, {bz[:strings.Index(bz, ".")], "bz"}, {bz[:4], "bz"}, {"", "bz"},
			}
			for _, c := range cuts {
				text := whole[:len(whole)-1-len(bz)] + c.keep
				p := writeFile(t, "fenwick-lane.csv", text)
				_, err := ReadSamples(p, opts()...)
				wantErr(t, err, fmt.Sprintf("fenwick-lane.csv:%d: column %s: the last line has no line end and its last value %q", lastLine, c.col, c.keep))
				s, err := ReadSamples(p, opts(WithAllowUnterminatedStream(true), WithAllowMissing(true))...)
				if err != nil {
					t.Fatalf("shortest %v chunk %d cut %q: %v", shortest, chunk, c.keep, err)
				}
				if s.Len() != 39 || len(warningsWith(s.Warnings, fmt.Sprintf("fenwick-lane.csv:%d: the last line has no line end", lastLine))) != 1 {
					t.Errorf("shortest %v chunk %d cut %q allowed: %d rows, warnings %q; want 39 and one naming line %d", shortest, chunk, c.keep, s.Len(), s.Warnings, lastLine)
				}
			}
			text := whole[:last] + lastText[:strings.Index(lastText, ",18859")+3]
			_, err := ReadSamples(writeFile(t, "fenwick-lane.csv", text), opts()...)
			wantErr(t, err, fmt.Sprintf("fenwick-lane.csv:%d: the last line has no line end and has 6 fields where the header has 7", lastLine))
		}
	}
	// A group name cut short: "F0" after "F03".
	g := "time,bx,by,bz,group\n1,120.5,18859.19,-46214.04,F03\n2,120.6,18859.19,-46214.41,F03\n3,120.7,18859.19,-46214.78,F0"
	_, err := ReadSamples(writeFile(t, "fenwick-lane.csv", g))
	wantErr(t, err, `fenwick-lane.csv:4: column group: the last line has no line end and its last value "F0" is a shorter start of "F03"`)
	// Whole numbers: a count cut from 5 digits to 3.
	n := "time,bx,by,bz\n1,1205,188591,-462140\n2,1206,188592,-462144\n3,1207,188593,-462"
	_, err = ReadSamples(writeFile(t, "fenwick-lane.csv", n))
	wantErr(t, err, `fenwick-lane.csv:4: column bz: the last line has no line end and its last value "-462" has 3 digits where the lines before have at least 6`)
	// One data line has nothing to be compared with: read.
	if s, err := ReadSamples(writeFile(t, "fenwick-lane.csv", "time,bx,by,bz\n1,120.5,18859.19,-462")); err != nil || s.Len() != 1 {
		t.Errorf("one unterminated data line: %v", err)
	}
}
