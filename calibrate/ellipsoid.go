package calibrate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// EllipsoidSettings controls FitEllipsoid. A nil *EllipsoidSettings or a
// zero field takes the default.
type EllipsoidSettings struct {
	// Reference is the field magnitude the corrected readings should have,
	// nT (for instance from a geomagnetic model at the site). Zero scales
	// the correction so that det W = 1: the corrected sphere has the volume
	// of the fitted ellipsoid.
	Reference float64
	// Refine runs a Gauss-Newton refinement of the algebraic fit that
	// minimises Σ (|W(r-o)| - F)². Default false.
	Refine bool
	// MaxIter bounds the refinement iterations. Zero means 50.
	MaxIter int
	// MaxSpread is the largest acceptable standard deviation of the
	// corrected |B| as a fraction of the field; beyond it the readings do
	// not lie on an ellipsoid (unsteady field, steel nearby, or a sensor
	// fault) and the fit is refused. Zero means 0.01.
	MaxSpread float64
	// Coverage sets the orientation-coverage check run before the fit.
	Coverage *CoverageSettings
	// SkipCoverage disables that check (for tests of the algebra only).
	SkipCoverage bool
}

// EllipsoidResult is the outcome of FitEllipsoid.
type EllipsoidResult struct {
	// Offset is the hard-iron offset o, nT, and Matrix the symmetric
	// correction W: corrected = W (raw - o).
	Offset [3]float64
	Matrix [3][3]float64
	// Radius is the field magnitude the correction maps to, nT.
	Radius float64
	// Before and After are the spreads of |B| over the readings, raw and
	// corrected.
	Before, After Spread
	// Coverage is the orientation coverage of the log.
	Coverage *Coverage
	// Iterations is the number of refinement iterations run (0 without
	// refinement) and Status says why the fit stopped.
	Iterations int
	Status     string
}

