package inverse

import "math"

// Dense kernels for the small problems of the fits: Householder QR on column-major
// storage and a one-sided Jacobi singular value decomposition. The fits factor tall,
// thin matrices (hundreds of rows, a handful of columns) many times per solve; general
// LAPACK code spends more time on call overhead and strided access than on arithmetic
// at these sizes, so the reflections are applied here directly to contiguous columns.
//
// The QR follows the LAPACK convention (Golub & Van Loan, Matrix Computations, 4th ed.,
// section 5.1): column j of the factored matrix holds R[0..j][j] on and above the
// diagonal and the essential part of the Householder vector v_j (v_j[j] = 1 implied)
// below it; H_j = I - tau_j v_j v_j^T and Q = H_0 H_1 ... H_{n-1}.
//
// The SVD is Hestenes' one-sided Jacobi method (Demmel & Veselic, SIAM J. Matrix Anal.
// Appl. 13(4):1204-1245, 1992): plane rotations orthogonalise the columns of A in
// place, A V = U S. It is used only on the small triangular factors of those QRs, where
// it computes even the small singular values to high relative accuracy.

// houseQR factors the m x n column-major matrix a (column j is a[j*m:(j+1)*m], m >= n)
// in place as described above, writing tau[0:n]. It panics if the slices are short.
func houseQR(a []float64, m, n int, tau []float64) {
	_ = a[m*n-1]
	_ = tau[n-1]
	if useAVX2 {
		houseQRAhead(a, m, n, tau)
		return
	}
	for j := range n {
		col := a[j*m+j : (j+1)*m]
		tau[j] = houseGen(col)
		if tau[j] == 0 {
			continue
		}
		k := j + 1
		for ; k+3 < n; k += 4 {
			houseApply4(col, tau[j], a[k*m+j:(k+1)*m], a[(k+1)*m+j:(k+2)*m], a[(k+2)*m+j:(k+3)*m], a[(k+3)*m+j:(k+4)*m])
		}
		for ; k+1 < n; k += 2 {
			houseApply2(col, tau[j], a[k*m+j:(k+1)*m], a[(k+1)*m+j:(k+2)*m])
		}
		if k < n {
			houseApply(col, tau[j], a[k*m+j:(k+1)*m])
		}
	}
}

