package ingest

import (
	"math"
	"math/rand"
	"strconv"
	"testing"
)

// TestParseNumberAgainstStrconv compares the fast parser with
// strconv.ParseFloat (the Go standard library, correctly rounded) on
// random decimals of every length, embedded in buffers whose next bytes
// are delimiters, line ends or more digits.
func TestParseNumberAgainstStrconv(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	digits := func(n int) string {
		b := make([]byte, n)
		for i := range b {
			b[i] = byte('0' + rng.Intn(10))
		}
		return string(b)
	}
	for k := 0; k < 200000; k++ {
		s := ""
		if rng.Intn(3) == 0 {
			s = "-"
		}
		s += digits(rng.Intn(12))
		if rng.Intn(4) != 0 {
			s += "." + digits(rng.Intn(14))
		}
		if rng.Intn(8) == 0 {
			s += "e" + strconv.Itoa(rng.Intn(60)-30)
		}
		want, werr := strconv.ParseFloat(s, 64)
		got, ok := parseNumber([]byte(s))
		if (werr == nil) != ok || (ok && math.Float64bits(got) != math.Float64bits(want)) {
			t.Fatalf("%q: got %v (%v), strconv %v (%v)", s, got, ok, want, werr)
		}
		// In a line: the field is followed by a delimiter and more text.
		for _, tail := range []string{",", "\n", "\r\n", ";12345678", ""} {
			line := []byte(s + tail + "98765432")
			line = line[:len(s)+len(tail)]
			v, end, ok := parseFastAt(line, 0)
			if ok && (end != len(s) || math.Float64bits(v) != math.Float64bits(want)) {
				// Digits that run on into memory past the line are not
				// the field's: those must not be read as a value.
				if !(tail == "" && end > len(s)) {
					t.Fatalf("%q+%q: got %v end %d, want %v end %d", s, tail, v, end, want, len(s))
				}
			}
		}
	}
}
