package calibrate

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

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
	// OutlierSigmas is how many robust standard deviations (1.4826 times
	// the median absolute deviation) a reading's corrected |B| may depart
	// from the fitted radius before it is left out as a spike. Zero
	// means outlierCut for the log's number of readings: 5, or more on
	// a log long enough for Gaussian noise alone to pass 5.
	OutlierSigmas float64
	// MaxOutliers is the largest fraction of the readings that may be
	// left out as spikes; beyond it the fit is refused. Zero means 0.05.
	MaxOutliers float64
	// MaxClipped is the largest fraction of the readings that may be left
	// out as saturated (pinned at an axis's extreme value); beyond it the
	// fit is refused. Zero means 0.2.
	MaxClipped float64
	// MaxParamSigma is the largest acceptable standard error of a fitted
	// parameter: of an offset as a fraction of the field the sensor reads,
	// of a matrix entry as a fraction of the matrix's scale. A larger one
	// means the readings leave that parameter undetermined, and the fit is
	// refused. The standard error assumes at least 1e-5 of the field of
	// noise, so that exact readings cannot hide a free parameter. Zero
	// means 0.002.
	MaxParamSigma float64
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
	// Before is the spread of |B| over all the readings, raw, and After
	// over the readings used in the fit, corrected.
	Before, After Spread
	// Clipped and Outliers index the readings left out of the fit, in
	// ascending order: readings pinned at an axis's extreme value (the
	// sensor saturated) and readings far off the fitted ellipsoid.
	Clipped, Outliers []int
	// OffsetSigma and MatrixSigma are the standard errors of the offset,
	// nT, and of the matrix entries, from the scatter of the corrected |B|
	// about the radius (linearised; independent noise).
	OffsetSigma [3]float64
	MatrixSigma [3][3]float64
	// Warnings say what the caller should show: one about the clipped
	// readings, when there are any, then one about the outliers, then any
	// others.
	Warnings []string
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
//
// Before the fit CheckCoverage refuses a log that does not turn the sensor
// enough (or whose axis does not respond); a cap of orientations it finds
// sparse is a warning, as the parameters' standard errors decide whether
// the log determines them. Readings pinned at an axis's extreme value
// (see findClipped) that lie well inside the ellipsoid fitted without
// them (the sensor saturated) are left out, and so are readings whose
// corrected |B| departs from the fitted radius by more than
// OutlierSigmas robust standard deviations (spikes): the
// ellipsoid is refitted without them until the set stops changing. Both
// are listed in the result with a warning; more than MaxClipped or
// MaxOutliers of the log is refused. After the fit the standard error of
// each of the nine parameters is worked out from the residuals (the
// linearised covariance of the least-squares problem on |B|); a log whose
// readings leave one of them undetermined, such as whole turns about two
// axes only, which lie on two great circles and so on a whole family of
// ellipsoids, is refused with ErrCoverage and what to add.
func FitEllipsoid(readings [][3]float64, set *EllipsoidSettings) (*EllipsoidResult, error) {
	var es EllipsoidSettings
	if set != nil {
		es = *set
	}
	if es.MaxIter == 0 {
		es.MaxIter = 50
	}
	if es.OutlierSigmas == 0 {
		es.OutlierSigmas = outlierCut(len(readings))
	}
	if es.MaxOutliers == 0 {
		es.MaxOutliers = 0.05
	}
	if es.MaxClipped == 0 {
		es.MaxClipped = 0.2
	}
	if es.MaxParamSigma == 0 {
		es.MaxParamSigma = 0.002
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

	// Readings pinned at an axis's extreme value are candidates for
	// saturation: they are left out of the first fit, and then kept out
	// only where they lie well inside the fitted ellipsoid, as a clipped
	// reading does (its true component is larger than the value read).
	clip := findClipped(readings)
	clipped := make([]bool, len(readings))
	markClipped := func() {
		for i := range clipped {
			clipped[i] = false
		}
		for _, c := range clip {
			for i, r := range readings {
				if r[c.axis] == c.value {
					clipped[i] = true
				}
			}
		}
	}
	markClipped()

	// Fit, then leave out readings far off the fitted ellipsoid and fit
	// again, until the set of readings used stops changing.
	use := make([]bool, len(readings))
	var (
		fit      ellipsoidFit
		robustSD float64
		med      float64
	)
	resid := make([]float64, len(readings))
	// The first fit starts without the clipped candidates and without
	// readings whose distance from the rough centre of the coverage check
	// is less than half or more than twice the median distance: no sensor
	// is distorted that much, but a run of spikes or a logger's fill value
	// can drag an algebraic fit far enough that the loop below never
	// finds the ellipsoid. The loop judges every reading again by its
	// residual, so this only chooses where it starts.
	centre := axisCentre(readings)
	dist := make([]float64, len(readings))
	for i, r := range readings {
		dist[i] = norm3([3]float64{r[0] - centre[0], r[1] - centre[1], r[2] - centre[2]})
	}
	medDist := median(append([]float64(nil), dist...), nil)
	for i := range use {
		use[i] = !clipped[i] && dist[i] >= 0.5*medDist && dist[i] <= 2*medDist
	}
	fitLoop := func() error {
		for pass := 0; ; pass++ {
			var err error
			fit, err = algebraicFit(subset(readings, use), es.Reference)
			if err != nil {
				return err
			}
			var dev []float64
			for i, r := range readings {
				resid[i] = fit.residual(r)
				if use[i] {
					dev = append(dev, resid[i])
				}
			}
			med = median(dev, nil)
			for i := range dev {
				dev[i] = math.Abs(dev[i] - med)
			}
			// 1.4826 MAD estimates a normal standard deviation; the
			// floor of 1e-6 of the field keeps exact (noise-free)
			// readings from counting rounding as outliers.
			robustSD = math.Max(1.4826*median(dev, nil), 1e-6*fit.radius)
			changed := false
			for i := range readings {
				ok := !clipped[i] && math.Abs(resid[i]-med) <= es.OutlierSigmas*robustSD
				if ok != use[i] {
					use[i], changed = ok, true
				}
			}
			if !changed || pass == 9 {
				return nil
			}
		}
	}
	clipRefusal := func(f float64) error {
		return fmt.Errorf("calibrate: ellipsoid: the readings do not lie on an ellipsoid: %s: %.0f%% of the log, more than the %.0f%% that may be left out; the sensor saturated (its range is smaller than the field it was turned in), or the log was cut off at a limit",
			describeClipped(clip, len(readings)), 100*f, 100*es.MaxClipped)
	}
	countClipped := func() int {
		n := 0
		for _, c := range clipped {
			if c {
				n++
			}
		}
		return n
	}
	if err := fitLoop(); err != nil {
		if n := countClipped(); n > 0 {
			return nil, clipRefusal(float64(n) / float64(len(readings)))
		}
		return nil, err
	}
	if len(clip) > 0 {
		// A run of readings at an axis's extreme is a rail when most of
		// them lie more than OutlierSigmas robust standard deviations
		// inside the ellipsoid fitted without them. Readings that repeat
		// an extreme because they were quantised (as the component along
		// the axis of a whole turn is) lie on it, within the noise, and
		// are put back.
		var rails []clipRun
		for _, c := range clip {
			inside := 0
			for i, r := range readings {
				if r[c.axis] == c.value && resid[i]-med < -es.OutlierSigmas*robustSD {
					inside++
				}
			}
			if 2*inside > c.n {
				rails = append(rails, c)
			}
		}
		if len(rails) < len(clip) {
			clip = rails
			markClipped()
			// Readings put back start in the fit when they lie on the
			// ellipsoid; those far off it (a logger's fill value repeated)
			// stay out, as outliers.
			for i := range use {
				use[i] = !clipped[i] && math.Abs(resid[i]-med) <= es.OutlierSigmas*robustSD
			}
			if err := fitLoop(); err != nil {
				return nil, err
			}
		}
	}
	if n := countClipped(); n > 0 {
		if f := float64(n) / float64(len(readings)); f > es.MaxClipped {
			return nil, clipRefusal(f)
		}
	}
	for i, c := range clipped {
		if c {
			res.Clipped = append(res.Clipped, i)
		}
	}
	if len(clip) > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("%s: the sensor saturated there (they lie inside the ellipsoid fitted to the other readings), so those readings are left out of the fit", describeClipped(clip, len(readings))))
	}
	res.Outliers = res.Outliers[:0]
	for i, u := range use {
		if !u && !clipped[i] {
			res.Outliers = append(res.Outliers, i)
		}
	}
	if len(res.Outliers) == 0 {
		res.Outliers = nil
	}
	if f := float64(len(res.Outliers)) / float64(len(readings)); f > es.MaxOutliers {
		return nil, fmt.Errorf("calibrate: ellipsoid: the readings do not lie on an ellipsoid: %d of %d readings (%.1f%%, more than the %.0f%% that may be left out as spikes) lie more than %.3g robust standard deviations (%.1f nT) off the best-fitting one; was the field steady and the sensor clear of steel?",
			len(res.Outliers), len(readings), 100*f, 100*es.MaxOutliers, es.OutlierSigmas, es.OutlierSigmas*robustSD)
	}
	if n := len(res.Outliers); n > 0 {
		worst := res.Outliers[0]
		for _, i := range res.Outliers {
			if math.Abs(resid[i]) > math.Abs(resid[worst]) {
				worst = i
			}
		}
		verb := "lie"
		if n == 1 {
			verb = "lies"
		}
		res.Warnings = append(res.Warnings, fmt.Sprintf("%d %s of %d %s more than %.3g robust standard deviations (%.1f nT) off the fitted ellipsoid (the worst by %+.0f nT): spikes or a passing disturbance, left out of the fit",
			n, plural(n, "reading"), len(readings), verb, es.OutlierSigmas, es.OutlierSigmas*robustSD, resid[worst]))
	}
	kept := subset(readings, use)
	if len(kept) < len(readings) && !es.SkipCoverage {
		cov, err := CheckCoverage(kept, es.Coverage)
		res.Coverage = cov
		if err != nil {
			return nil, fmt.Errorf("%w (after leaving out %d clipped or outlying readings)", err, len(readings)-len(kept))
		}
	}

	res.Offset, res.Matrix, res.Radius = fit.offset, fit.matrix, fit.radius
	res.Status = "algebraic fit"
	if es.Refine {
		refineEllipsoid(kept, res, es.MaxIter)
	}
	res.Before = magnitudeSpread(readings)
	corr := make([][3]float64, len(kept))
	for i, r := range kept {
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
	if err := paramSigmas(kept, res, es.MaxParamSigma); err != nil {
		return nil, err
	}
	if res.Coverage != nil {
		// A sparse cap is no reason to refuse a fit whose standard errors
		// show every parameter determined (a sensor held roughly upright
		// can give one), but it rests on fewer orientations.
		worst := 0.0
		for k := 0; k < 3; k++ {
			worst = math.Max(worst, res.OffsetSigma[k])
		}
		for _, w := range res.Coverage.Warnings {
			res.Warnings = append(res.Warnings, fmt.Sprintf("%s: the fit is kept, as its standard errors show every parameter determined (offsets to ±%.2g nT), but it rests on the orientations the log has; turn the sensor through the missing ones too where it can be",
				w, worst))
		}
	}
	if res.After.Std > warnSpread*res.Radius {
		res.Warnings = append(res.Warnings, fmt.Sprintf("corrected |B| still scatters by %.1f nT (%.2f%% of the field), far more than a magnetometer's own noise: if the field changed during the spin or steel was near, the scale can be off by as much; spin again where the field is steady, if the sensor is quieter than that",
			res.After.Std, 100*res.After.Std/res.Radius))
	}
	return res, nil
}

