package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The QR and SVD kernels are checked against gonum's general-purpose implementations
// (mat.QR, mat.SVD), the reference library the package otherwise relies on.

// kernelTol: both sides are backward stable; on these well-scaled matrices (condition
// numbers up to about 1e8) agreement to 1e-9 relative leaves a wide margin.
const kernelTol = 1e-9

// testMatrix returns an m x n matrix with singular values spread over `decades`
// decades, row-major for gonum and column-major for the kernels.
func testMatrix(rng *rand.Rand, m, n int, decades float64) (*mat.Dense, []float64) {
	a := mat.NewDense(m, n, nil)
	for i := range m {
		for j := range n {
			a.Set(i, j, rng.NormFloat64()*math.Pow(10, -decades*float64(j)/float64(max(n-1, 1))))
		}
	}
	cm := make([]float64, m*n)
	for i := range m {
		for j := range n {
			cm[j*m+i] = a.At(i, j)
		}
	}
	return a, cm
}

func TestHouseQRAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, tc := range []struct {
		name    string
		m, n    int
		decades float64
	}{
		{"tall 123x4", 123, 4, 0},
		{"tall 1215x6 graded", 1215, 6, 4},
		{"square 5x5 graded", 5, 5, 8},
		{"one column", 40, 1, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			A, a := testMatrix(rng, tc.m, tc.n, tc.decades)
			b := make([]float64, tc.m)
			for i := range b {
				b[i] = rng.NormFloat64()
			}
			tau := make([]float64, tc.n)
			houseQR(a, tc.m, tc.n, tau)
			qtb := append([]float64(nil), b...)
			houseApplyQT(a, tc.m, tc.n, tau, qtb, 1)

			var qr mat.QR
			qr.Factorize(A)
			var R, Q mat.Dense
			qr.RTo(&R)
			qr.QTo(&Q)
			var ref mat.VecDense
			ref.MulVec(Q.T(), mat.NewVecDense(tc.m, b))
			// R is unique up to the sign of each row; Q^T b follows the same signs.
			for i := range tc.n {
				s := math.Copysign(1, a[i*tc.m+i]) * math.Copysign(1, R.At(i, i))
				scaleRow := math.Abs(R.At(i, i))
				for j := i; j < tc.n; j++ {
					if d := math.Abs(s*a[j*tc.m+i] - R.At(i, j)); d > kernelTol*math.Max(scaleRow, math.Abs(R.At(i, j))) {
						t.Errorf("R[%d][%d] = %g, gonum %g", i, j, s*a[j*tc.m+i], R.At(i, j))
					}
				}
				if d := math.Abs(s*qtb[i] - ref.AtVec(i)); d > kernelTol*norm2(b) {
					t.Errorf("(Q^T b)[%d] = %g, gonum %g", i, s*qtb[i], ref.AtVec(i))
				}
			}
			// The rest of Q^T b is the residual of the least-squares problem: its norm
			// must match gonum's.
			var rest float64
			for i := tc.n; i < tc.m; i++ {
				rest += ref.AtVec(i) * ref.AtVec(i)
			}
			if got, want := norm2(qtb[tc.n:]), math.Sqrt(rest); math.Abs(got-want) > kernelTol*norm2(b) {
				t.Errorf("residual norm %g, gonum %g", got, want)
			}
		})
	}
}

func TestJacobiSVDAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, tc := range []struct {
		name    string
		n       int
		decades float64
	}{
		{"2x2", 2, 0},
		{"6x6 graded", 6, 6},
		{"12x12", 12, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			A, a := testMatrix(rng, tc.n, tc.n, tc.decades)
			s := make([]float64, tc.n)
			v := make([]float64, tc.n*tc.n)
			if !jacobiSVD(a, tc.n, s, v) {
				t.Fatal("sweeps did not converge")
			}
			var svd mat.SVD
			if !svd.Factorize(A, mat.SVDThin) {
				t.Fatal("gonum SVD failed")
			}
			ref := svd.Values(nil)
			for k := range tc.n {
				if math.Abs(s[k]-ref[k]) > kernelTol*ref[0] {
					t.Errorf("singular value %d = %g, gonum %g", k, s[k], ref[k])
				}
			}
			// U S V^T reproduces A, and V is orthogonal.
			for i := range tc.n {
				for j := range tc.n {
					var usv, vtv float64
					for k := range tc.n {
						usv += a[k*tc.n+i] * s[k] * v[k*tc.n+j]
						vtv += v[i*tc.n+k] * v[j*tc.n+k]
					}
					if math.Abs(usv-A.At(i, j)) > kernelTol*ref[0] {
						t.Errorf("(U S V^T)[%d][%d] = %g, want %g", i, j, usv, A.At(i, j))
					}
					if want := map[bool]float64{true: 1, false: 0}[i == j]; math.Abs(vtv-want) > kernelTol {
						t.Errorf("(V^T V)[%d][%d] = %g", i, j, vtv)
					}
				}
			}
		})
	}
}

func TestNorm2ExtremeMagnitudes(t *testing.T) {
	// Reference: math.Hypot, exact to rounding without overflow or underflow.
	for _, x := range [][]float64{{3e200, 4e200}, {3e-200, 4e-200}, {0, 0}, {-5, 12}} {
		if got, want := norm2(x), math.Hypot(x[0], x[1]); math.Abs(got-want) > 1e-15*want {
			t.Errorf("norm2(%v) = %g, want %g", x, got, want)
		}
	}
}

// BenchmarkJacobiSVD times the SVD of the triangular factors the fits decompose: the
// LM step's (4 and 8 free parameters) and the covariance's (6 and 13 columns).
func BenchmarkJacobiSVD(b *testing.B) {
	for _, n := range []int{4, 6, 8, 13} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(5, uint64(n)))
			_, a := testMatrix(rng, 3*n, n, 3)
			tau := make([]float64, n)
			houseQR(a, 3*n, n, tau)
			r := make([]float64, n*n)
			for k := range n {
				copy(r[k*n:k*n+k+1], a[k*3*n:k*3*n+k+1])
			}
			w := make([]float64, n*n)
			v := make([]float64, n*n)
			s := make([]float64, n)
			for b.Loop() {
				copy(w, r)
				jacobiSVD(w, n, s, v)
			}
		})
	}
}

// BenchmarkHouseQR times the QR of the LM step's matrix [J D^-1 | r] for one line
// over nine traverses (1215 x 5) and two lines over ten (1500 x 9).
func BenchmarkHouseQR(b *testing.B) {
	for _, sz := range [][2]int{{1215, 5}, {1500, 9}} {
		m, n := sz[0], sz[1]
		b.Run(fmt.Sprintf("%dx%d", m, n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(7, uint64(n)))
			_, a := testMatrix(rng, m, n, 2)
			w := make([]float64, m*n)
			tau := make([]float64, n)
			for b.Loop() {
				copy(w, a)
				houseQR(w, m, n, tau)
			}
		})
	}
}