// houseQRAhead is houseQR with each step's work reordered so that the columns are read
// once per reflector instead of twice, for the same results bit for bit. Step j first
// applies H_j to column j+1 alone, taking that column's squared norm below row j+1 in
// the same pass, and generates reflector j+1 from it; it then applies H_j to the
// columns beyond, forming in the same pass their inner products with reflector j+1,
// which step j+1 needs before it can update them (the first such pass also does
// houseGen's last one, the scaling of reflector j+1). Every column still sees the same
// operations on the same values in the same order (the columns are independent of one
// another within a step), only the passes over memory are fewer; the fused passes
// (axpyDot4 and its kin) sum each inner product as floats.Dot does. It pays where
// those passes are AVX2 loops; elsewhere houseQR keeps its plain order.
func houseQRAhead(a []float64, m, n int, tau []float64) {
	var dbuf [32]float64
	d := dbuf[:]
	if n > len(d) {
		d = make([]float64, n)
	}
	// have: d[k], k > j, hold reflector j's inner products with the columns k (from row
	// j+1), formed by step j-1.
	have := false
	tau[0] = houseGen(a[:m])
	for j := range n {
		v := a[j*m+j : (j+1)*m]
		t := tau[j]
		if t == 0 {
			if j+1 < n {
				tau[j+1] = houseGen(a[(j+1)*m+j+1 : (j+2)*m])
			}
			have = false
			continue
		}
		if !have {
			k := j + 1
			for ; k+3 < n; k += 4 {
				d[k], d[k+1], d[k+2], d[k+3] = dotQuad(v[1:], a[k*m+j+1:(k+1)*m], a[(k+1)*m+j+1:(k+2)*m], a[(k+2)*m+j+1:(k+3)*m], a[(k+3)*m+j+1:(k+4)*m])
			}
			for ; k+1 < n; k += 2 {
				d[k], d[k+1] = dotPair(v[1:], a[k*m+j+1:(k+1)*m], a[(k+1)*m+j+1:(k+2)*m])
			}
			if k < n {
				d[k] = houseDot(v[1:], a[k*m+j+1:(k+1)*m])
			}
		}
		if j+1 == n {
			break
		}
		// Column j+1, then reflector j+1 from it (the column below row j+1); the
		// reflector's scaling is done by the first pass that reads it.
		c := a[(j+1)*m+j : (j+2)*m]
		s := (c[0] + d[j+1]) * t
		c[0] -= s
		sq := axpySelfDot(v[1:], -s, c[1:])
		var ws float64
		tau[j+1], ws = houseGenUnscaled(c[1:], sq)
		w := c[2:] // reflector j+1 below its leading 1, still to be scaled by ws
		have = tau[j+1] != 0
		scaled := !have // whether w is done (an empty reflector is not scaled)
		k := j + 2
		for ; k+3 < n; k += 4 {
			c0, c1 := a[k*m+j:(k+1)*m], a[(k+1)*m+j:(k+2)*m]
			c2, c3 := a[(k+2)*m+j:(k+3)*m], a[(k+3)*m+j:(k+4)*m]
			s0 := (c0[0] + d[k]) * t
			s1 := (c1[0] + d[k+1]) * t
			s2 := (c2[0] + d[k+2]) * t
			s3 := (c3[0] + d[k+3]) * t
			c0[0] -= s0
			c1[0] -= s1
			c2[0] -= s2
			c3[0] -= s3
			if !scaled {
				d[k], d[k+1], d[k+2], d[k+3] = axpyDotScaled4(v[1:], w, ws, -s0, -s1, -s2, -s3, c0[1:], c1[1:], c2[1:], c3[1:])
				scaled = true
			} else if have {
				d[k], d[k+1], d[k+2], d[k+3] = axpyDot4(v[1:], w, -s0, -s1, -s2, -s3, c0[1:], c1[1:], c2[1:], c3[1:])
			} else {
				addScaled4(v[1:], -s0, -s1, -s2, -s3, c0[1:], c1[1:], c2[1:], c3[1:])
			}
		}
		for ; k+1 < n; k += 2 {
			c0, c1 := a[k*m+j:(k+1)*m], a[(k+1)*m+j:(k+2)*m]
			s0 := (c0[0] + d[k]) * t
			s1 := (c1[0] + d[k+1]) * t
			c0[0] -= s0
			c1[0] -= s1
			if !scaled {
				d[k], d[k+1] = axpyDotScaled2(v[1:], w, ws, -s0, -s1, c0[1:], c1[1:])
				scaled = true
			} else if have {
				d[k], d[k+1] = axpyDot2(v[1:], w, -s0, -s1, c0[1:], c1[1:])
			} else {
				addScaled2(v[1:], -s0, -s1, c0[1:], c1[1:])
			}
		}
		if k < n {
			c0 := a[k*m+j : (k+1)*m]
			s0 := (c0[0] + d[k]) * t
			c0[0] -= s0
			if !scaled {
				d[k] = axpyDotScaled(v[1:], w, ws, -s0, c0[1:])
				scaled = true
			} else if have {
				d[k] = axpyDot(v[1:], w, -s0, c0[1:])
			} else {
				addScaled(c0[1:], -s0, v[1:])
			}
		}
		if !scaled {
			scaleVec(ws, w) // no column beyond to carry it
		}
	}
}

// houseApply2 is houseApply on two columns at once, with the same results: the two
// inner products with v are formed in one pass (dotPair), and so are the two updates
// (addScaled2).
func houseApply2(v []float64, tau float64, c, d []float64) {
	c, d = c[:len(v)], d[:len(v)]
	var sc, sd float64
	if len(v) > 1 {
		sc, sd = dotPair(v[1:], c[1:], d[1:])
	}
	sc = (c[0] + sc) * tau
	sd = (d[0] + sd) * tau
	c[0] -= sc
	d[0] -= sd
	if len(v) > 1 {
		addScaled2(v[1:], -sc, -sd, c[1:], d[1:])
	}
}