// ellipsoidFit is one algebraic fit: corrected = matrix (r - offset), with
// |corrected| = radius on the ellipsoid.
type ellipsoidFit struct {
	offset [3]float64
	matrix [3][3]float64
	radius float64
}

func (f ellipsoidFit) residual(r [3]float64) float64 {
	return norm3(matVec3(f.matrix, [3]float64{r[0] - f.offset[0], r[1] - f.offset[1], r[2] - f.offset[2]})) - f.radius
}

// subset returns the readings whose use flag is set.
func subset(readings [][3]float64, use []bool) [][3]float64 {
	out := make([][3]float64, 0, len(readings))
	for i, r := range readings {
		if use[i] {
			out = append(out, r)
		}
	}
	return out
}

func plural(n int, word string) string {
	if n == 1 {
		return word
	}
	return word + "s"
}

// algebraicFit is the direct ellipsoid fit of Li and Griffiths (2004),
// scaled to reference (or, when it is 0, to the radius of the sphere with
// the fitted ellipsoid's volume).
func algebraicFit(readings [][3]float64, reference float64) (ellipsoidFit, error) {
	var fit ellipsoidFit
	if len(readings) < 10 {
		return fit, fmt.Errorf("calibrate: ellipsoid: %d readings, need at least 10", len(readings))
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
		return fit, errors.New("calibrate: ellipsoid: all readings are identical")
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
		return fit, fmt.Errorf("calibrate: ellipsoid: readings are degenerate: %v", err)
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
		return fit, fmt.Errorf("calibrate: ellipsoid: %v", err)
	}
	var eig mat.Eigen
	if !eig.Factorize(&M, mat.EigenRight) {
		return fit, errors.New("calibrate: ellipsoid: eigen-decomposition failed")
	}
	vals := eig.Values(nil)
	var vecs mat.CDense
	eig.VectorsTo(&vecs)
	// The eigenvalue of an eigenvector v is vᵀ red v / vᵀ C1 v, red being positive
	// semi-definite: the ellipsoid's (vᵀ C1 v > 0, the constraint) is the one not
	// below zero. On readings that lie on an ellipsoid exactly it is zero, and
	// round-off gives it either sign: an eigenvalue within round-off of zero
	// (relative to the spectrum) is taken too when its vector meets the
	// constraint, as the null vector of red it is.
	var scale float64
	for _, v := range vals {
		scale = math.Max(scale, cmplx.Abs(v))
	}
	tol := 1e-9 * scale
	best := -1
	v1 := mat.NewVecDense(6, nil)
	cv := mat.NewVecDense(6, nil)
	for i, v := range vals {
		if math.Abs(imag(v)) > 1e-9*math.Max(math.Abs(real(v)), tol) || real(v) < -tol {
			continue
		}
		for k := 0; k < 6; k++ {
			v1.SetVec(k, real(vecs.At(k, i)))
		}
		cv.MulVec(c1, v1)
		if !(mat.Dot(v1, cv) > 0) {
			continue
		}
		if best < 0 || real(v) > real(vals[best]) {
			best = i
		}
	}
	if best < 0 {
		return fit, errors.New("calibrate: ellipsoid: no ellipsoid fits the readings (no eigenvector meets the ellipsoid constraint)")
	}
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
		return fit, fmt.Errorf("calibrate: ellipsoid: quadric has no centre: %v", err)
	}
	cu.ScaleVec(-1, &cu)
	kq := mat.Inner(&cu, A, &cu) - d
	if kq == 0 || math.IsNaN(kq) {
		return fit, errors.New("calibrate: ellipsoid: degenerate quadric")
	}
	// Ellipsoid in original units: (r-o)ᵀ Ax (r-o) = 1, Ax = A / (k sc²).
	Ax := mat.NewSymDense(3, nil)
	for i := 0; i < 3; i++ {
		for j := i; j < 3; j++ {
			Ax.SetSym(i, j, A.At(i, j)/(kq*sc*sc))
		}
		fit.offset[i] = m[i] + sc*cu.AtVec(i)
	}
	var ae mat.EigenSym
	if !ae.Factorize(Ax, true) {
		return fit, errors.New("calibrate: ellipsoid: eigen-decomposition of the shape failed")
	}
	av := ae.Values(nil)
	for _, l := range av {
		if !(l > 0) {
			return fit, errors.New("calibrate: ellipsoid: the fitted quadric is not an ellipsoid")
		}
	}
	var Q mat.Dense
	ae.VectorsTo(&Q)
	det := av[0] * av[1] * av[2]
	fit.radius = reference
	if fit.radius == 0 {
		fit.radius = math.Pow(det, -1.0/6)
	}
	// W = R Q diag(sqrt(λ)) Qᵀ.
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			var s float64
			for k := 0; k < 3; k++ {
				s += Q.At(i, k) * math.Sqrt(av[k]) * Q.At(j, k)
			}
			fit.matrix[i][j] = fit.radius * s
		}
	}
	return fit, nil
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

