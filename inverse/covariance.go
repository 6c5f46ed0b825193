package inverse

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
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
	d := make([]float64, n)
	for j := range n {
		var s float64
		for i := range m {
			v := J.At(i, j)
			s += v * v
		}
		d[j] = math.Sqrt(s)
		if d[j] == 0 {
			d[j] = 1
		}
	}
	// QR of the scaled Jacobian first; the SVD of its small triangular factor has the
	// same singular values and right singular vectors.
	a := blas64.General{Rows: m, Cols: n, Stride: n, Data: make([]float64, m*n)}
	for i := range m {
		for j := range n {
			a.Data[i*n+j] = J.At(i, j) / d[j]
		}
	}
	tau := make([]float64, n)
	work := make([]float64, max(n, 1))
	lapack64.Geqrf(a, tau, work, len(work))
	rf := mat.NewDense(n, n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			rf.Set(i, j, a.Data[i*n+j])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(rf, mat.SVDThin) {
		return nil, nil, errors.New("inverse: singular value decomposition failed")
	}
	sv := svd.Values(nil)
	var V mat.Dense
	svd.VTo(&V)
	unresolved = make([]bool, n)
	cov = mat.NewSymDense(n, nil)
	for k, s := range sv {
		if s <= rankTol*sv[0] {
			for j := range n {
				if v := V.At(j, k); v*v > 1e-4 {
					unresolved[j] = true
				}
			}
			continue
		}
		for i := range n {
			for j := i; j < n; j++ {
				cov.SetSym(i, j, cov.At(i, j)+V.At(i, k)*V.At(j, k)/(s*s))
			}
		}
	}
	for i := range n {
		for j := i; j < n; j++ {
			cov.SetSym(i, j, cov.At(i, j)/(d[i]*d[j]))
		}
	}
	return cov, unresolved, nil
}
