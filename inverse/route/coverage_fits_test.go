package route

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
)

// fittedRoute simulates one DC survey of a cable losing current at chainage
// xf and fits every traverse with one infinite line, as the locate command
// does: 31 traverses 7.5 m apart across a cable running east at 1.0 m
// below ground, 41 three-axis readings 0.2 m apart on each traverse at
// 0.3 m above ground, noise noiseNT per axis. The cable is a polyline with
// I0 upstream of xf and I0 - D downstream; the current leaving goes to
// ground spread over a large volume and adds no field of its own (the
// simulate package's convention, inverse/simulate/doc.go). Invented
// figures for the fictional Fenwick Lane cable.
func fittedRoute(t testing.TB, rng *rand.Rand, xf, i0, d, noiseNT float64) []Station {
	const (
		n, spacing = 31, 7.5
		depth      = 1.0
		sensorZ    = 0.3
	)
	cable := inverse.Polyline{Vertices: [][3]float64{{-2000, 0, -depth}, {xf, 0, -depth}, {2000, 0, -depth}}}
	cur := []float64{i0, i0 - d}
	earth := [3]float64{-150, 19200, -45100} // nT, mid-latitude western Europe (common practice)
	ground := 0.0
	set := &inverse.Settings{Count: 1, ReferenceZ: &ground}
	st := make([]Station, n)
	for i := range st {
		x := float64(i) * spacing
		var p inverse.Problem
		for k := range 41 {
			r := [3]float64{x, -4 + 0.2*float64(k), sensorZ}
			b := cable.Field(r, cur)
			p.Points = append(p.Points, r)
			p.Fields = append(p.Fields, [3]float64{
				earth[0] + 1e9*b[0] + noiseNT*rng.NormFloat64(),
				earth[1] + 1e9*b[1] + noiseNT*rng.NormFloat64(),
				earth[2] + 1e9*b[2] + noiseNT*rng.NormFloat64(),
			})
		}
		p.Sigma = noiseNT
		res, err := inverse.FitLines(&p, set)
		if err != nil {
			t.Fatal(err)
		}
		s := res.Sources[0]
		st[i] = Station{Key: key(i), Point: s.Point, Dir: s.Dir, Current: s.Current, CurrentSigma: s.CurrentSigma,
			Depth: s.Depth, DepthSigma: s.DepthSigma, RMS: res.RMS, Chi2: res.Chi2, DOF: res.DOF,
			OK: res.Status.Converged() || res.Status == inverse.Stalled}
	}
	return st
}

// TestStepSigmaMonteCarloFits is the Monte Carlo coverage check through the
// line fits: each draw simulates 31 traverses over a cable that loses 9 of
// 40 A at a chainage drawn uniformly between 105 and 120 m, fits each
// traverse with one line (inverse.FitLines), builds the route and compares
// the step's size and location with the truth. Here the stations' currents
// near the fault come from fits of a semi-infinite conductor with an
// infinite line, so the level model's transition is an approximation and
// the route's between-station scatter is estimated from real misfit. The
// sigmas must not be optimistic (tolerances as for TestStepSigmaMonteCarlo,
// coverage_test.go). At 50 nT the location's delta-method sigma alone gave
// sd(z) = 5.6 before the grid's profile interval was kept as a floor.
func TestStepSigmaMonteCarloFits(t *testing.T) {
	if testing.Short() {
		t.Skip("Monte Carlo coverage through the line fits: about 4 s")
	}
	const i0, d = 40.0, 9.0
	for _, noise := range []float64{5, 50} { // nT per axis
		t.Run(fmt.Sprintf("%g nT", noise), func(t *testing.T) {
			rng := rand.New(rand.NewPCG(3, uint64(noise)))
			size, loc, missed := stepZ(t, fmt.Sprintf("%g nT", noise), d, mcDraws, func() ([]Station, float64) {
				xf := 105 + 15*rng.Float64()
				return fittedRoute(t, rng, xf, i0, d, noise), xf
			})
			if missed > 0 {
				t.Errorf("the step was missed in %d of %d draws", missed, mcDraws)
			}
			checkCoverage(t, "size", size, true)
			checkCoverage(t, "location", loc, true)
		})
	}
}
