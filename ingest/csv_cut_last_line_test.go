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
// is read without that line, with a warning naming its file, line, column
// and value, whether unterminated input is allowed or not; a last line
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
				for _, allow := range []bool{false, true} {
					s, err := ReadSamples(p, opts(WithAllowUnterminatedStream(allow), WithAllowMissing(true))...)
					if err != nil {
						t.Fatalf("shortest %v chunk %d cut %q: %v", shortest, chunk, c.keep, err)
					}
					if s.Len() != 39 || len(warningsWith(s.Warnings, fmt.Sprintf("fenwick-lane.csv:%d: column %s: the last line has no line end and its last value %q", lastLine, c.col, c.keep))) != 1 {
						t.Errorf("shortest %v chunk %d cut %q (allowed %v): %d rows, warnings %q; want 39 and one naming line %d", shortest, chunk, c.keep, allow, s.Len(), s.Warnings, lastLine)
					}
				}
			}
			text := whole[:last] + lastText[:strings.Index(lastText, ",18859")+3]
			s, err := ReadSamples(writeFile(t, "fenwick-lane.csv", text), opts()...)
			if err != nil {
				t.Fatalf("shortest %v chunk %d, a field short: %v", shortest, chunk, err)
			}
			if s.Len() != 39 || len(warningsWith(s.Warnings, fmt.Sprintf("fenwick-lane.csv:%d: the last line has no line end and has 6 fields where the header has 7: left out", lastLine))) != 1 {
				t.Errorf("shortest %v chunk %d, a field short: %d rows, warnings %q", shortest, chunk, s.Len(), s.Warnings)
			}
		}
	}
	for _, c := range []struct{ text, warn string }{
		// A group name cut short: "F0" after "F03".
		{"time,bx,by,bz,group\n1,120.5,18859.19,-46214.04,F03\n2,120.6,18859.19,-46214.41,F03\n3,120.7,18859.19,-46214.78,F0",
			`fenwick-lane.csv:4: column group: the last line has no line end and its last value "F0" is a shorter start of "F03"`},
		// Whole numbers: a count cut from 5 digits to 3.
		{"time,bx,by,bz\n1,1205,188591,-462140\n2,1206,188592,-462144\n3,1207,188593,-462",
			`fenwick-lane.csv:4: column bz: the last line has no line end and its last value "-462" has 3 digits where the lines before have at least 6`},
	} {
		s, err := ReadSamples(writeFile(t, "fenwick-lane.csv", c.text))
		if err != nil {
			t.Errorf("%q: %v", c.text, err)
		} else if s.Len() != 2 || len(warningsWith(s.Warnings, c.warn)) != 1 {
			t.Errorf("%q: %d rows, warnings %q; want 2 rows and %q", c.text, s.Len(), s.Warnings, c.warn)
		}
	}
	// One data line has nothing to be compared with: read.
	if s, err := ReadSamples(writeFile(t, "fenwick-lane.csv", "time,bx,by,bz\n1,120.5,18859.19,-462")); err != nil || s.Len() != 1 {
		t.Errorf("one unterminated data line: %v", err)
	}
}

// TestCSVLastLineTrimmedZeros: a whole last line without a line end whose
// last value has fewer decimals than the 50 lines before, as a logger that
// writes numbers without their trailing zeros leaves it ("-46901.5" after
// values with two decimals, "-46901." and "-4.69E+04" after %.4E values),
// does not refuse the file: the file is read without that line, with a
// warning naming file, line, column and value and how to read the line (a
// line end after it), and with a line end it is read. The log is invented.
func TestCSVLastLineTrimmedZeros(t *testing.T) {
	for _, c := range []struct{ format, last, how string }{
		{"%.2f", "-46901.5", "has 1 decimals where the lines before have at least 2"},
		{"%.2f", "-46901.", "has 0 decimals where the lines before have at least 2"},
		{"%.4E", "-4.69E+04", "has 2 decimals where the lines before have at least 4"},
	} {
		var b strings.Builder
		b.WriteString("time,x,y,z,bx,by,bz\n")
		for i := 0; i < 50; i++ {
			fmt.Fprintf(&b, "%d,%.1f,0,0.3,120.53,18859.19,"+c.format+"\n", i, 0.1*float64(i), -46901.21-0.37*float64(i))
		}
		text := b.String() + "50,5.0,0,0.3,120.53,18859.19," + c.last
		s, err := ReadSamples(writeFile(t, "harrow-fen.csv", text))
		if err != nil {
			t.Errorf("%s: %v", c.last, err)
			continue
		}
		want := fmt.Sprintf(`harrow-fen.csv:52: column bz: the last line has no line end and its last value %q %s: left out as a line cut short`, c.last, c.how)
		if s.Len() != 50 || len(warningsWith(s.Warnings, want)) != 1 || len(warningsWith(s.Warnings, "end the file with a line end to read it")) != 1 {
			t.Errorf("%s: %d rows, warnings %q; want 50 and one with %q", c.last, s.Len(), s.Warnings, want)
		}
		s, err = ReadSamples(writeFile(t, "harrow-fen.csv", text+"\n"))
		if err != nil {
			t.Errorf("%s with a line end: %v", c.last, err)
		} else if s.Len() != 51 || len(s.Warnings) != 0 {
			t.Errorf("%s with a line end: %d rows, warnings %q; want 51 and none", c.last, s.Len(), s.Warnings)
		}
	}
}
