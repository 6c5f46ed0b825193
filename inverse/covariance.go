package inverse

import (
	"errors"

	"gonum.org/v1/gonum/mat"
)

// rankTol is the relative singular-value threshold below which a direction of the
// column-scaled Jacobian counts as unresolved by the data.
const rankTol = 1e-9

// covariance returns (J^T J)^-1 for the m x n Jacobian J, computed from the singular
// value decomposition of the column-scaled J (never from J^T J, which squares the
// condition number). When J is rank deficient the pseudo-inverse is returned and
// unresolved[j] is true for every parameter with a material component in the null space:
// its variance is meaningless and must be reported as not identifiable.
func covariance(J mat.Matrix) (cov *mat.SymDense, unresolved []bool, err error) {
	m, n := J.Dims()
	if m < n {
		return nil, nil, errors.New("inverse: fewer readings than parameters")
	}
	a := make([]float64, m*n)
	if jd, ok := J.(*mat.Dense); ok {
		raw := jd.RawMatrix()
		for i := range m {
			row := raw.Data[i*raw.Stride : i*raw.Stride+n]
			for j, x := range row {
				a[j*m+i] = x
			}
		}
	} else {
		for i := range m {
			for j := range n {
				a[j*m+i] = J.At(i, j)
			}
		}
	}
	return covarianceCols(a, m, n)
}

// covarianceCols is covariance for the m x n column-major Jacobian a, which it
// overwrites.
func covarianceCols(a []float64, m, n int) (cov *mat.SymDense, unresolved []bool, err error) {
	c, unresolved, err := covarianceRaw(a, m, n, nil)
	if err != nil {
		return nil, nil, err
	}
	return mat.NewSymDense(n, c), unresolved, nil
}

// covarianceRaw is covarianceCols returning the covariance as n x n row-major values,
// its workspace and the values lent by scr (nil to allocate them).
func covarianceRaw(a []float64, m, n int, scr *scratch) (cov []float64, unresolved []bool, err error) {
	if m < n {
		return nil, nil, errors.New("inverse: fewer readings than parameters")
	}
	ws := scr.take(n + 3*n*n + 2*n)
	tau, rf, v, sv := ws[:n], ws[n:n+n*n], ws[n+n*n:n+2*n*n], ws[n+2*n*n:n+2*n*n+n]
	c := ws[n+2*n*n+n : n+3*n*n+n]
	clear(c)
	d := ws[n+3*n*n+n:]
	for j := range n {
		col := a[j*m : (j+1)*m]
		d[j] = norm2(col)
		if d[j] == 0 {
			d[j] = 1
		}
		for i := range col {
			col[i] /= d[j]
		}
	}
	// QR of the scaled Jacobian first; the SVD of its small triangular factor has the
	// same singular values and right singular vectors.
	houseQR(a, m, n, tau)
	for k := range n {
		for i := range n {
			if i <= k {
				rf[k*n+i] = a[k*m+i]
			} else {
				rf[k*n+i] = 0
			}
		}
	}
	if covFromInverse(rf, n, c) {
		// Well conditioned: no direction can be unresolved.
		unresolved = make([]bool, n)
		for i := range n {
			for j := i; j < n; j++ {
				c[i*n+j] /= d[i] * d[j]
				c[j*n+i] = c[i*n+j]
			}
		}
		return c, unresolved, nil
	}
	if !jacobiSVD(rf, n, sv, v) {
		return nil, nil, errors.New("inverse: singular value decomposition failed")
	}
	unresolved = make([]bool, n)
	for k, s := range sv {
		vk := v[k*n : (k+1)*n]
		if s <= rankTol*sv[0] {
			for j := range n {
				if vk[j]*vk[j] > 1e-4 {
					unresolved[j] = true
				}
			}
			continue
		}
		s2 := s * s
		for i := range n {
			vi := vk[i] / s2
			for j := i; j < n; j++ {
				c[i*n+j] += vi * vk[j]
			}
		}
	}
	for i := range n {
		for j := i; j < n; j++ {
			c[i*n+j] /= d[i] * d[j]
			c[j*n+i] = c[i*n+j]
		}
	}
	return c, unresolved, nil
}

// covFromInverse writes (R^T R)^-1 = R^-1 R^-T into the upper triangle of the n x n
// row-major c, for the upper triangular n x n column-major rf, and reports true, when R
// is so well conditioned that the singular value decomposition could find no direction
// below rankTol: ||R||_F ||R^-1||_F bounds the 2-norm condition number from above, so
// when it is under 1/rankTol (with a factor 10 to spare for rounding) the smallest
// singular value exceeds rankTol times the largest. Otherwise it reports false and the
// caller takes the SVD. Forming R^-1 by back substitution costs n^3/3 flops against the
// several sweeps of n^3 of the Jacobi SVD; the two agree to rounding (TestCovarianceWays).
func covFromInverse(rf []float64, n int, c []float64) bool {
	if n > 16 {
		return false
	}
	var inv [16 * 16]float64 // R^-1, column-major
	rn, in := triInverse(rf, n, inv[:n*n])
	if !(rn*in < 1e-2/(rankTol*rankTol)) { // also false for NaN and Inf
		return false
	}
	// c = R^-1 R^-T: c[i][j] = sum over k >= max(i, j) of R^-1[i][k] R^-1[j][k].
	for i := range n {
		for j := i; j < n; j++ {
			var s float64
			for k := j; k < n; k++ {
				s += inv[k*n+i] * inv[k*n+j]
			}
			c[i*n+j] = s
		}
	}
	return true
}

// triInverse writes to inv (n x n, column-major) the inverse of the n x n upper
// triangular column-major R by back substitution, column by column (its upper
// triangle; the entries below the diagonal are left as they were), and returns the
// squared Frobenius norms of R and of R^-1, whose product bounds the squared 2-norm
// condition number from above.
func triInverse(R []float64, n int, inv []float64) (rn, in float64) {
	for k := range n {
		for i := 0; i <= k; i++ {
			x := R[k*n+i]
			rn += x * x
		}
	}
	for k := range n {
		// Column k of R^-1: solve R x = e_k (x[i] = 0 for i > k).
		x := inv[k*n : k*n+n]
		for i := k; i >= 0; i-- {
			var s float64
			if i == k {
				s = 1
			}
			for j := i + 1; j <= k; j++ {
				s -= R[j*n+i] * x[j]
			}
			x[i] = s / R[i*n+i]
			in += x[i] * x[i]
		}
	}
	return rn, in
}
