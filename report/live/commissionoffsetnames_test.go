package live

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"undercurrent/inverse"
)

// The Harrow Fen feeder's go (200 A) and return (180 A back, a 20 A
// leak) cores, 0.3 m apart at 0.8 m, seen by the five fenwick-lane
// sensors 0.3 m up, which resolve the two (Biot-Savart readings,
// commissionReadings), and the site file's points for them drawn with a
// common offset east or west of where they run.
func offsetPairReadings() (*SolveInput, []inverse.Line) {
	sensors, lines, _ := feederWithCable(0.3)
	deg := math.Pi / 180
	in := commissionReadings(sensors, lines[:2], []complex128{cmplx.Rect(200, 20*deg), cmplx.Rect(-180, 20*deg)}, true, 0.02, 12)
	in.WindowSigma = 0.09
	return in, lines[:2]
}

func offsetPoints(lines []inverse.Line, dx float64) []ConductorConfig {
	var stated []ConductorConfig
	for i, name := range []string{"go", "return"} {
		stated = append(stated, ConductorConfig{Name: name, Point: add(lines[i].Point, [3]float64{dx, 0, 0}), pointSet: true, Direction: lines[i].Dir, dirSet: true})
	}
	return stated
}

var pointOffsets = []float64{0.3, 0.5, 1, 2, 2.5, 3, -0.3, -1, -2, -3}

// Points drawn off by a common offset of a core spacing or more keep the
// names of the fitted lines: go is the west core (x -0.15 m), as the
// points have it, whatever the offset. The least total distance ties for
// every such offset.
func TestCommissionLinesNamesWithOffsetPoints(t *testing.T) {
	in, lines := offsetPairReadings()
	p := &inverse.Problem{Points: in.Points, Phasors: in.Phasors, Sigma: in.Sigma}
	res, err := inverse.FitLines(p, &inverse.Settings{Count: 2})
	if err != nil {
		t.Fatal(err)
	}
	for _, dx := range pointOffsets {
		conds, err := commissionLines(p, res, offsetPoints(lines, dx))
		if err != nil {
			t.Fatalf("points %+.1f m east: %v", dx, err)
		}
		checkOffsetNames(t, fmt.Sprintf("free fit, points %+.1f m east", dx), conds, lines)
	}
}

// The same through the commissioner, which also fits from the points.
func TestCommissionNamesWithOffsetPoints(t *testing.T) {
	in, lines := offsetPairReadings()
	for _, dx := range pointOffsets {
		conds, err := InverseCommissioner{}.Commission(in, offsetPoints(lines, dx))
		if err != nil {
			t.Fatalf("points %+.1f m east: %v", dx, err)
		}
		checkOffsetNames(t, fmt.Sprintf("points %+.1f m east", dx), conds, lines)
	}
}

func checkOffsetNames(t *testing.T, what string, conds []ConductorConfig, lines []inverse.Line) {
	t.Helper()
	for i, c := range conds {
		want := []string{"go", "return"}[i]
		if c.Name != want || math.Hypot(c.Point[0]-lines[i].Point[0], c.Point[2]-lines[i].Point[2]) > 0.01 {
			t.Errorf("%s: conductor %d is %s at x %.3f z %.3f, want %s at x %.2f z %.2f", what, i, c.Name, c.Point[0], c.Point[2], want, lines[i].Point[0], lines[i].Point[2])
		}
	}
}