// houseApply4 is houseApply on four columns at once, with the same results: the four
// inner products with v are formed in one pass (dotQuad), and so are the four updates
// (addScaled4).
func houseApply4(v []float64, tau float64, c0, c1, c2, c3 []float64) {
	n := len(v)
	c0, c1, c2, c3 = c0[:n], c1[:n], c2[:n], c3[:n]
	var s0, s1, s2, s3 float64
	if n > 1 {
		s0, s1, s2, s3 = dotQuad(v[1:], c0[1:], c1[1:], c2[1:], c3[1:])
	}
	s0 = (c0[0] + s0) * tau
	s1 = (c1[0] + s1) * tau
	s2 = (c2[0] + s2) * tau
	s3 = (c3[0] + s3) * tau
	c0[0] -= s0
	c1[0] -= s1
	c2[0] -= s2
	c3[0] -= s3
	if n > 1 {
		addScaled4(v[1:], -s0, -s1, -s2, -s3, c0[1:], c1[1:], c2[1:], c3[1:])
	}
}

// houseApplyQT overwrites the k columns of the m x k column-major matrix c with Q^T c,
// Q being the factor left in a and tau by houseQR(a, m, n, tau).
func houseApplyQT(a []float64, m, n int, tau []float64, c []float64, k int) {
	if useAVX2 {
		houseApplyQTAhead(a, m, n, tau, c, k)
		return
	}
	col := 0
	for ; col+3 < k; col += 4 {
		// Four columns at a time; each sees the reflectors in the same order as alone.
		c0, c1 := c[col*m:(col+1)*m], c[(col+1)*m:(col+2)*m]
		c2, c3 := c[(col+2)*m:(col+3)*m], c[(col+3)*m:(col+4)*m]
		for j := range n {
			if tau[j] != 0 {
				houseApply4(a[j*m+j:(j+1)*m], tau[j], c0[j:], c1[j:], c2[j:], c3[j:])
			}
		}
	}
	for ; col+1 < k; col += 2 {
		// Two columns at a time; each sees the reflectors in the same order as alone.
		cc, dd := c[col*m:(col+1)*m], c[(col+1)*m:(col+2)*m]
		for j := range n {
			if tau[j] != 0 {
				houseApply2(a[j*m+j:(j+1)*m], tau[j], cc[j:], dd[j:])
			}
		}
	}
	for ; col < k; col++ {
		cc := c[col*m : (col+1)*m]
		for j := range n {
			if tau[j] != 0 {
				houseApply(a[j*m+j:(j+1)*m], tau[j], cc[j:])
			}
		}
	}
}

// houseApplyQTAhead is houseApplyQT with one pass over the columns per reflector
// instead of two, for the same results bit for bit (as houseQRAhead): applying H_j
// forms in the same pass the columns' inner products with reflector j+1.
func houseApplyQTAhead(a []float64, m, n int, tau []float64, c []float64, k int) {
	// next returns reflector j+1 below its leading 1, or nil if there is none to apply.
	next := func(j int) []float64 {
		if j+1 < n && tau[j+1] != 0 {
			return a[(j+1)*m+j+2 : (j+2)*m]
		}
		return nil
	}
	col := 0
	for ; col+3 < k; col += 4 {
		c0, c1 := c[col*m:(col+1)*m], c[(col+1)*m:(col+2)*m]
		c2, c3 := c[(col+2)*m:(col+3)*m], c[(col+3)*m:(col+4)*m]
		var d0, d1, d2, d3 float64
		have := false // d0..d3 are reflector j's inner products with the columns
		for j := range n {
			t := tau[j]
			if t == 0 {
				have = false
				continue
			}
			v := a[j*m+j+1 : (j+1)*m]
			if !have {
				d0, d1, d2, d3 = dotQuad(v, c0[j+1:], c1[j+1:], c2[j+1:], c3[j+1:])
			}
			s0 := (c0[j] + d0) * t
			s1 := (c1[j] + d1) * t
			s2 := (c2[j] + d2) * t
			s3 := (c3[j] + d3) * t
			c0[j] -= s0
			c1[j] -= s1
			c2[j] -= s2
			c3[j] -= s3
			if w := next(j); w != nil {
				d0, d1, d2, d3 = axpyDot4(v, w, -s0, -s1, -s2, -s3, c0[j+1:], c1[j+1:], c2[j+1:], c3[j+1:])
				have = true
			} else {
				addScaled4(v, -s0, -s1, -s2, -s3, c0[j+1:], c1[j+1:], c2[j+1:], c3[j+1:])
				have = false
			}
		}
	}
	for ; col+1 < k; col += 2 {
		c0, c1 := c[col*m:(col+1)*m], c[(col+1)*m:(col+2)*m]
		var d0, d1 float64
		have := false
		for j := range n {
			t := tau[j]
			if t == 0 {
				have = false
				continue
			}
			v := a[j*m+j+1 : (j+1)*m]
			if !have {
				d0, d1 = dotPair(v, c0[j+1:], c1[j+1:])
			}
			s0 := (c0[j] + d0) * t
			s1 := (c1[j] + d1) * t
			c0[j] -= s0
			c1[j] -= s1
			if w := next(j); w != nil {
				d0, d1 = axpyDot2(v, w, -s0, -s1, c0[j+1:], c1[j+1:])
				have = true
			} else {
				addScaled2(v, -s0, -s1, c0[j+1:], c1[j+1:])
				have = false
			}
		}
	}
	for ; col < k; col++ {
		c0 := c[col*m : (col+1)*m]
		var d0 float64
		have := false
		for j := range n {
			t := tau[j]
			if t == 0 {
				have = false
				continue
			}
			v := a[j*m+j+1 : (j+1)*m]
			if !have {
				d0 = houseDot(v, c0[j+1:])
			}
			s0 := (c0[j] + d0) * t
			c0[j] -= s0
			if w := next(j); w != nil {
				d0 = axpyDot(v, w, -s0, c0[j+1:])
				have = true
			} else {
				addScaled(c0[j+1:], -s0, v)
				have = false
			}
		}
	}
}

