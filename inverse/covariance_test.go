package inverse

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestCovarianceWays checks covarianceRaw against gonum's singular value decomposition
// of the same Jacobian (mat.SVD, the pseudo-inverse V S^-2 V^T) on random Jacobians
// whose columns differ in scale by up to 1e12 and whose condition (after column
// scaling) ranges from 1 to 3e8, so that both of its ways are taken: the inverse of R
// when R is well conditioned, the Jacobi SVD when it is not. Each way is also checked
// against the other, and rank-deficient Jacobians must still be flagged.
func TestCovarianceWays(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	ways := [2]int{}
	defer func() {
		t.Logf("inverse of R taken %d times, SVD %d times", ways[0], ways[1])
		if ways[0] < 20 || ways[1] < 5 {
			t.Errorf("both ways should be exercised: %v", ways)
		}
	}()
	for trial := range 300 {
		m, n := 20+rng.IntN(100), 1+rng.IntN(9)
		// J = U diag(s) V^T with a chosen condition, then columns scaled.
		cond := math.Pow(10, 8.5*rng.Float64())
		J := randomJacobian(rng, m, n, cond)
		want := gonumCovariance(t, J)
		a := colMajor(J)
		got, unres, err := covarianceRaw(a, m, n, nil)
		if err != nil {
			t.Fatal(err)
		}
		for j := range n {
			if unres[j] {
				t.Fatalf("trial %d (condition %.3g): parameter %d flagged unresolved", trial, cond, j)
			}
		}
		// Forward error of an inverse grows with the condition: compare relative to
		// sqrt(C_ii C_jj), allowing cond * 1e-13.
		tol := math.Max(1e-12, cond*1e-13)
		for i := range n {
			for j := range n {
				scale := math.Sqrt(want.At(i, i) * want.At(j, j))
				if d := math.Abs(got[i*n+j] - want.At(i, j)); d > tol*scale {
					t.Fatalf("trial %d (m %d n %d condition %.3g): C[%d][%d] = %.17g, gonum %.17g", trial, m, n, cond, i, j, got[i*n+j], want.At(i, j))
				}
			}
		}
		// The two ways agree with each other where both apply.
		r := upperR(J)
		var c [16 * 16]float64
		if covFromInverse(r, n, c[:]) {
			ways[0]++
			sv, v := make([]float64, n), make([]float64, n*n)
			if !jacobiSVD(r, n, sv, v) {
				t.Fatal("Jacobi SVD did not converge")
			}
			for i := range n {
				for j := i; j < n; j++ {
					var s float64
					for k := range n {
						s += v[k*n+i] * v[k*n+j] / (sv[k] * sv[k])
					}
					if d := math.Abs(c[i*n+j] - s); d > tol*math.Sqrt(c[i*n+i]*c[j*n+j]) {
						t.Fatalf("trial %d: inverse and SVD differ at [%d][%d]: %.17g %.17g", trial, i, j, c[i*n+j], s)
					}
				}
			}
		} else {
			ways[1]++
			if cond < 1e6 {
				t.Errorf("trial %d: condition %.3g should take the inverse", trial, cond)
			}
		}
	}
	// Rank deficient: a column repeated must be flagged through the SVD way.
	J := randomJacobian(rng, 40, 4, 10)
	for i := range 40 {
		J.Set(i, 3, 2*J.At(i, 1))
	}
	_, unres, err := covarianceRaw(colMajor(J), 40, 4, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !unres[1] || !unres[3] || unres[0] || unres[2] {
		t.Errorf("repeated column: unresolved %v, want [false true false true]", unres)
	}
}

func randomJacobian(rng *rand.Rand, m, n int, cond float64) *mat.Dense {
	orth := func(r, c int) *mat.Dense {
		g := mat.NewDense(r, c, nil)
		for i := range r {
			for j := range c {
				g.Set(i, j, rng.NormFloat64())
			}
		}
		var qr mat.QR
		qr.Factorize(g)
		var q mat.Dense
		qr.QTo(&q)
		return mat.DenseCopyOf(q.Slice(0, r, 0, c))
	}
	U, V := orth(m, n), orth(n, n)
	S := mat.NewDense(n, n, nil)
	for k := range n {
		S.Set(k, k, math.Pow(cond, -float64(k)/math.Max(float64(n-1), 1)))
	}
	var J mat.Dense
	J.Product(U, S, V.T())
	for j := range n {
		sc := math.Pow(10, 12*rng.Float64()-6)
		for i := range m {
			J.Set(i, j, J.At(i, j)*sc)
		}
	}
	return &J
}

func colMajor(J *mat.Dense) []float64 {
	m, n := J.Dims()
	a := make([]float64, m*n)
	for j := range n {
		for i := range m {
			a[j*m+i] = J.At(i, j)
		}
	}
	return a
}

// upperR returns the n x n column-major R of the column-scaled J (as covarianceRaw forms it).
func upperR(J *mat.Dense) []float64 {
	m, n := J.Dims()
	a := colMajor(J)
	for j := range n {
		col := a[j*m : (j+1)*m]
		d := norm2(col)
		for i := range col {
			col[i] /= d
		}
	}
	tau := make([]float64, n)
	houseQR(a, m, n, tau)
	r := make([]float64, n*n)
	for k := range n {
		for i := 0; i <= k; i++ {
			r[k*n+i] = a[k*m+i]
		}
	}
	return r
}

// gonumCovariance is (J^T J)^-1 from gonum's SVD of J with its columns scaled to unit
// norm (without the scaling the SVD of a Jacobian whose columns differ by 1e12 loses
// the small singular values to rounding), unscaled afterwards.
func gonumCovariance(t *testing.T, J *mat.Dense) *mat.Dense {
	m, n := J.Dims()
	d := make([]float64, n)
	js := mat.DenseCopyOf(J)
	for j := range n {
		d[j] = mat.Norm(js.ColView(j), 2)
		for i := range m {
			js.Set(i, j, js.At(i, j)/d[j])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(js, mat.SVDThin) {
		t.Fatal("gonum SVD failed")
	}
	var v mat.Dense
	svd.VTo(&v)
	s := svd.Values(nil)
	c := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			var x float64
			for k := range n {
				x += v.At(i, k) * v.At(j, k) / (s[k] * s[k])
			}
			c.Set(i, j, x/(d[i]*d[j]))
		}
	}
	return c
}