// clipRun is a value that many readings of one axis share at that axis's
// extreme: the sensor saturated.
type clipRun struct {
	axis  int
	value float64
	n     int
	max   bool
}

// findClipped finds readings pinned at an axis's largest or smallest
// value. An axis turned through the field takes each value near its
// extreme no more often than the others (on a sphere of directions
// turned evenly, each component is uniformly distributed: Archimedes'
// hat-box theorem), so an extreme value repeated at least three times and
// at least four times as often as the distinct values within 5% of the
// axis's range below it is a candidate rail the sensor saturated at.
// Quantised readings from whole turns repeat an extreme too (the
// component along the turn axis stays put), so FitEllipsoid keeps a
// candidate as a rail only when its readings lie inside the ellipsoid.
func findClipped(readings [][3]float64) []clipRun {
	var out []clipRun
	if len(readings) == 0 {
		return nil
	}
	vals := make([]float64, len(readings))
	for k := 0; k < 3; k++ {
		for i, r := range readings {
			vals[i] = r[k]
		}
		sort.Float64s(vals)
		lo, hi := vals[0], vals[len(vals)-1]
		span := hi - lo
		if span == 0 {
			continue
		}
		for _, top := range []bool{true, false} {
			ext := lo
			if top {
				ext = hi
			}
			var at, near, distinct int
			last := math.NaN()
			for _, v := range vals {
				d := math.Abs(v - ext)
				switch {
				case d == 0:
					at++
				case d <= 0.05*span:
					near++
					if v != last {
						distinct++
						last = v
					}
				}
			}
			per := 1.0
			if distinct > 0 {
				per = math.Max(1, float64(near)/float64(distinct))
			}
			if at >= 3 && float64(at) >= 4*per {
				out = append(out, clipRun{axis: k, value: ext, n: at, max: top})
			}
		}
	}
	return out
}