// houseGen generates the reflector that maps x onto beta e_0 (LAPACK dlarfg): on return
// x[0] = beta, x[1:] holds the essential part of v, and the result is tau (0 when x[1:]
// is already zero).
func houseGen(x []float64) float64 {
	return houseGenSq(x, houseDot(x[1:], x[1:]))
}

// houseGenSq is houseGen given sq = floats.Dot(x[1:], x[1:]), the sum norm2 begins
// with.
func houseGenSq(x []float64, sq float64) float64 {
	tau, s := houseGenUnscaled(x, sq)
	if tau != 0 {
		scaleVec(s, x[1:])
	}
	return tau
}

// houseGenUnscaled is houseGenSq but for its last pass, the scaling of x[1:] by s,
// which it leaves to the caller when tau is not 0 (it is then 1 to 2, or NaN).
func houseGenUnscaled(x []float64, sq float64) (tau, s float64) {
	xn := norm2Sq(x[1:], sq)
	if xn == 0 {
		return 0, 0
	}
	alpha := x[0]
	beta := -math.Copysign(math.Hypot(alpha, xn), alpha)
	tau = (beta - alpha) / beta
	s = 1 / (alpha - beta) // |alpha - beta| = |alpha| + |beta|: no cancellation
	x[0] = beta
	return tau, s
}

// houseApply applies H = I - tau v v^T to c, with v[0] = 1 implied (v[0] is not read)
// and len(c) == len(v).
func houseApply(v []float64, tau float64, c []float64) {
	c = c[:len(v)]
	s := c[0] + dotFrom1(v, c)
	s *= tau
	c[0] -= s
	if len(v) > 1 {
		addScaled(c[1:], -s, v[1:])
	}
}

// dotFrom1 returns sum_{i>=1} a[i] b[i]; len(b) >= len(a).
func dotFrom1(a, b []float64) float64 {
	if len(a) < 2 {
		return 0
	}
	return houseDot(a[1:], b[1:len(a)])
}

// The vector kernels (dot products, axpy, scaling) are gonum's floats package, whose
// assembly loops are two to four times faster than plain Go loops at these lengths
// (hundreds to thousands of elements), or on amd64 with AVX2 loops that give the same
// results bit for bit (housekern_amd64.go).

// norm2 returns the Euclidean norm of x without undue overflow or underflow.
func norm2(x []float64) float64 {
	return norm2Sq(x, houseDot(x, x))
}

