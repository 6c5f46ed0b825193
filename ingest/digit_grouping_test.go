package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// groupedLog writes a ;-log as a spreadsheet saves a "#.##0" number
// format: whole nanotesla with the digits grouped by three with sep
// (18.861 for 18861), so that values below 1000 have no separator.
func groupedLog(sep string) string {
	var b strings.Builder
	b.WriteString("time;x;y;z;bx;by;bz\n")
	for i := 0; i < 40; i++ {
		bx := 900 + 7*i // 900 .. 1173: below 1000 whole, above grouped
		by, bz := 18861+i, -43983-i
		g := func(v int) string {
			s := fmt.Sprint(v)
			neg := strings.HasPrefix(s, "-")
			s = strings.TrimPrefix(s, "-")
			if len(s) > 3 {
				s = s[:len(s)-3] + sep + s[len(s)-3:]
			}
			if neg {
				s = "-" + s
			}
			return s
		}
		fmt.Fprintf(&b, "%d;%d;0;0;%s;%s;%s\n", 1776760800+i, i, g(bx), g(by), g(bz))
	}
	return b.String()
}

// A number column read with its digit grouping as decimals held two scales
// at once ("18.861" read as 18.861 nT beside "958" read as 958 nT) and was
// read without a word; it is refused now at the first grouped value, with
// what to do. Written with three decimals throughout (%.3f), or in shortest
// form, the same values are read as before.
func TestDigitGroupingRefused(t *testing.T) {
	for _, sep := range []string{".", ","} {
		text := groupedLog(sep)
		if sep == "," {
			text = strings.ReplaceAll(text, ";", "\t")
		}
		_, err := ReadSamples(writeFile(t, "log.csv", text))
		// bx passes 1000 at the 16th record: line 17.
		wantErr(t, err, fmt.Sprintf(`log.csv:17: column bx: "1%s005" looks like digit grouping (thousands separators); export without them`, sep))
		// The caller's word that the marks are decimals is taken.
		if _, err := ReadSamples(writeFile(t, "log.csv", text), WithDecimalComma(sep == ",")); err != nil {
			t.Errorf("sep %q with the decimal mark given: %v", sep, err)
		}
	}
	// Three decimals throughout, and shortest form, are decimals.
	var fixed, short strings.Builder
	fixed.WriteString("time;x;y;z;bx;by;bz\n")
	short.WriteString("time;x;y;z;bx;by;bz\n")
	for i := 0; i < 40; i++ {
		v := 1.125 + 0.013*float64(i)
		fmt.Fprintf(&fixed, "%d;%d;0;0;%.3f;%d;1\n", 1776760800+i, i, v, 100+i)
		fmt.Fprintf(&short, "%d;%d;0;0;%v;%d;1\n", 1776760800+i, i, float64(i)*0.125, 100+i)
	}
	// Shortest form over a few rows, none with fewer decimals, a whole
	// number among them (a simulated log's field near -152 nT): decimals,
	// since -152 lies next to -151.273, not to -151273.
	few := "time;x;y;z;bx;by;bz\n1776760800;0;0;0;-151.273;1;1\n1776760801;1;0;0;-152;1;1\n1776760802;2;0;0;-152.718;1;1\n"
	for name, text := range map[string]string{"fixed": fixed.String(), "short": short.String(), "few": few} {
		s, err := ReadSamples(writeFile(t, "log.csv", text))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if s.Len() != 40 && name != "few" {
			t.Errorf("%s: %d readings, want 40", name, s.Len())
		}
	}
}

// Values refused as no number because of their grouping say what to do:
// French and Swiss spreadsheets' spaces and apostrophes, and a grouping
// point in a file read with decimal commas.
func TestDigitGroupingRefusedValuesSayWhatToDo(t *testing.T) {
	for _, v := range []string{"18 860,934", "18\u202f860,934", "18\u00a0860,934", "18.860,934", "18.861"} {
		text := "time;x;y;z;bx;by;bz\n1776760800;0;0;0;38,952;" + v + ";-43,5\n"
		_, err := ReadSamples(writeFile(t, "log.csv", text))
		wantErr(t, err, "looks like digit grouping (thousands separators); export without them")
	}
	text := "time;x;y;z;bx;by;bz\n1776760800;0;0;0;38.952;18'860.934;-43.5\n"
	_, err := ReadSamples(writeFile(t, "log.csv", text))
	wantErr(t, err, `log.csv:2: column by: "18'860.934" is not a number (looks like digit grouping`)
}