// FitEllipsoid fits an ellipsoid to readings (sensor frame, nT) taken while
// the sensor turned in a steady field, by the method of Li and Griffiths
// (2004), and returns the hard-iron offset and soft-iron correction matrix.
// Non-finite readings are an error. See the package documentation for the
// maths.
func FitEllipsoid(readings [][3]float64, set *EllipsoidSettings) (*EllipsoidResult, error) {
	var es EllipsoidSettings
	if set != nil {
		es = *set
	}
	if es.MaxIter == 0 {
		es.MaxIter = 50
	}
	if es.Reference < 0 || math.IsNaN(es.Reference) || math.IsInf(es.Reference, 0) {
		return nil, fmt.Errorf("calibrate: ellipsoid: reference field %g nT is not a positive number", es.Reference)
	}
	for i, r := range readings {
		for k := 0; k < 3; k++ {
			if math.IsNaN(r[k]) || math.IsInf(r[k], 0) {
				return nil, fmt.Errorf("calibrate: ellipsoid: reading %d: component %d is %g", i, k, r[k])
			}
		}
	}
	res := &EllipsoidResult{}
	if !es.SkipCoverage {
		cov, err := CheckCoverage(readings, es.Coverage)
		res.Coverage = cov
		if err != nil {
			return nil, err
		}
	}
	if len(readings) < 10 {
		return nil, fmt.Errorf("calibrate: ellipsoid: %d readings, need at least 10", len(readings))
	}

	// Condition the problem: centre on the mean and scale to unit RMS radius.
	var m [3]float64
	for _, r := range readings {
		for k := 0; k < 3; k++ {
			m[k] += r[k]
		}
	}
	n := float64(len(readings))
	for k := range m {
		m[k] /= n
	}
	var ss float64
	for _, r := range readings {
		for k := 0; k < 3; k++ {
			d := r[k] - m[k]
			ss += d * d
		}
	}
	sc := math.Sqrt(ss / n)
	if sc == 0 {
		return nil, errors.New("calibrate: ellipsoid: all readings are identical")
	}

	// Scatter matrix S = D Dᵀ with D's columns
	// [x², y², z², 2yz, 2xz, 2xy, 2x, 2y, 2z, 1].
	S := mat.NewSymDense(10, nil)
	var row [10]float64
	var acc [10][10]float64
	for _, r := range readings {
		x, y, z := (r[0]-m[0])/sc, (r[1]-m[1])/sc, (r[2]-m[2])/sc
		row = [10]float64{x * x, y * y, z * z, 2 * y * z, 2 * x * z, 2 * x * y, 2 * x, 2 * y, 2 * z, 1}
		for i := 0; i < 10; i++ {
			ri := row[i]
			for j := i; j < 10; j++ {
				acc[i][j] += ri * row[j]
			}
		}
	}
	for i := 0; i < 10; i++ {
		for j := i; j < 10; j++ {
			S.SetSym(i, j, acc[i][j])
		}
	}
	s11 := mat.DenseCopyOf(S.SliceSym(0, 6))
	s22 := mat.DenseCopyOf(S.SliceSym(6, 10))
	s12 := mat.NewDense(6, 4, nil)
	for i := 0; i < 6; i++ {
		for j := 0; j < 4; j++ {
			s12.Set(i, j, S.At(i, 6+j))
		}
	}
	// T = S22⁻¹ S21.
	var T mat.Dense
	if err := T.Solve(s22, s12.T()); err != nil {
		return nil, fmt.Errorf("calibrate: ellipsoid: readings are degenerate: %v", err)
	}
	var red mat.Dense
	red.Mul(s12, &T)
	red.Sub(s11, &red)
	// C1⁻¹ for k = 4: C1 = [[-1 1 1],[1 -1 1],[1 1 -1]] ⊕ -4 I.
	c1 := mat.NewDense(6, 6, []float64{
		-1, 1, 1, 0, 0, 0,
		1, -1, 1, 0, 0, 0,
		1, 1, -1, 0, 0, 0,
		0, 0, 0, -4, 0, 0,
		0, 0, 0, 0, -4, 0,
		0, 0, 0, 0, 0, -4,
	})
	var M mat.Dense
	if err := M.Solve(c1, &red); err != nil {
		return nil, fmt.Errorf("calibrate: ellipsoid: %v", err)
	}
	var eig mat.Eigen
	if !eig.Factorize(&M, mat.EigenRight) {
		return nil, errors.New("calibrate: ellipsoid: eigen-decomposition failed")
	}
	vals := eig.Values(nil)
	var vecs mat.CDense
	eig.VectorsTo(&vecs)
	best := -1
	for i, v := range vals {
		if math.Abs(imag(v)) > 1e-9*math.Abs(real(v)) || real(v) <= 0 {
			continue
		}
		if best < 0 || real(v) > real(vals[best]) {
			best = i
		}
	}
	if best < 0 {
		return nil, errors.New("calibrate: ellipsoid: no ellipsoid fits the readings (no positive eigenvalue)")
	}
	v1 := mat.NewVecDense(6, nil)
	for i := 0; i < 6; i++ {
		v1.SetVec(i, real(vecs.At(i, best)))
	}
	var v2 mat.VecDense
	v2.MulVec(&T, v1)
	v2.ScaleVec(-1, &v2)

	a, b, c := v1.AtVec(0), v1.AtVec(1), v1.AtVec(2)
	f, g, h := v1.AtVec(3), v1.AtVec(4), v1.AtVec(5)
	A := mat.NewSymDense(3, []float64{a, h, g, h, b, f, g, f, c})
	bv := mat.NewVecDense(3, []float64{v2.AtVec(0), v2.AtVec(1), v2.AtVec(2)})
	d := v2.AtVec(3)
	var cu mat.VecDense
	if err := cu.SolveVec(A, bv); err != nil {
		return nil, fmt.Errorf("calibrate: ellipsoid: quadric has no centre: %v", err)
	}
	cu.ScaleVec(-1, &cu)
	kq := mat.Inner(&cu, A, &cu) - d
	if kq == 0 || math.IsNaN(kq) {
		return nil, errors.New("calibrate: ellipsoid: degenerate quadric")
	}
	// Ellipsoid in original units: (r-o)ᵀ Ax (r-o) = 1, Ax = A / (k sc²).
	Ax := mat.NewSymDense(3, nil)
	for i := 0; i < 3; i++ {
		for j := i; j < 3; j++ {
			Ax.SetSym(i, j, A.At(i, j)/(kq*sc*sc))
		}
		res.Offset[i] = m[i] + sc*cu.AtVec(i)
	}
	var ae mat.EigenSym
	if !ae.Factorize(Ax, true) {
		return nil, errors.New("calibrate: ellipsoid: eigen-decomposition of the shape failed")
	}
	av := ae.Values(nil)
	for _, l := range av {
		if !(l > 0) {
			return nil, errors.New("calibrate: ellipsoid: the fitted quadric is not an ellipsoid")
		}
	}
	var Q mat.Dense
	ae.VectorsTo(&Q)
	det := av[0] * av[1] * av[2]
	res.Radius = es.Reference
	if res.Radius == 0 {
		res.Radius = math.Pow(det, -1.0/6)
	}
	// W = R Q diag(sqrt(λ)) Qᵀ.
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			var s float64
			for k := 0; k < 3; k++ {
				s += Q.At(i, k) * math.Sqrt(av[k]) * Q.At(j, k)
			}
			res.Matrix[i][j] = res.Radius * s
		}
	}
	res.Status = "algebraic fit"
	if es.Refine {
		refineEllipsoid(readings, res, es.MaxIter)
	}
	res.Before = magnitudeSpread(readings)
	corr := make([][3]float64, len(readings))
	for i, r := range readings {
		corr[i] = matVec3(res.Matrix, [3]float64{r[0] - res.Offset[0], r[1] - res.Offset[1], r[2] - res.Offset[2]})
	}
	res.After = magnitudeSpread(corr)
	maxSpread := es.MaxSpread
	if maxSpread == 0 {
		maxSpread = 0.01
	}
	if res.After.Std > maxSpread*res.Radius {
		return nil, fmt.Errorf("calibrate: ellipsoid: the readings do not lie on an ellipsoid: corrected |B| still spreads by %.1f nT (%.2f%% of %.0f nT, limit %.2f%%); was the field steady and the sensor clear of steel?",
			res.After.Std, 100*res.After.Std/res.Radius, res.Radius, 100*maxSpread)
	}
	return res, nil
}