// ClipRun is a value that N readings of axis Axis (0 x, 1 y, 2 z) share
// at that axis's extreme, the largest when Max: a candidate rail the
// sensor saturated at (FindClipped).
type ClipRun struct {
	Axis  int
	Value float64
	N     int
	Max   bool
}

// FindClipped returns the candidate rails of the readings by the test
// FitEllipsoid uses (findClipped): an axis's extreme value repeated at
// least three times and at least four times as often as the distinct
// values within 5% of the axis's range below it. No readings have none.
func FindClipped(readings [][3]float64) []ClipRun {
	var out []ClipRun
	for _, c := range findClipped(readings) {
		out = append(out, ClipRun{Axis: c.axis, Value: c.value, N: c.n, Max: c.max})
	}
	return out
}

// describeClipped says which axes are pinned where, for messages.
func describeClipped(clip []clipRun, n int) string {
	var parts []string
	for _, c := range clip {
		which := "smallest"
		if c.max {
			which = "largest"
		}
		parts = append(parts, fmt.Sprintf("b%c reads exactly %.6g nT, its %s value, on %d of %d readings", "xyz"[c.axis], c.value, which, c.n, n))
	}
	return strings.Join(parts, "; ")
}

// paramNames name the nine parameters of paramSigmas.
var paramNames = [9]string{"x offset", "y offset", "z offset", "matrix term xx", "matrix term yy", "matrix term zz", "matrix term xy", "matrix term xz", "matrix term yz"}

