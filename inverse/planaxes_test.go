package inverse

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// TestPlanPrincipalMatchesGonum checks PlanPrincipal against gonum's
// symmetric eigendecomposition (mat.EigenSym, a general-purpose reference)
// on scatter matrices of points along lines at several angles and widths:
// the eigenvalues, and the major axis parallel to gonum's eigenvector.
func TestPlanPrincipalMatchesGonum(t *testing.T) {
	for _, c := range []struct{ sxx, syy, sxy float64 }{
		{4, 1, 0}, {1, 4, 0}, {2, 2, 1.5}, {3, 1, -1.2}, {1e-6, 5, 1e-4}, {2, 2, 0},
	} {
		major, minor, ang := PlanPrincipal(c.sxx, c.syy, c.sxy)
		var es mat.EigenSym
		if !es.Factorize(mat.NewSymDense(2, []float64{c.sxx, c.sxy, c.sxy, c.syy}), true) {
			t.Fatal("gonum EigenSym failed")
		}
		vals := es.Values(nil) // ascending
		if math.Abs(major-vals[1]) > 1e-12*math.Max(1, vals[1]) || math.Abs(minor-math.Max(vals[0], 0)) > 1e-12*math.Max(1, vals[1]) {
			t.Errorf("%+v: eigenvalues %g, %g; gonum %v", c, major, minor, vals)
		}
		if vals[1]-vals[0] < 1e-9 {
			continue // a circle: any axis
		}
		var vec mat.Dense
		es.VectorsTo(&vec)
		if dot := math.Abs(math.Cos(ang)*vec.At(0, 1) + math.Sin(ang)*vec.At(1, 1)); math.Abs(dot-1) > 1e-9 {
			t.Errorf("%+v: axis at %g rad not along gonum's eigenvector (|cos| %g)", c, ang, dot)
		}
	}
}

// TestPlanScatterMatchesGonum checks PlanScatter's centre and sums of
// squares against gonum's stat.Mean and stat.Covariance (a general-purpose
// reference) on points along an oblique line with scatter across it.
func TestPlanScatterMatchesGonum(t *testing.T) {
	var pts [][3]float64
	var es, ns []float64
	for i := range 41 {
		e := 3 + 0.25*float64(i)*math.Cos(0.6) + 0.03*math.Sin(float64(7*i))
		n := -2 + 0.25*float64(i)*math.Sin(0.6) + 0.03*math.Cos(float64(5*i))
		pts = append(pts, [3]float64{e, n, 0.3})
		es, ns = append(es, e), append(ns, n)
	}
	ce, cn, sxx, syy, sxy := PlanScatter(pts)
	m := float64(len(pts) - 1) // stat's covariances are unbiased: sums over n-1
	for _, c := range []struct{ got, want float64 }{
		{ce, stat.Mean(es, nil)}, {cn, stat.Mean(ns, nil)},
		{sxx, m * stat.Covariance(es, es, nil)}, {syy, m * stat.Covariance(ns, ns, nil)}, {sxy, m * stat.Covariance(es, ns, nil)},
	} {
		if math.Abs(c.got-c.want) > 1e-12*math.Max(1, math.Abs(c.want)) {
			t.Errorf("PlanScatter %g, gonum %g", c.got, c.want)
		}
	}
	if _, _, ang := PlanPrincipal(sxx, syy, sxy); math.Abs(ang-0.6) > 0.01 {
		t.Errorf("major axis at %g rad, the line runs at 0.6", ang)
	}
}
