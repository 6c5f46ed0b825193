package inverse

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// RobustNote is the note a fit with Settings.Robust carries (Result.Notes): its
// sigmas are Huber's asymptotic ones (huberCovariance), a large-sample approximation.
const RobustNote = "robust (Huber) weights: uncertainties are approximate"

// huberScale returns the magnitude of each reading axis's residual (over the nr
// right-hand sides of the m x nr row-major res) and the robust scale the Huber weights
// are taken in: 1.4826 times the median of the magnitudes, or for one right-hand side
// 1.4826 times the median absolute deviation of the residuals (Hampel's normalised
// MAD, consistent for the standard deviation of Gaussian noise).
func huberScale(res []float64, m, nr int) (mag []float64, scale float64) {
	mag = make([]float64, m)
	for row := range m {
		var s float64
		for k := range nr {
			s += res[row*nr+k] * res[row*nr+k]
		}
		mag[row] = math.Sqrt(s / float64(nr))
	}
	if nr != 1 {
		return mag, 1.4826 * median(mag)
	}
	abs := make([]float64, m)
	med := median(res[:m])
	for i, v := range res[:m] {
		abs[i] = math.Abs(v - med)
	}
	return mag, 1.4826 * medianInPlace(abs)
}

// huberCovariance returns the covariance of a fit with Huber weights (Settings.Robust):
// the sandwich form of the asymptotic covariance of an M-estimate of regression
// (Huber, Robust Statistics, Wiley 1981, sections 6.3 and 7.6; from memory),
//
//	cov = n/(n-p) s^2 A^-1 B A^-1,   A = sum_i psi'(u_i) J_i J_i^T,   B = sum_i psi(u_i)^2 J_i J_i^T
//
// with u_i = r_i/s the residuals in units of the robust scale s (huberScale), psi
// Huber's function (u clipped at +-HuberC), J_i the row of the unweighted full Jacobian
// at the solution, n the residual count and p the parameter count. On Gaussian noise
// it tends to E[psi^2]/E[psi']^2 s^2 (J^T J)^-1, 1/0.95 times the least-squares
// covariance at HuberC = 1.345 (the Huber estimate's efficiency), where the weighted
// least-squares covariance with the weights held fixed and the scale taken from the
// down-weighted residuals made the sigmas 10-15% too small; and the sandwich follows
// residuals that grow where the Jacobian is large (scattered sensor positions, whose
// misfit is largest on the anomaly's flanks, which fix the offset), which the
// down-weighting otherwise hides. For AC a reading axis's residual is its phasor (nr =
// 2 parts) and psi clips the phasor's magnitude, as reweight does. When the readings
// within the threshold do not determine every parameter (A singular) it falls back to
// Huber's correction-factor form (ibid. section 7.6, the first of its three estimates)
//
//	cov = K^2 [sum psi(u_i)^2 / (n-p)] / [mean psi'(u_i)]^2 s^2 (J^T J)^-1
//	K   = 1 + (p/n) var(psi') / [mean psi']^2
//
// It returns nil when the scale is zero. The separable must hold the Huber weights of
// the fit at x and is left evaluated at x with them.
func (f *fitter) huberCovariance(c *candidate, p int) (*mat.SymDense, error) {
	sp := c.sp
	m, nr := sp.m, sp.nrhs
	res0, err := sp.fullResiduals(c.x)
	if err != nil {
		return nil, err
	}
	res := slices.Clone(res0)
	mag, s := huberScale(res, m, nr)
	n := m * nr
	if !(s > 0) || n <= p {
		return nil, nil
	}
	hc := f.set.HuberC
	// psi and psi' per Jacobian row k*m + row.
	psi, dpsi := make([]float64, n), make([]float64, n)
	var sumPsi2 float64
	inliers := 0
	for row := range m {
		u := mag[row] / s
		w, d := 1.0, 1.0
		if u > hc {
			w, d = hc/u, 0
		} else {
			inliers++
		}
		for k := range nr {
			v := w * res[row*nr+k] / s
			psi[k*m+row], dpsi[k*m+row] = v, d
			sumPsi2 += v * v
		}
	}
	if inliers == 0 {
		return nil, nil
	}
	// The unweighted Jacobian at the weighted fit's strengths: with the separable
	// evaluated at x (fullResiduals), clearing the weights leaves its strengths as
	// they are.
	saved := sp.w
	sp.w = nil
	a, rows, cols, err := sp.fullJacobianCols(c.x)
	sp.w = saved
	if err != nil {
		return nil, err
	}
	aA, aB := make([]float64, len(a)), make([]float64, len(a))
	for j := range cols {
		for i := range rows {
			aA[j*rows+i] = dpsi[i] * a[j*rows+i]
			aB[j*rows+i] = psi[i] * a[j*rows+i]
		}
	}
	ainv, unres, err := covarianceCols(aA, rows, cols)
	singular := err != nil
	if !singular {
		ref, refUnres, err := covarianceCols(slices.Clone(a), rows, cols)
		if err != nil {
			return nil, err
		}
		for j := range unres {
			singular = singular || unres[j] && !refUnres[j]
		}
		if singular {
			ainv = ref
		}
	}
	if singular {
		// Huber's correction factor on (J^T J)^-1.
		mp := float64(inliers) / float64(m)
		kk := 1 + float64(p)/float64(n)*mp*(1-mp)/(mp*mp)
		ainv, _, err = covarianceCols(a, rows, cols)
		if err != nil {
			return nil, err
		}
		ainv.ScaleSym(kk*kk*(sumPsi2/float64(n-p))/(mp*mp)*s*s, ainv)
		return ainv, nil
	}
	Bm := mat.NewDense(cols, cols, nil)
	jb := mat.NewDense(cols, rows, aB) // column-major J_B is row-major J_B^T
	Bm.Mul(jb, jb.T())
	var t1, t2 mat.Dense
	t1.Mul(ainv, Bm)
	t2.Mul(&t1, ainv)
	scale := float64(n) / float64(n-p) * s * s
	cov := mat.NewSymDense(cols, nil)
	for i := range cols {
		for j := i; j < cols; j++ {
			cov.SetSym(i, j, scale*0.5*(t2.At(i, j)+t2.At(j, i)))
		}
	}
	return cov, nil
}