// norm2Sq is norm2 given s = floats.Dot(x, x).
func norm2Sq(x []float64, s float64) float64 {
	if s > 1e-280 && s < 1e280 {
		return math.Sqrt(s)
	}
	if s == 0 {
		var big float64
		for _, v := range x {
			big = math.Max(big, math.Abs(v))
		}
		if big == 0 {
			return 0
		}
	}
	// Rescaled accumulation (LAPACK dnrm2 style) for extreme magnitudes.
	scale, ssq := 0.0, 1.0
	for _, v := range x {
		if v == 0 {
			continue
		}
		a := math.Abs(v)
		if scale < a {
			ssq = 1 + ssq*(scale/a)*(scale/a)
			scale = a
		} else {
			ssq += (a / scale) * (a / scale)
		}
	}
	return scale * math.Sqrt(ssq)
}

// jacobiTol is the relative column non-orthogonality below which the Jacobi sweeps stop.
const jacobiTol = 1e-15

// jacobiSVD computes the singular value decomposition A = U S V^T of the n x n
// column-major matrix a. On return s[0:n] holds the singular values in decreasing order,
// a holds U (a column whose singular value is zero is left zero) and v (n x n,
// column-major) holds V. It reports false if the sweeps did not converge.
func jacobiSVD(a []float64, n int, s, v []float64) bool {
	_ = a[n*n-1]
	_ = v[n*n-1]
	_ = s[n-1]
	for i := range v[:n*n] {
		v[i] = 0
	}
	for i := range n {
		v[i*n+i] = 1
	}
	converged := false
	for sweep := 0; sweep < 80 && !converged; sweep++ {
		converged = true
		for p := 0; p < n-1; p++ {
			ap := a[p*n : (p+1)*n]
			for q := p + 1; q < n; q++ {
				alpha, beta, gamma := colProducts(ap, a[q*n:(q+1)*n])
				aq := a[q*n : (q+1)*n]
				if gamma == 0 {
					continue
				}
				// |gamma| <= tol sqrt(alpha beta), squared to save the square roots
				// while the product is finite.
				if ab := alpha * beta; ab <= math.MaxFloat64 {
					if gamma*gamma <= jacobiTol*jacobiTol*ab {
						continue
					}
				} else if math.Abs(gamma) <= jacobiTol*math.Sqrt(alpha)*math.Sqrt(beta) {
					continue
				}
				converged = false
				// Rotation that makes columns p and q orthogonal: t is the smaller root
				// of t^2 + 2 zeta t - 1 = 0. |t| <= 1, so 1 + t^2 cannot overflow;
				// 1 + zeta^2 can only for |zeta| beyond 1e154, where Hypot takes over.
				zeta := (beta - alpha) / (2 * gamma)
				az := math.Abs(zeta)
				var root float64
				if az < 1e150 {
					root = math.Sqrt(1 + zeta*zeta)
				} else {
					root = math.Hypot(1, zeta)
				}
				t := math.Copysign(1, zeta) / (az + root)
				c := 1 / math.Sqrt(1+t*t)
				sn := c * t
				rotate(ap, aq, c, sn)
				rotate(v[p*n:(p+1)*n], v[q*n:(q+1)*n], c, sn)
			}
		}
	}
	for k := range n {
		s[k] = norm2(a[k*n : (k+1)*n])
	}
	// Sort decreasing (selection sort: n is small), moving the columns of U and V.
	for i := range n {
		big := i
		for k := i + 1; k < n; k++ {
			if s[k] > s[big] {
				big = k
			}
		}
		if big != i {
			s[i], s[big] = s[big], s[i]
			swapCols(a, n, i, big)
			swapCols(v, n, i, big)
		}
		if s[i] > 0 {
			inv := 1 / s[i]
			for k := range n {
				a[i*n+k] *= inv
			}
		}
	}
	return converged
}

// colProducts returns x.x, y.y and x.y, each summed in index order; len(y) >= len(x).
func colProducts(x, y []float64) (xx, yy, xy float64) {
	y = y[:len(x)]
	for i, a := range x {
		b := y[i]
		xx += a * a
		yy += b * b
		xy += a * b
	}
	return xx, yy, xy
}

func rotate(x, y []float64, c, s float64) {
	y = y[:len(x)]
	for i, a := range x {
		b := y[i]
		x[i] = c*a - s*b
		y[i] = s*a + c*b
	}
}

func swapCols(a []float64, n, i, j int) {
	ci, cj := a[i*n:(i+1)*n], a[j*n:(j+1)*n]
	for k := range n {
		ci[k], cj[k] = cj[k], ci[k]
	}
}
