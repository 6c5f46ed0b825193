package inverse_test

import (
	"math"
	"path/filepath"
	"slices"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

// TestNoCancellingPairBesideDrum: a steel drum 0.6 m down and 1.3 m beside a
// plain 20 A DC cable 1 m down (testdata/scenarios/open/drum-beside-cable.toml,
// the invented Pellow Bank), its traverse T10 and the traverses either side
// fitted through FitLines with the count chosen, as locate fits a DC group (the
// noise estimated from the fit, depths from the ground). On seed 9 T10 was
// fitted with three lines, +6953 A and -6910 A 0.7 m down and -20 A beside them:
// two lines all but on one another whose fields cancel, standing for the
// drum's, which the guard took for a go-and-return pair whose current and
// spacing are not resolved (found in review; the report's object search now
// wins there, but only after such a fit). The reference is Ampere's law: a
// line of current I at distance r from the nearest reading gives mu0 I /
// (2 pi r) there (mu0 from inverse.Mu0, CODATA 2022), so no line can carry
// much more than 2 pi r B / mu0 for B the readings' largest anomaly (their
// departure from the per-axis median) unless another cancels it. No line
// returned may carry over 100 times that, nor over 5 times the simulated
// cable's 20 A (the scenario's truth: the drum carries no current).
func TestNoCancellingPairBesideDrum(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and fits 27 traverses")
	}
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "open", "drum-beside-cable.toml"))
	if err != nil {
		t.Fatal(err)
	}
	var cable float64
	for _, c := range sc.Conductors {
		if c.Name == "main" {
			cable = c.Currents[0]
		}
	}
	if !(cable > 0) {
		t.Fatal("the scenario has no cable named main")
	}
	z := 0.0
	for _, seed := range []int64{9, 1, 2, 3, 4, 5, 6, 7, 8} {
		sc.Seed = seed
		s, err := simulate.Simulate(sc)
		if err != nil {
			t.Fatal(err)
		}
		for _, key := range []string{"T09", "T10", "T11"} {
			var p inverse.Problem
			for i, g := range s.Group {
				if g == key {
					p.Points = append(p.Points, [3]float64{s.X[i], s.Y[i], s.Z[i]})
					p.Fields = append(p.Fields, [3]float64{s.Bx[i], s.By[i], s.Bz[i]})
				}
			}
			if len(p.Points) == 0 {
				t.Fatalf("seed %d: no readings in %s", seed, key)
			}
			res, err := inverse.FitLines(&p, &inverse.Settings{ReferenceZ: &z})
			if err != nil {
				t.Fatalf("seed %d %s: %v", seed, key, err)
			}
			peak := peakAnomaly(p.Fields)
			for _, src := range res.Sources {
				if src.Kind != "line" {
					continue
				}
				lim := 2 * math.Pi * nearest(p.Points, src.Point, src.Dir) * peak * 1e-9 / inverse.Mu0
				if math.Abs(src.Current) > 100*lim || math.Abs(src.Current) > 5*cable {
					for _, c := range res.Criteria {
						t.Logf("seed %d %s: %d lines, BIC %.1f, chosen %v %s", seed, key, c.Count, c.BIC, c.Chosen, c.Rejected)
					}
					t.Errorf("seed %d %s: a line of %.1f A at %.3f m where the readings' largest anomaly (%.0f nT) supports %.1f A; the cable carries %g A",
						seed, key, src.Current, src.Depth, peak, lim, cable)
				}
			}
		}
	}
}

// peakAnomaly is the largest departure of the fields from their per-axis median, nT.
func peakAnomaly(f [][3]float64) float64 {
	var med [3]float64
	for j := range 3 {
		col := make([]float64, len(f))
		for i := range f {
			col[i] = f[i][j]
		}
		slices.Sort(col)
		n := len(col)
		med[j] = (col[(n-1)/2] + col[n/2]) / 2
	}
	var peak float64
	for _, v := range f {
		peak = math.Max(peak, math.Hypot(math.Hypot(v[0]-med[0], v[1]-med[1]), v[2]-med[2]))
	}
	return peak
}

// nearest is the distance, m, from the line through p along d to the nearest of pts.
func nearest(pts [][3]float64, p, d [3]float64) float64 {
	n := math.Sqrt(d[0]*d[0] + d[1]*d[1] + d[2]*d[2])
	r := math.Inf(1)
	for _, q := range pts {
		v := [3]float64{q[0] - p[0], q[1] - p[1], q[2] - p[2]}
		a := (v[0]*d[0] + v[1]*d[1] + v[2]*d[2]) / (n * n)
		w := [3]float64{v[0] - a*d[0], v[1] - a*d[1], v[2] - a*d[2]}
		r = math.Min(r, math.Sqrt(w[0]*w[0]+w[1]*w[1]+w[2]*w[2]))
	}
	return r
}
