package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// TestLineDerivativesDC checks the derivative columns of the unweighted DC fit
// (dLineLevel, the specialised loop the line fits use) against central differences of
// the model computed by gonum's diff/fd, for every combination of held and fitted
// azimuth and dip, and against the general weighted loop of dPhiCAt (unit weights),
// which must give the same values to rounding.
func TestLineDerivativesDC(t *testing.T) {
	pts := grid(3, 9, 2, 0.7, 0.1)
	sv := newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts))})
	rng := rand.New(rand.NewPCG(11, 12))
	y := make([]float64, 3*len(pts))
	for i := range y {
		y[i] = rng.NormFloat64() * 100
	}
	for _, hold := range [][2]bool{{true, true}, {false, true}, {true, false}, {false, false}} {
		t.Run(fmt.Sprintf("holdAz=%v,holdDip=%v", hold[0], hold[1]), func(t *testing.T) {
			geoms := []lineGeom{
				sv.geomFrom(seed{e: -0.3, n: 0.1, az: 0.2, z: -0.9}, hold[0], hold[1], 0.05, 0.02),
				sv.geomFrom(seed{e: 0.4, n: -0.2, az: 0.35, z: -1.2}, hold[0], hold[1], -0.1, 0.02),
			}
			sp := newSeparable(pts, y, 1, BackgroundUniform, sv.centroid, geoms, nil)
			x, _, _ := sp.pack()
			np := len(x)
			if err := sp.evaluate(x); err != nil {
				t.Fatal(err)
			}
			got := make([]float64, sp.m*np)
			sp.dPhiC(got, np)
			coef := append([]float64(nil), sp.coef...)
			// The general loop, reached through unit weights (multiplying by 1 is exact).
			sp.w = make([]float64, sp.m)
			for i := range sp.w {
				sp.w[i] = 1
			}
			general := make([]float64, sp.m*np)
			sp.dPhiC(general, np)
			sp.w = nil
			for i, v := range got {
				if d := math.Abs(v - general[i]); d > 1e-13*(math.Abs(general[i])+1e-3) {
					t.Fatalf("entry %d: specialised %g, general %g", i, v, general[i])
				}
			}
			model := func(out, theta []float64) {
				sp.unpack(theta)
				phi := make([]float64, sp.m*sp.q)
				if err := sp.buildPhi(phi); err != nil {
					t.Fatal(err)
				}
				for row := range sp.m {
					var v float64
					for j := range sp.q {
						v += phi[row*sp.q+j] * coef[j]
					}
					out[row] = v
				}
			}
			num := mat.NewDense(sp.m, np, nil)
			fd.Jacobian(num, model, x, &fd.JacobianSettings{Formula: fd.Central})
			sp.unpack(x)
			var scaleMax float64
			for j := range np {
				for i := range sp.m {
					scaleMax = math.Max(scaleMax, math.Abs(num.At(i, j)))
				}
			}
			for j := range np {
				for i := range sp.m {
					if d := math.Abs(got[j*sp.m+i] - num.At(i, j)); d > jacTol*scaleMax {
						t.Fatalf("row %d param %d: analytic %g, finite difference %g", i, j, got[j*sp.m+i], num.At(i, j))
					}
				}
			}
		})
	}
}