// refineEllipsoid runs damped Gauss-Newton on the nine parameters
// (o, upper triangle of W) minimising Σ (|W(r-o)| - R)², in place.
func refineEllipsoid(readings [][3]float64, res *EllipsoidResult, maxIter int) {
	type params struct {
		o [3]float64
		w [3][3]float64
	}
	cost := func(p params) float64 {
		var s float64
		for _, r := range readings {
			v := matVec3(p.w, [3]float64{r[0] - p.o[0], r[1] - p.o[1], r[2] - p.o[2]})
			e := norm3(v) - res.Radius
			s += e * e
		}
		return s
	}
	p := params{res.Offset, res.Matrix}
	cur := cost(p)
	n := len(readings)
	J := mat.NewDense(n, 9, nil)
	rv := mat.NewVecDense(n, nil)
	res.Status = "refined: reached iteration limit"
	idx := [6][2]int{{0, 0}, {1, 1}, {2, 2}, {0, 1}, {0, 2}, {1, 2}}
	for it := 1; it <= maxIter; it++ {
		res.Iterations = it
		for i, r := range readings {
			y := [3]float64{r[0] - p.o[0], r[1] - p.o[1], r[2] - p.o[2]}
			v := matVec3(p.w, y)
			nv := norm3(v)
			rv.SetVec(i, nv-res.Radius)
			if nv == 0 {
				continue
			}
			u := [3]float64{v[0] / nv, v[1] / nv, v[2] / nv}
			// d/do = -uᵀ W.
			for k := 0; k < 3; k++ {
				J.Set(i, k, -(u[0]*p.w[0][k] + u[1]*p.w[1][k] + u[2]*p.w[2][k]))
			}
			for q, jk := range idx {
				j, k := jk[0], jk[1]
				if j == k {
					J.Set(i, 3+q, u[j]*y[j])
				} else {
					J.Set(i, 3+q, u[j]*y[k]+u[k]*y[j])
				}
			}
		}
		var step mat.VecDense
		if err := step.SolveVec(J, rv); err != nil {
			res.Status = "refined: singular Jacobian, kept last estimate"
			return
		}
		accepted := false
		for lam := 1.0; lam > 1e-4; lam /= 2 {
			q := p
			for k := 0; k < 3; k++ {
				q.o[k] -= lam * step.AtVec(k)
			}
			for qi, jk := range idx {
				j, k := jk[0], jk[1]
				q.w[j][k] -= lam * step.AtVec(3+qi)
				q.w[k][j] = q.w[j][k]
			}
			if c := cost(q); c <= cur {
				rel := (cur - c) / math.Max(cur, 1e-300)
				p, cur, accepted = q, c, true
				if rel < 1e-12 {
					res.Offset, res.Matrix = p.o, p.w
					res.Status = "refined: converged"
					return
				}
				break
			}
		}
		if !accepted {
			res.Status = "refined: converged (no further decrease)"
			break
		}
	}
	res.Offset, res.Matrix = p.o, p.w
}
