package live

import (
	"math"
	"testing"

	"undercurrent/inverse"
)

// A conductor level with or just above a row of sensors, the site file
// giving no point for it, commissions: the single-line fallback
// (seededLine) starts above the sensors too. Six sensors on a wall, 2 m up
// in two rows (invented fixtures; readings by Biot-Savart,
// inverse.Line.Field, 0.02 nT noise), a 100 A DC line beside the rows at
// 2.0, 2.1 and 2.3 m. Before, each was refused (the fitted line missed the
// readings by 1.5e3-2e3 nT) while one at 1.9 m, below the rows,
// commissioned (found in review).
func TestCommissionLineLevelOrAbove(t *testing.T) {
	north := [3]float64{0, 1, 0}
	sensors := [][3]float64{{-1.5, 0, 2}, {-1, 0, 2}, {-0.5, 0, 2}, {0, 0, 2}, {-0.75, 3, 2}, {-0.25, 3, 2}}
	for _, z := range []float64{1.9, 2.0, 2.1, 2.3} {
		line := inverse.Line{Point: [3]float64{0.5, 0, z}, Dir: north}
		in := commissionReadings(sensors, []inverse.Line{line}, []complex128{100}, false, 0.02, 11)
		in.WindowSigma = 0.09
		conds, err := InverseCommissioner{}.Commission(in, []ConductorConfig{{Name: "cable"}})
		if err != nil {
			t.Errorf("line at z %.1f m: %v", z, err)
			continue
		}
		if len(conds) != 1 {
			t.Errorf("line at z %.1f m: %d conductors", z, len(conds))
			continue
		}
		// The fitted line passes through the true one: its distance from
		// the true line's point, across the line, within a centimetre.
		d := [3]float64{conds[0].Point[0] - line.Point[0], 0, conds[0].Point[2] - line.Point[2]}
		if math.Hypot(d[0], d[2]) > 0.01 {
			t.Errorf("line at z %.1f m: commissioned through %.3f, want x 0.5, z %.1f", z, conds[0].Point, z)
		}
	}
}