// paramSigmas works out the standard errors of the nine parameters (o and
// the upper triangle of the symmetric W) from the Jacobian of the
// residuals |W(r-o)| - R at the fit, as in refineEllipsoid: cov = s²
// (JᵀJ)⁻¹ with s the residuals' RMS. It fills res.OffsetSigma and
// res.MatrixSigma and returns an error wrapping ErrCoverage when a
// parameter's relative standard error, with s at least 1e-5 of the field,
// exceeds maxRel: the readings leave it undetermined.
func paramSigmas(readings [][3]float64, res *EllipsoidResult, maxRel float64) error {
	n := len(readings)
	W, o, R := res.Matrix, res.Offset, res.Radius
	// Scales that make the parameters dimensionless: the raw field the
	// sensor reads, and the size of W (R over that field).
	var raw, ss float64
	for _, r := range readings {
		raw += norm3([3]float64{r[0] - o[0], r[1] - o[1], r[2] - o[2]})
		e := norm3(matVec3(W, [3]float64{r[0] - o[0], r[1] - o[1], r[2] - o[2]})) - R
		ss += e * e
	}
	raw /= float64(n)
	wScale := R / raw
	s := math.Sqrt(ss/float64(n)) / R
	idx := [6][2]int{{0, 0}, {1, 1}, {2, 2}, {0, 1}, {0, 2}, {1, 2}}
	var jtj [9][9]float64
	var row [9]float64
	for _, r := range readings {
		y := [3]float64{r[0] - o[0], r[1] - o[1], r[2] - o[2]}
		v := matVec3(W, y)
		nv := norm3(v)
		if nv == 0 {
			continue
		}
		u := [3]float64{v[0] / nv, v[1] / nv, v[2] / nv}
		for k := 0; k < 3; k++ {
			row[k] = -(u[0]*W[0][k] + u[1]*W[1][k] + u[2]*W[2][k]) * raw / R
		}
		for q, jk := range idx {
			j, k := jk[0], jk[1]
			d := u[j] * y[j]
			if j != k {
				d = u[j]*y[k] + u[k]*y[j]
			}
			row[3+q] = d * wScale / R
		}
		for a := 0; a < 9; a++ {
			for b := a; b < 9; b++ {
				jtj[a][b] += row[a] * row[b]
			}
		}
	}
	sym := mat.NewSymDense(9, nil)
	for a := 0; a < 9; a++ {
		for b := a; b < 9; b++ {
			sym.SetSym(a, b, jtj[a][b])
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(sym, true) {
		return errors.New("calibrate: ellipsoid: eigen-decomposition of the parameters' normal matrix failed")
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	// cov = s² V diag(1/λ) Vᵀ; a zero or negative λ (rounding) is a free
	// direction.
	var rel, relTest [9]float64
	sTest := math.Max(s, 1e-5)
	for a := 0; a < 9; a++ {
		var c float64
		for q := 0; q < 9; q++ {
			if vals[q] <= 0 {
				c = math.Inf(1)
				break
			}
			c += vecs.At(a, q) * vecs.At(a, q) / vals[q]
		}
		rel[a] = s * math.Sqrt(c)
		relTest[a] = sTest * math.Sqrt(c)
	}
	for k := 0; k < 3; k++ {
		res.OffsetSigma[k] = rel[k] * raw
	}
	for q, jk := range idx {
		j, k := jk[0], jk[1]
		res.MatrixSigma[j][k] = rel[3+q] * wScale
		res.MatrixSigma[k][j] = res.MatrixSigma[j][k]
	}
	worst := 0
	for a := range relTest {
		if relTest[a] > relTest[worst] || math.IsNaN(relTest[a]) {
			worst = a
		}
	}
	if relTest[worst] <= maxRel {
		return nil
	}
	size := fmt.Sprintf("its standard error is ±%.2g%%, want ±%.2g%% or better", 100*relTest[worst], 100*maxRel)
	if math.IsInf(relTest[worst], 0) || math.IsNaN(relTest[worst]) {
		size = "no standard error can be given"
	}
	// dilution is how much worse the parameter is determined than by
	// readings spread evenly over all orientations, which give about 2-3
	// (s sqrt(n) times its standard error; 2 circles give thousands): a
	// large one is a matter of orientations, a small one of noise.
	dilution := relTest[worst] / sTest * math.Sqrt(float64(n))
	if !(dilution > maxDilution) {
		return fmt.Errorf("calibrate: ellipsoid: the readings are too few or too noisy to determine the %s (%s; %d readings, corrected |B| scatters by %.3g nT): take more readings, or spin the sensor where the field is steadier",
			paramNames[worst], size, n, s*R)
	}
	// What to add: the least determined combination of parameters is
	// the eigenvector of the smallest eigenvalue. Whole turns about two
	// axes leave free a matrix term of the form n1 n2ᵀ + n2 n1ᵀ for the
	// two turn axes n1, n2; its eigenvector of eigenvalue 0 is the third
	// axis, about which the sensor should also be turned.
	var dW [3][3]float64
	var offPart, wPart float64
	for q := 0; q < 9; q++ {
		v := vecs.At(q, 0)
		if q < 3 {
			offPart += v * v
			continue
		}
		wPart += v * v
		j, k := idx[q-3][0], idx[q-3][1]
		dW[j][k], dW[k][j] = v, v
	}
	msg := fmt.Sprintf("the readings leave the %s undetermined (%s): they fit a whole family of ellipsoids equally well, so |B| after the correction looks right whichever is taken", paramNames[worst], size)
	if wPart >= offPart {
		var de mat.EigenSym
		dws := mat.NewSymDense(3, []float64{dW[0][0], dW[0][1], dW[0][2], dW[1][0], dW[1][1], dW[1][2], dW[2][0], dW[2][1], dW[2][2]})
		axis := [3]float64{0, 0, 1}
		if de.Factorize(dws, true) {
			dv := de.Values(nil)
			var dvec mat.Dense
			de.VectorsTo(&dvec)
			m := 0
			for q := 1; q < 3; q++ {
				if math.Abs(dv[q]) < math.Abs(dv[m]) {
					m = q
				}
			}
			axis = [3]float64{dvec.At(0, m), dvec.At(1, m), dvec.At(2, m)}
		}
		axis = positive(axis)
		msg = fmt.Sprintf("%s (whole turns about two axes only do this); also turn the sensor about an axis near (%.2f, %.2f, %.2f), or tumble it through all orientations",
			msg, axis[0], axis[1], axis[2])
	} else {
		d := positive([3]float64{vecs.At(0, 0), vecs.At(1, 0), vecs.At(2, 0)})
		nd := norm3(d)
		msg = fmt.Sprintf("%s; also point the sensor's axis near (%.2f, %.2f, %.2f) along and against the field, or tumble it through all orientations",
			msg, d[0]/nd, d[1]/nd, d[2]/nd)
	}
	return fmt.Errorf("calibrate: %w: %s", ErrCoverage, msg)
}

// warnSpread is the spread of the corrected |B|, as a fraction of the
// field, above which a fit that MaxSpread lets through gets a warning.
const warnSpread = 0.002

// maxDilution separates a parameter left undetermined by the orientations
// (see paramSigmas) from one blurred by noise.
const maxDilution = 20

// positive flips v to point mostly positive, for readable messages.
func positive(v [3]float64) [3]float64 {
	if v[0]+v[1]+v[2] < 0 {
		return [3]float64{-v[0], -v[1], -v[2]}
	}
	return v
}

// outlierFamilyRate is the chance, over a whole log of pure Gaussian
// noise, that any reading passes the spike cut outlierCut sets: 1%, so
// that a clean log is almost never reported as holding spikes.
const outlierFamilyRate = 0.01

// outlierCut is the spike cut, in robust standard deviations, for a log
// of n readings: the larger of 5 and the two-sided normal quantile z that
// n independent normal readings pass with total expectation
// outlierFamilyRate, n P(|Z| > z) = outlierFamilyRate, so
// z = sqrt(2) erfc^-1(outlierFamilyRate/n) (a Bonferroni bound on the
// family-wise rate; the normal tail P(|Z| > z) = erfc(z/sqrt(2)),
// Abramowitz & Stegun 26.2.29). A fixed 5 expects n 5.7e-7 normal readings
// beyond it, 1.4 on a 2.4-million-reading spin log, which was then
// reported as holding "spikes or a passing disturbance" (found in
// review); the cut is 5 up to about 17 000 readings, 5.9 at 2.4 million.
func outlierCut(n int) float64 {
	if n < 1 {
		return 5
	}
	return math.Max(5, math.Sqrt2*math.Erfcinv(outlierFamilyRate/float64(n)))
}
