package ingest

import (
	"math"
	"strings"
	"testing"
)

// TestParseNumberStrictDecimal: a number in a log is a plain decimal,
// [sign] digits [. digits] [e [sign] digits], as C's strtod reads it
// without its hexadecimal form (ISO C 7.22.1.3) and as loggers write them.
// Go's literal syntax that strconv.ParseFloat also takes, digit separators
// ("1_50") and hexadecimal floats ("0x1p4"), is not a number: in a field
// log it is corruption. Infinity and NaN spellings still parse, for the
// callers to refuse as out of range or take as missing.
func TestParseNumberStrictDecimal(t *testing.T) {
	for _, s := range []string{"1_50", "1_5.0", "1.5_0", "1e1_0", "0x1p4", "0X1P-2", "0x10", "0x1.8p1", "_15", "15_", "1__5",
		"0b101", "0o17", "1e", "1e+", "e5", ".", "-", "+.", "1.5.2", "--1", "1,5", "1 5", "150x", "1e5.0",
		"123456789012345678901_2", "0x123456789012345678901p0"} {
		if v, ok := parseNumber([]byte(s)); ok {
			t.Errorf("%q read as %v, want not a number", s, v)
		}
	}
	for _, tc := range []struct {
		s string
		v float64
	}{
		{"150", 150}, {"+150", 150}, {"-1.5e-3", -1.5e-3}, {".5", 0.5}, {"5.", 5}, {"1E5", 1e5}, {"-0.25E+2", -25},
		// More than 19 digits go to the slow path: still read.
		{"12345678901234567890123", 12345678901234567890123}, {"0.000000000000000000000012345", 1.2345e-23},
		{"1e400", math.Inf(1)}, {"-Inf", math.Inf(-1)}, {"infinity", math.Inf(1)},
	} {
		v, ok := parseNumber([]byte(tc.s))
		if !ok || v != tc.v {
			t.Errorf("%q read as %v (%v), want %v", tc.s, v, ok, tc.v)
		}
	}
	if v, ok := parseNumber([]byte("NaN")); !ok || v == v {
		t.Errorf(`"NaN" read as %v (%v), want NaN`, v, ok)
	}
}

// TestCSVNumberSyntax: in a CSV log a cell "1_50" is refused with its file,
// line and column, not read as 150; and a number with blanks around it
// reads the same quoted or not (RFC 4180 keeps the blanks of a quoted
// field as its text; the text " 150 " is the number 150 either way). The
// values are invented.
func TestCSVNumberSyntax(t *testing.T) {
	for _, cell := range []string{"1_50", "0x1p4"} {
		p := writeFile(t, "kestrel-moor.csv", "time,bx,by,bz\n0,120,18000,-46000\n1,"+cell+",18001,-46001\n")
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		wantErr(t, err, "kestrel-moor.csv:3: column bx: \""+cell+"\" is not a number")
	}
	p := writeFile(t, "kestrel-moor.csv", "time,bx,by,bz\n0, 150 ,18000,-46000\n1,\" 150 \",18001,-46001\n2,\"\t151\",\"18002 \",-46002\n")
	s, err := ReadSamples(p, WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 150 || s.Bx[1] != 150 || s.Bx[2] != 151 || s.By[2] != 18002 {
		t.Errorf("bx %v by %v, want 150 150 151 and by 18002 last", s.Bx, s.By)
	}
}

// TestIAGANumberSyntax: an IAGA-2002 element value is a plain decimal
// (INTERMAGNET technical manual, data line layout); "1_7500.00" in a data
// line of a real Boulder file (USGS, public domain) is refused with its line
// and column, not read as 17500.
func TestIAGANumberSyntax(t *testing.T) {
	const file = "bou20141101vmin.min"
	p := realIAGA(t, file, 100, func(s string) string {
		f := strings.Fields(s)
		return strings.Replace(s, f[3], f[3][:1]+"_"+f[3][1:], 1)
	})
	_, err := ReadSamples(p)
	wantErr(t, err, file+":100: column ")
	wantErr(t, err, "is not a number")
}
