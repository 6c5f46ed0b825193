package ingest

import (
	"math"
	"testing"
)

// Times are float64 Unix seconds. IEEE 754 binary64 has a 52-bit fraction,
// so between 2^30 s (2004-01-10) and 2^31 s (2038-01-19) its steps are
// 2^-22 s, about 0.24 µs: a nanosecond time stamp is read to within half
// a step, 2^-23 s (0.12 µs), the bound convert --help and README state.
// Before, convert --help said it kept every value exactly.
func TestNanosecondTimesRoundToHalfAStep(t *testing.T) {
	for _, c := range []struct {
		text      string
		sec, nsec int64
	}{
		{"2014-11-01T02:00:00.000500300Z", 1414807200, 500300},
		{"2014-11-01T02:00:00.000000100Z", 1414807200, 100},
		{"2026-12-03T01:42:26.999999999Z", 1796262146, 999999999},
	} {
		v, _, ok := parseTimestampZone([]byte(c.text))
		if !ok {
			t.Fatalf("%s: not read", c.text)
		}
		if step := math.Nextafter(v, math.Inf(1)) - v; step != 0x1p-22 {
			t.Errorf("%s: float64 step %g s, want 2^-22", c.text, step)
		}
		// v - sec is exact (the two lie within a factor of two).
		if d := (v - float64(c.sec)) - float64(c.nsec)*1e-9; math.Abs(d) > 0x1p-23+1e-15 {
			t.Errorf("%s: read %.9f, off by %g s, more than half a step", c.text, v, d)
		}
	}
}
