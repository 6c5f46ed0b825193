package inverse

import (
	"strings"
	"testing"
)

// TestFixedSensorRefused: readings all taken at one place (a fixed sensor's
// record, here at north 0.8 m, whose mean over 271 readings is not 0.8
// exactly in floating point) cannot locate a line, and the fit says so
// rather than fitting a line to them. Before, only an extent of exactly 0
// was refused, and such a record went on to a fit. Invented fixture.
func TestFixedSensorRefused(t *testing.T) {
	const n = 271
	pts := make([][3]float64, n)
	fields := make([][3]float64, n)
	for i := range pts {
		pts[i] = [3]float64{-3, 0.8, 0.3}
		fields[i] = [3]float64{-150, 19200 - 20*float64(i%17), -45100 + 13*float64(i%11)}
	}
	_, err := FitLines(&Problem{Points: pts, Fields: fields, Sigma: 2}, nil)
	if err == nil || !strings.Contains(err.Error(), "one horizontal position") {
		t.Errorf("fit of a fixed sensor's record: %v, want refused as one horizontal position", err)
	}
}
