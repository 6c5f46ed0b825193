package inverse

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
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
