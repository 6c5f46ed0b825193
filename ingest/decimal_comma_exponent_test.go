package ingest

import (
	"math"
	"strings"
	"testing"
)

// ISO 80000-1:2009 (7.3.2) allows the comma as the decimal sign, and a
// spreadsheet in a decimal-comma locale writes scientific notation with
// it ("1,529340E-06"). README's rule detects decimal commas from the first
// row with a number written with a decimal comma or point; detection took
// only digits "," digits, so a log of fields in tesla written this way was
// refused with "is not a number" and no word of --decimal-comma.
func TestDecimalCommaWithExponentDetected(t *testing.T) {
	text := "time;x;y;z;Bx_T;By_T;Bz_T\n0;0;0;0;1,529340E-06;1,990417E-05;-4,668446E-05\n1;0;0;0;1,529477e-06;1,990400E+01;-4,668000E-05\n"
	s, err := ReadSamples(writeFile(t, "dce.csv", text))
	if err != nil {
		t.Fatal(err)
	}
	// 1 T = 1e9 nT (SI prefixes, BIPM SI Brochure, 9th ed., Table 7).
	for _, c := range []struct {
		got, want float64
	}{{s.Bx[0], 1529.34}, {s.By[0], 19904.17}, {s.Bz[0], -46684.46}, {s.Bx[1], 1529.477}, {s.By[1], 1.99040e10}} {
		if math.Abs(c.got-c.want) > 1e-9*math.Abs(c.want) {
			t.Errorf("read %v nT, want %v", c.got, c.want)
		}
	}
	for _, txt := range []string{"1,5E-06", "-4,668446E-05", "+2,0e+3", "12,5", "12,5E3"} {
		if !decimalCommaText([]byte(txt)) {
			t.Errorf("%q: not taken for a decimal-comma number", txt)
		}
	}
	for _, txt := range []string{"1,5E", "1,5E-", ",5E3", "1,E3", "1.5E-06", "1,5,6", "E3", "1,5E3,2", "1;5"} {
		if decimalCommaText([]byte(txt)) {
			t.Errorf("%q: taken for a decimal-comma number", txt)
		}
	}
}

// A file read with decimal points whose later cell holds a comma is
// refused naming --decimal-comma (the option's words here), also when the
// cell is in scientific notation.
func TestDecimalCommaRefusalNamesOption(t *testing.T) {
	text := "time;bx;by;bz\n0;1.5;2.5;3.5\n1;1,5E-06;2;3\n"
	_, err := ReadSamples(writeFile(t, "mixed.csv", text))
	wantErr(t, err, "mixed.csv:3")
	if !strings.Contains(err.Error(), decimalCommaOption) {
		t.Errorf("error %q: want %q named", err, decimalCommaOption)
	}
}
