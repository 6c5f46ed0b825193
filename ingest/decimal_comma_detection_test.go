package ingest

import (
	"strings"
	"testing"
)

// ISO 80000-1:2009 (7.3.2) allows the comma or the point as the decimal
// sign, and spreadsheets in many locales write CSV with the comma and the
// semicolon as delimiter. Detection looked at the first record only: a
// row of delimiters alone under the header (which the reader skips) or a
// first row of whole numbers or missing cells got the file refused
// although every later row has decimal commas. The first record that
// decides is taken now; a decimal point decides the other way.
func TestDecimalCommaDetectedPastUndecidingRows(t *testing.T) {
	const head = "time;x;y;z;bx;by;bz\n"
	cases := []struct {
		name, text string
		opts       []Option
		bx         float64
	}{
		{"row of delimiters first", head + ";;;;;;\n1776760800;0;0;0;450,5;16000,5;-46250,5\n", nil, 450.5},
		{"whole numbers first", head + "1776760800;0;0;0;450;16000;-46250\n1776760801;0;1,5;0;450,5;16000,5;-46250,5\n", nil, 450},
		{"missing cells first", head + "1776760800;0;0;0;;;\n1776760801;0;0;0;450,5;16000,5;-46250,5\n", []Option{WithAllowMissing(true)}, nan},
		{"blank line and comment first", head + "\n# note\n1776760800;0;0;0;450,5;16000,5;-46250,5\n", nil, 450.5},
		{"decimal points after whole numbers", head + "1776760800;0;0;0;450;16000;-46250\n1776760801;0;1.5;0;450.5;16000.5;-46250.5\n", nil, 450},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := ReadSamples(writeFile(t, "log.csv", c.text), c.opts...)
			if err != nil {
				t.Fatal(err)
			}
			if got := s.Bx[0]; !(got == c.bx || (got != got && c.bx != c.bx)) {
				t.Errorf("first bx %v, want %v", got, c.bx)
			}
			if last := s.Len() - 1; s.Bx[last] != 450.5 && s.Bx[last] != 450 {
				t.Errorf("last bx %v, want 450.5", s.Bx[last])
			}
		})
	}
	// Decimal points after whole numbers are read as decimal points.
	s, err := ReadSamples(writeFile(t, "log.csv", cases[4].text))
	if err != nil {
		t.Fatal(err)
	}
	if s.Y[1] != 1.5 || s.Bx[1] != 450.5 {
		t.Errorf("decimal points read as y %v, bx %v; want 1.5, 450.5", s.Y[1], s.Bx[1])
	}
	// A refusal names the option, which the command line words as its flag.
	_, err = ReadSamples(writeFile(t, "log.csv", head+"1776760800;0;0;0;450,5;16000;-46250\n"), WithDecimalComma(false))
	wantErr(t, err, `log.csv:2: column bx: "450,5" is not a number (a decimal comma? read the file with decimal commas: the option WithDecimalComma(true)`)
	if strings.Contains(err.Error(), "ingest.WithDecimalComma") {
		t.Errorf("error %q names the Go package", err)
	}
}
