package calibrate

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestCoverageTwoAxisTurnsWording: a spin of whole turns about the
// sensor's z axis and then whole turns about its x axis, in a field of
// 49 000 nT dipping 66 degrees (invented), leaves the field far from the
// sensor's x axis and is refused. The refusal said "the sensor was turned
// about one axis only" (found in review), which this log is not: it must
// say what the log lacks, the direction the field never came near.
func TestCoverageTwoAxisTurnsWording(t *testing.T) {
	const f, inc = 49000.0, 66 * math.Pi / 180
	field := [3]float64{0, f * math.Cos(inc), -f * math.Sin(inc)} // east, north, up
	const n = 2000
	var r [][3]float64
	for i := 0; i < n; i++ {
		// Two whole turns in each half.
		a := 4 * math.Pi * float64(i%(n/2)) / float64(n/2)
		s, c := math.Sincos(a)
		b := field
		if i < n/2 { // about z: the sensor's reading is Rzᵀ b
			r = append(r, [3]float64{c*b[0] + s*b[1], -s*b[0] + c*b[1], b[2]})
		} else { // about x
			r = append(r, [3]float64{b[0], c*b[1] + s*b[2], -s*b[1] + c*b[2]})
		}
	}
	_, err := CheckCoverage(r, nil)
	if !errors.Is(err, ErrCoverage) {
		t.Fatalf("err = %v, want ErrCoverage", err)
	}
	msg := err.Error()
	if strings.Contains(msg, "one axis only") {
		t.Errorf("a spin turned about two axes is refused as turned about one axis only: %q", msg)
	}
	// The field stays within 24 degrees of the y-z plane: x is the
	// direction it never came near.
	if !strings.Contains(msg, "never came near the sensor's direction (1.00, ") {
		t.Errorf("refusal does not name the direction the field never came near, the sensor's x axis: %q", msg)
	}
}
