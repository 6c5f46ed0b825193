package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestDipoleDistanceHasSigma: the dipole-anomaly finding's "distance from
// conductor" carries a one-sigma uncertainty like the position and depth
// beside it (README: a one-sigma uncertainty on every number). It is
// propagated from the object's east and north sigmas to first order (JCGM
// 100:2008 section 5.1.2) and is checked against the spread of the distance
// of positions drawn at random with those sigmas (the Monte Carlo
// propagation of JCGM 101:2008), within 3%. Fixture: the demo's drum, 4.1 m
// off the conductor, with its fitted sigmas 3.4 mm east and 1.3 mm north.
func TestDipoleDistanceHasSigma(t *testing.T) {
	st := spur(3, 0, cpCount)
	s := st[12]
	h := math.Hypot(s.Dir[0], s.Dir[1])
	u := [2]float64{s.Dir[0] / h, s.Dir[1] / h}
	n := [2]float64{u[1], -u[0]} // to the right of the conductor
	const dist, along = 4.1, 0.6
	sig := [3]float64{0.0034, 0.0013, 0.0013}
	obj := [3]float64{s.Point[0] + dist*n[0] + along*u[0], s.Point[1] + dist*n[1] + along*u[1], -0.6}
	st[12].Dipole = true
	st[12].Object = &Object{Point: obj, PointSigma: sig, Depth: 0.9, DepthSigma: 0.0013,
		Moment: 1.23, MomentSigma: 0.005, Distance: dist, Evidence: 4134}
	r, err := Build(st, &Settings{})
	if err != nil {
		t.Fatal(err)
	}
	d := findings(r, KindDipole)
	if len(d) != 1 {
		t.Fatalf("%d dipole findings, want 1", len(d))
	}
	v, ok := valueNamed(d[0], "distance from conductor")
	if !ok || v.Value != dist {
		t.Fatalf("distance from conductor %+v, want %g m", v, dist)
	}
	rng := rand.New(rand.NewPCG(5, 9))
	const draws = 200000
	var sum, ss float64
	for range draws {
		x := obj[0] + sig[0]*rng.NormFloat64() - s.Point[0]
		y := obj[1] + sig[1]*rng.NormFloat64() - s.Point[1]
		e := math.Abs(x*u[1] - y*u[0]) // distance from the line in plan
		sum += e
		ss += e * e
	}
	mean := sum / draws
	mc := math.Sqrt(ss/draws - mean*mean)
	if math.Abs(v.Sigma-mc) > 0.03*mc {
		t.Errorf("distance from conductor %.4f ± %.5f m, Monte Carlo spread %.5f m", v.Value, v.Sigma, mc)
	}
}
