package ingest

import (
	"fmt"
	"strings"
	"testing"
	"time"
)

// ISO 8601 writes a UTC offset as ±hh:mm (extended), ±hhmm (basic) or ±hh
// (ISO 8601-1:2019, 4.3.13 and 4.3.14, from memory); strftime's %z writes
// the basic form (C11 7.27.3.5, from memory), and so do many loggers. RFC
// 3339 allows only ±hh:mm, and a log with "+0200" was refused, with a hint
// about decimal points in a decimal-comma file that held none. Each form
// must read as the same instant as the UTC stamp, computed here by Go's
// time package from the civil date.
func TestTimeOffsetBasicForm(t *testing.T) {
	utc := float64(time.Date(2026, 4, 21, 8, 40, 0, 0, time.UTC).Unix())
	for _, c := range []struct {
		stamp string
		shift float64 // s after utc
	}{
		{"2026-04-21T10:40:00+0200", 0},
		{"2026-04-21T10:40:00.500+0200", 0.5},
		{"2026-04-21 10:40:00+0200", 0},
		{"2026-04-21T10:40:00+02", 0},
		{"2026-04-21T01:10:00-0730", 0},
		{"2026-04-21 10:40:00,25+0200", 0.25},
		{"2026-04-21T10:40:00+02:00", 0}, // RFC 3339, as before
	} {
		for _, delim := range []string{",", ";"} {
			text := "time" + delim + "x" + delim + "y" + delim + "z" + delim + "bx" + delim + "by" + delim + "bz\n" +
				c.stamp + delim + "0" + delim + "0" + delim + "0" + delim + "458" + delim + "16021" + delim + "-46258\n"
			if strings.Contains(c.stamp, ",") && delim == "," {
				continue
			}
			s, err := ReadSamples(writeFile(t, "offset.csv", text))
			if err != nil {
				t.Errorf("%q (delimiter %q): %v", c.stamp, delim, err)
				continue
			}
			if got, want := s.Time[0], utc+c.shift; got != want {
				t.Errorf("%q (delimiter %q) read as %.3f s, want %.3f s (2026-04-21T08:40:00Z + %g s)", c.stamp, delim, got, want, c.shift)
			}
			if w := strings.Join(s.Warnings, "\n"); strings.Contains(w, "give no UTC offset") {
				t.Errorf("%q: warned as a time without its offset: %s", c.stamp, w)
			}
		}
	}
}

// The decimal-comma hint on a cell that is not a number is given only when
// the cell holds a point, which a decimal-comma file does not read as a
// decimal point; on a cell with none it sent the user after a point that
// was not there.
func TestDecimalCommaHintOnlyWithPoint(t *testing.T) {
	const head = "time;x;y;z;bx;by;bz\n"
	_, err := ReadSamples(writeFile(t, "nopoint.csv", head+"2026-04-21T10:40:00 CEST;0;0;0,25;458,9;16021,0;-46258,7\n"))
	wantErr(t, err, "is not a number or an RFC 3339 time")
	if strings.Contains(err.Error(), "decimal point") {
		t.Errorf("a time without a point drew the decimal point hint: %v", err)
	}
	_, err = ReadSamples(writeFile(t, "point.csv", head+"2026-04-21T10:40:00Z;0;0;0,25;458.9;16021,0;-46258,7\n"))
	wantErr(t, err, `column bx: "458.9" is not a number (the file is read with decimal commas, so a point is not a decimal point)`)
}

// A comma-delimited CSV whose numbers are quoted with decimal commas
// ("0,25"), as spreadsheets in decimal-comma locales save CSV: inside
// quotes the comma cannot be the delimiter, so a column whose quoted
// numbers are all written so is read with decimal commas. Before, the
// file was refused ("a decimal comma inside quotes ... save the file
// again with ';'"). A column that also holds a decimal point, or whose
// commas all stand before three digits ("1,500": thousands?), is refused
// as before; so is --decimal-comma on a comma-delimited file, which would
// read the unquoted fields' commas as decimals too.
func TestQuotedDecimalCommaInCommaFile(t *testing.T) {
	const head = "time,x,y,z,bx,by,bz\n"
	text := head +
		`"1776760800,0","0,0","0","0,25","458,96","16021,02","-46258,72"` + "\n" +
		`"1776760800,5","0,1",0,"0,25",459,"16021,5","-4,6258E+04"` + "\n"
	p := writeFile(t, "qdc.csv", text)
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		got  []float64
		want []float64
	}{
		{"time", s.Time, []float64{1776760800, 1776760800.5}},
		{"x", s.X, []float64{0, 0.1}},
		{"z", s.Z, []float64{0.25, 0.25}},
		{"bx", s.Bx, []float64{458.96, 459}},
		{"by", s.By, []float64{16021.02, 16021.5}},
		{"bz", s.Bz, []float64{-46258.72, -46258}},
	} {
		if len(c.got) != len(c.want) {
			t.Fatalf("%s: %v, want %v", c.name, c.got, c.want)
		}
		for i := range c.want {
			if c.got[i] != c.want[i] {
				t.Errorf("%s[%d] = %v, want %v", c.name, i, c.got[i], c.want[i])
			}
		}
	}

	// A column of decimal points beside them is read with points.
	s, err = ReadSamples(writeFile(t, "beside.csv", head+
		`"1776760800,0","0,0",0,"0,25","458,96",16021.02,-46258`+"\n"))
	if err != nil || s.Bx[0] != 458.96 || s.By[0] != 16021.02 {
		t.Errorf("a column of points beside quoted decimal commas: %v", err)
	}
	// A decimal point in a column of quoted decimal commas: refused.
	_, err = ReadSamples(writeFile(t, "mixed2.csv", head+
		`1,0,0,0,"458,96","16021,5",-46258`+"\n"+`2,0,0,0,"458,97","16021.5",-46258`+"\n"))
	wantErr(t, err, `mixed2.csv:2: column by: "16021,5" is not a number (a decimal comma inside quotes`)
	wantErr(t, err, "read only in a column that writes no decimal point")
	// The same past what is looked at before reading (64 KiB): the
	// point is refused where it stands.
	var long strings.Builder
	long.WriteString(head)
	for i := range 3000 {
		fmt.Fprintf(&long, "%d,0,0,0,\"458,96\",16021,-46258\n", i)
	}
	long.WriteString(`3000,0,0,0,"458.97",16021,-46258` + "\n")
	_, err = ReadSamples(writeFile(t, "late.csv", long.String()))
	wantErr(t, err, `late.csv:3002: column bx: "458.97" is not a number (the column's quoted numbers are read with decimal commas`)
	// Commas that may group thousands: not read as decimals.
	_, err = ReadSamples(writeFile(t, "grouped.csv", head+
		`1,0,0,0,"1,458","16,021","-46,258"`+"\n"))
	wantErr(t, err, `grouped.csv:2: column bx: "1,458" is not a number`)
	wantErr(t, err, "save the file again with ';' as the delimiter")

	_, err = ReadSamples(p, WithDecimalComma(true))
	wantErr(t, err, "decimal commas need a delimiter other than the comma")
	wantErr(t, err, "save the file again with ';' as the delimiter")

	// A word in a comma-delimited file draws no decimal-comma hint: the
	// hint is for quoted numbers with a decimal comma.
	_, err = ReadSamples(writeFile(t, "bare.csv", "time,x,y,z,bx,by,bz\n1,0,0,0,458,16021,ab\n"))
	wantErr(t, err, `"ab" is not a number`)
	if strings.Contains(err.Error(), "decimal comma") {
		t.Errorf("a word drew the decimal comma hint: %v", err)
	}
}
