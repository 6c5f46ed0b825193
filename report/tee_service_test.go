package report

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/route"
	"undercurrent/inverse/simulate"
)

// TestTeeServiceStep: a 5 A service teeing off a 20 A main at right angles
// (testdata/scenarios/open/tee-service.toml, the invented Tanner's Row),
// running along the traverses 1 m beside the two either side of the tee.
// Neither traverse's fit can see the service as a line, and a point dipole
// 2.7 m down with a moment near 590 A m^2 copied the field of its ends:
// both were taken for magnetised objects, left out of the current profile,
// and the 5 A fall went unreported on 7 seeds of 8 (found in review). The
// objects' refitted currents lay between their neighbours', which differ by
// the step, and the neighbour check took their mean with half their
// difference as scatter. Now an object is refused where the neighbours are
// not one level. Kirchhoff's current law gives the answer: one fall of the
// main's 20 - 15 A between the traverses either side of the tee (chainage
// from the scenario's geometry), within 3 sigma, and no object. The
// least-cover headline names no weak steep line as a further conductor.
func TestTeeServiceStep(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 9 traverses per seed with the object search")
	}
	name := filepath.Join("open", "tee-service.toml")
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", name))
	if err != nil {
		t.Fatal(err)
	}
	var fall, teeAt float64
	for _, c := range sc.Conductors {
		if c.Name == "main" {
			fall = c.Currents[0] - c.Currents[1]
			teeAt = c.Vertices[1][0] - sc.Survey.Route[0][0] - sc.Survey.FirstAt
		}
	}
	for _, seed := range []int64{1, 2, 3, 4} {
		d := scenarioDoc(t, name, seed)
		steps := 0
		for _, f := range d.Findings {
			switch f.Kind {
			case "dipole-anomaly":
				t.Errorf("seed %d: a magnetised object where there is none: %s", seed, f.Message)
			case "current-step":
				if len(f.Values) == 0 {
					continue
				}
				steps++
				v := f.Values[0]
				if z := (-v.Value - fall) / v.Sigma; !(math.Abs(z) <= 3) {
					t.Errorf("seed %d: fall %.4g ± %.2g A, %.1f sigma from the service's %g A: %s", seed, -v.Value, v.Sigma, z, fall, f.Message)
				}
				if f.ChainageFrom > teeAt || f.ChainageTo < teeAt {
					t.Errorf("seed %d: fall bracketed %.1f-%.1f m, not holding the tee at %.1f m", seed, f.ChainageFrom, f.ChainageTo, teeAt)
				}
			}
		}
		if steps != 1 {
			t.Errorf("seed %d: %d current steps, want the one at the tee: %+v", seed, steps, d.Findings)
		}
		// A weak steep line beside the main (a bend or the service's
		// field absorbed: weakSources) is no conductor to give the least
		// cover of: on seed 1 a 0.94 A line dipping 56 degrees at T06
		// was named at -0.16 m, above the ground.
		lc := LeastCover(d)
		for _, g := range d.Groups {
			for j, s := range g.Sources {
				if j == 0 || s.Kind != KindLine || !route.WeakSteep(g.Sources[0].Current, s.Current, s.Dip) {
					continue
				}
				c, _ := d.cover(s.Depth)
				if w := "under " + pm(c, d.coverSigma(s.DepthSigma)) + " m at " + g.Key; strings.Contains(lc, w) {
					t.Errorf("seed %d: the least cover names a weak steep line (%.3g A of %.3g, dipping %.0f degrees): %s", seed, s.Current, g.Sources[0].Current, s.Dip, lc)
				}
			}
		}
	}
}
