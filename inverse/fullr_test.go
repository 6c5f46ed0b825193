package inverse

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestFullRCovariance checks the covariance assembled from the variable projection's
// factors (fullR) against the covariance of the explicitly formed full Jacobian
// (fullJacobian, itself checked against finite differences in TestSeparableJacobian):
// both must give (J^T J)^-1 and the same identifiability, for every background model,
// with dipoles, robust weights and AC strengths.
func TestFullRCovariance(t *testing.T) {
	// Both sides are backward-stable factorisations of the same J (condition numbers
	// below about 1e4 after column scaling here): 1e-9 relative to the diagonal leaves a
	// wide margin.
	const tol = 1e-9
	pts := grid(3, 9, 2, 0.7, 0)
	sv := newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts))})
	lines := func(holdAz, holdDip bool) []lineGeom {
		return []lineGeom{
			sv.geomFrom(seed{e: -0.3, n: 0.1, az: 0.2, z: -0.9}, holdAz, holdDip, 0.05, 0.02),
			sv.geomFrom(seed{e: 0.4, n: -0.2, az: 0.3, z: -1.2}, holdAz, holdDip, -0.1, 0.02),
		}
	}
	dip := []dipGeom{{pos: [3]float64{0.2, 0.3, -0.7}, lim: 10, zHi: -0.02, zLo: -20}}
	for _, tc := range []struct {
		name     string
		nrhs     int
		bg       BackgroundModel
		geom     []lineGeom
		dips     []dipGeom
		weighted bool
	}{
		{"DC uniform, azimuth and dip free", 1, BackgroundUniform, lines(false, false), nil, false},
		{"DC uniform, held direction", 1, BackgroundUniform, lines(true, true), nil, false},
		{"DC no background", 1, BackgroundNone, lines(false, false), nil, false},
		{"DC gradient background and a dipole", 1, BackgroundGradient, lines(false, false), dip, false},
		{"DC robust weights", 1, BackgroundUniform, lines(false, false), dip, true},
		{"AC uniform with a dipole", 2, BackgroundUniform, lines(false, false), dip, false},
		{"AC weighted, gradient", 2, BackgroundGradient, lines(false, true), nil, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(9, 9))
			y := make([]float64, 3*len(pts)*tc.nrhs)
			for i := range y {
				y[i] = rng.NormFloat64() * 100
			}
			sp := newSeparable(pts, y, tc.nrhs, tc.bg, sv.centroid, append([]lineGeom(nil), tc.geom...), tc.dips)
			if tc.weighted {
				sp.w = make([]float64, sp.m)
				for i := range sp.w {
					sp.w[i] = 0.3 + rng.Float64()
				}
			}
			x, _, _ := sp.pack()
			J, err := sp.fullJacobian(x)
			if err != nil {
				t.Fatal(err)
			}
			checkCovarianceFromR(t, sp, x, J, tol)
		})
	}
}

// checkCovarianceFromR checks that the covariance assembled from the variable
// projection's triangular factor (fullR) equals the one computed from the full
// Jacobian J at x, entry by entry to tol relative to sqrt(C_ii C_jj), with the same
// unresolved parameters.
func checkCovarianceFromR(t *testing.T, sp *separable, x []float64, J *mat.Dense, tol float64) {
	t.Helper()
	want, wantUnres, err := covariance(J)
	if err != nil {
		t.Fatal(err)
	}
	r, n, perm, err := sp.fullR(x)
	if err != nil {
		t.Fatal(err)
	}
	got, gotUnres, err := covarianceFromR(r, n, perm, nil)
	if err != nil {
		t.Fatal(err)
	}
	if wn, _ := want.Dims(); wn != n {
		t.Fatalf("%d parameters, want %d", n, wn)
	}
	for i := range n {
		if gotUnres[i] != wantUnres[i] {
			t.Errorf("parameter %d: unresolved %v, want %v", i, gotUnres[i], wantUnres[i])
		}
		for j := range n {
			scale := math.Sqrt(want.At(i, i) * want.At(j, j))
			if d := math.Abs(got.At(i, j) - want.At(i, j)); d > tol*scale {
				t.Fatalf("cov[%d][%d] = %g, from the full Jacobian %g", i, j, got.At(i, j), want.At(i, j))
			}
		}
	}
}

// TestFullResiduals checks the residuals y - Phi c against the explicitly formed
// (unweighted, row-major) basis for every background model, DC and AC, with weights.
func TestFullResiduals(t *testing.T) {
	pts := grid(3, 9, 2, 0.7, 0)
	sv := newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts))})
	geom := []lineGeom{sv.geomFrom(seed{e: -0.3, n: 0.1, az: 0.2, z: -0.9}, false, false, 0.05, 0.02)}
	dip := []dipGeom{{pos: [3]float64{0.2, 0.3, -0.7}, lim: 10, zHi: -0.02, zLo: -20}}
	for _, bg := range []BackgroundModel{BackgroundUniform, BackgroundNone, BackgroundGradient} {
		for _, nr := range []int{1, 2} {
			rng := rand.New(rand.NewPCG(3, 3))
			y := make([]float64, 3*len(pts)*nr)
			for i := range y {
				y[i] = rng.NormFloat64() * 100
			}
			sp := newSeparable(pts, y, nr, bg, sv.centroid, append([]lineGeom(nil), geom...), dip)
			sp.w = make([]float64, sp.m)
			for i := range sp.w {
				sp.w[i] = 0.5 + rng.Float64()
			}
			x, _, _ := sp.pack()
			got, err := sp.fullResiduals(x)
			if err != nil {
				t.Fatal(err)
			}
			w := sp.w
			sp.w = nil
			phi := make([]float64, sp.m*sp.q)
			if err := sp.buildPhi(phi); err != nil {
				t.Fatal(err)
			}
			sp.w = w
			for row := range sp.m {
				for k := range nr {
					want := y[row*nr+k]
					for j := range sp.q {
						want -= phi[row*sp.q+j] * sp.coef[j*nr+k]
					}
					if d := math.Abs(got[row*nr+k] - want); d > 1e-9*(math.Abs(want)+100) {
						t.Fatalf("background %d, nrhs %d, row %d: residual %g, want %g", bg, nr, row, got[row*nr+k], want)
					}
				}
			}
		}
	}
}
