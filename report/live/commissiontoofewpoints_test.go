package live

import (
	"errors"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// bendSensors and bendLines are a plant room's DC bar bending at a right
// angle with a riser at each end (invented fixture): six sensors 0.4-0.6 m
// below the floor and four conductors, each held as a line.
func bendSensors() [][3]float64 {
	return [][3]float64{{-0.4, -0.8, -0.4}, {0.4, -0.6, -0.5}, {-0.3, 0.9, -0.45}, {0.8, 1.0, -0.4}, {0.9, 0, -0.5}, {2.0, 0.9, -0.6}}
}

func bendLines() []inverse.Line {
	up, north, east := [3]float64{0, 0, 1}, [3]float64{0, 1, 0}, [3]float64{1, 0, 0}
	return []inverse.Line{{Point: [3]float64{0, -1.5, -1.6}, Dir: up}, {Point: [3]float64{0, -0.5, -0.8}, Dir: north},
		{Point: [3]float64{0.75, 0.5, -0.8}, Dir: east}, {Point: [3]float64{1.5, 0.5, -1.6}, Dir: up}}
}

// Six sensors give 18 readings, too few for four lines fitted from their
// points (20 unknowns) or freely (23): more windows add no readings, so
// the refusal is for good (needsSiteError, which the worker stops on)
// with the site file's points given and without them. Before, the fit
// from the points and the free fit (whose solver refuses to start) both
// returned plain errors and the worker tried again with every window.
func TestCommissionTooFewReadingsWithPointsStops(t *testing.T) {
	lines := bendLines()
	in := commissionReadings(bendSensors(), lines, []complex128{1200, 1200, 1200, -1200}, false, 0.02, 5)
	names := []string{"riser1", "north", "east", "riser2"}
	for _, points := range []bool{true, false} {
		var stated []ConductorConfig
		for i, name := range names {
			c := ConductorConfig{Name: name}
			if points {
				c.Point, c.pointSet = lines[i].Point, true
			}
			stated = append(stated, c)
		}
		_, err := InverseCommissioner{}.Commission(in, stated)
		var site *needsSiteError
		if !errors.As(err, &site) || !strings.Contains(err.Error(), "18 readings, too few") {
			t.Errorf("points %v: got %v, want a refusal for good: too few readings", points, err)
		}
	}
}
