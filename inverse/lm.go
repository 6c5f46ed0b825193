package inverse

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// lmProblem is a nonlinear least-squares problem min ||r(x)||^2 for the
// Levenberg-Marquardt engine, with optional simple bounds.
type lmProblem struct {
	m, n int
	// resid writes r(x) (length m). An error rejects the point (the engine shrinks its
	// step); at the starting point it aborts the fit.
	resid func(x, r []float64) error
	// jac writes the m x n Jacobian dr/dx at x; r is r(x) as last computed there.
	jac func(x, r []float64, j *mat.Dense) error
	// jacCols, when set, is used instead of jac: it writes the Jacobian column-major
	// (column k is jc[k*m:(k+1)*m]). lmResult.j is then nil.
	jacCols func(x, r, jc []float64) error
	// jacView, when set, is tried first: it returns the Jacobian where the problem
	// keeps it, sparing the copy into the engine's workspace. Column k is
	// v[k*stride:k*stride+m], negated when neg; v is read until the next call. A nil v
	// (and no error) hands the call on to jacCols.
	jacView func(x, r []float64) (v []float64, stride int, neg bool, err error)
	// work, when not nil, is a workspace reused from call to call (grown as needed).
	work *[]float64
	// lower and upper bound x elementwise when non-nil (use +-Inf for free components).
	lower, upper []float64
}

type lmSettings struct {
	maxIter          int
	ftol, xtol, gtol float64
	factor           float64 // initial trust radius relative to ||D x0|| (default 1)
	// chi2Tol, when positive, also ends the fit when a step's actual and predicted
	// reductions of the sum of squares are both below chi2Tol times the noise variance
	// (noiseVar, or RSS/(m - n) when that is zero): a change of chi-square this small
	// leaves the parameters within about sqrt(2 chi2Tol) standard errors of the minimum.
	chi2Tol, noiseVar float64
}

func (s lmSettings) withDefaults() lmSettings {
	if s.maxIter <= 0 {
		s.maxIter = 200
	}
	if s.ftol <= 0 {
		// Tight: ill-conditioned problems (NIST MGH09) need it for 6 digits. Rounding noise
		// in the actual reduction is allowed for separately (fnoise).
		s.ftol = 1e-14
	}
	if s.xtol <= 0 {
		s.xtol = 1e-12
	}
	if s.factor <= 0 {
		// A cautious first trust region (MINPACK's default is 100): on NIST MGH09 from its
		// first certified start, 100 lets the first steps leap into the b2 -> -inf valley.
		s.factor = 1
	}
	if s.gtol <= 0 {
		s.gtol = 1e-14
	}
	return s
}

type lmResult struct {
	x []float64
	// r is the residual at x; with lmProblem.work it lies in that workspace and is
	// valid only until the next use of it.
	r      []float64
	rss    float64
	j      *mat.Dense // Jacobian at x
	iter   int
	nfev   int
	status Status
}

// fnoise is the relative rounding noise allowed in the actual reduction of a sum of squares.
const fnoise = 1e-12

var errLMStart = errors.New("inverse: the model cannot be evaluated at the starting point")

// errTooFewReadings is returned for a fit with more parameters than readings.
var errTooFewReadings = errors.New("inverse: too few readings for the number of parameters")

// levmar minimises ||r(x)||^2 by Levenberg-Marquardt with scaled trust-region steps
// (J. J. More, Numerical Analysis, Springer LNM 630, 105-116, 1978). Each iteration factors the
// column-scaled Jacobian by Householder QR (never forming J^T J); the trust-region
// subproblem is then solved exactly on the small triangular factor through its singular
// value decomposition, which also gives the minimum-norm step when J is rank deficient.
// Bounds are handled by fixing components that sit on a bound with the gradient pushing
// outwards, and projecting the trial point onto the box.
func levmar(p *lmProblem, x0 []float64, set lmSettings) (*lmResult, error) {
	set = set.withDefaults()
	m, n := p.m, p.n
	if m < n {
		// The Householder factorisation of the Jacobian needs a row per parameter;
		// the automatic count reaches this on a very short traverse.
		return nil, fmt.Errorf("%w: %d residuals for %d parameters", errTooFewReadings, m, n)
	}
	x := make([]float64, n)
	copy(x, x0)
	project(x, p.lower, p.upper)
	// One allocation (or the caller's workspace) for the residual, the Jacobian and
	// every work vector of the iterations; each is written before it is read.
	need := m + m*n + 8*n + 2*m + m*(n+1) + (n + 1) + 3*n*n
	var buf []float64
	if p.work != nil && cap(*p.work) >= need {
		buf = (*p.work)[:need]
	} else {
		buf = make([]float64, need)
		if p.work != nil {
			*p.work = buf
		}
	}
	take := func(k int) []float64 { s := buf[:k:k]; buf = buf[k:]; return s }
	r := take(m)
	if err := p.resid(x, r); err != nil {
		return nil, errors.Join(errLMStart, err)
	}
	rss := sumSq(r)
	if !finite(rss) {
		return nil, errLMStart
	}
	res := &lmResult{nfev: 1}
	var J *mat.Dense
	if p.jacCols == nil {
		J = mat.NewDense(m, n, nil)
	}
	jc := take(m * n) // the Jacobian, column-major
	// The Jacobian as read: column j is jv[j*js:j*js+m], negated when jneg (jc
	// itself, or the problem's own storage through jacView).
	jv, js, jneg := jc, m, false
	evalJac := func() error {
		jv, js, jneg = jc, m, false
		if p.jacView != nil && !lmNoJacView {
			v, stride, neg, err := p.jacView(x, r)
			if err != nil {
				return err
			}
			if v != nil {
				jv, js, jneg = v, stride, neg
				return nil
			}
		}
		if p.jacCols != nil {
			return p.jacCols(x, r, jc)
		}
		if err := p.jac(x, r, J); err != nil {
			return err
		}
		raw := J.RawMatrix()
		for i := range m {
			for j, v := range raw.Data[i*raw.Stride : i*raw.Stride+n] {
				jc[j*m+i] = v
			}
		}
		return nil
	}
	diag, xt, step, cn2, grad := take(n), take(n), take(n), take(n), take(n)
	qtrBuf, betaBuf, gnBuf := take(n), take(n), take(n)
	rt, jp := take(m), take(m)
	aug, tau := take(m*(n+1)), take(n+1)
	rBuf, vBuf, svBuf := take(n*n), take(n*n), take(n * n)[:n]
	free := make([]int, 0, n)
	var delta float64
	status := MaxIterations
	jacFresh := false

	for iter := 0; iter < set.maxIter; iter++ {
		res.iter = iter + 1
		if rss == 0 {
			status = ConvergedExact
			break
		}
		if !jacFresh {
			if err := evalJac(); err != nil {
				return nil, err
			}
			jacFresh = true
		}
		// Column norms, scaling, gradient g = J^T r.
		free = free[:0]
		gmax := 0.0
		rn := math.Sqrt(rss)
		for j := range n {
			col := jv[j*js : j*js+m]
			cn2[j], grad[j] = dotPair(col, col, r)
			if jneg {
				// The sum of the negated products is the negated sum, exactly.
				grad[j] = -grad[j]
			}
		}
		for j := range n {
			cn, g := math.Sqrt(cn2[j]), grad[j]
			if iter == 0 {
				diag[j] = cn
				if diag[j] == 0 {
					diag[j] = 1
				}
			} else if cn > diag[j] {
				diag[j] = cn
			}
			atLower := p.lower != nil && x[j] <= p.lower[j] && g > 0
			atUpper := p.upper != nil && x[j] >= p.upper[j] && g < 0
			if atLower || atUpper {
				continue
			}
			free = append(free, j)
			if cn > 0 {
				gmax = math.Max(gmax, math.Abs(g)/(cn*rn))
			}
		}
		if gmax <= set.gtol || len(free) == 0 {
			status = ConvergedGradient
			break
		}
		if iter == 0 {
			var dx float64
			for j := range n {
				dx += (diag[j] * x[j]) * (diag[j] * x[j])
			}
			delta = set.factor * math.Sqrt(dx)
			if delta == 0 {
				delta = set.factor
			}
		}
		// Householder QR of the column-major m x (nf+1) matrix [J_free D^-1 | r].
		nf := len(free)
		a := aug[:m*(nf+1)]
		for k, j := range free {
			col, dj := a[k*m:(k+1)*m], 1/diag[j]
			if jneg {
				// (-dj) v is dj (-v), bit for bit.
				dj = -dj
			}
			floats.ScaleTo(col, dj, jv[j*js:j*js+m])
		}
		copy(a[nf*m:], r)
		// Only R and the first nf components of Q^T r are read: the reflectors of the
		// nf columns are applied to r (in the order houseQR would) and r's own
		// reflector is not formed.
		houseQR(a, m, nf, tau)
		houseApplyQT(a, m, nf, tau, a[nf*m:], 1)
		// R (nf x nf, column-major) and the first nf components of Q^T r.
		R := rBuf[:nf*nf]
		qtr := qtrBuf[:nf]
		for k := range nf {
			for i := range nf {
				if i <= k {
					R[k*nf+i] = a[k*m+i]
				} else {
					R[k*nf+i] = 0
				}
			}
			qtr[k] = a[nf*m+k]
		}
		// The Gauss-Newton step (lambda = 0) by back substitution when R is well
		// conditioned (gaussNewton); the SVD of R only when a step needs it: when the
		// Gauss-Newton step is longer than the trust region, or R is near rank loss.
		V, sv, beta, yGN := vBuf[:nf*nf], svBuf[:nf], betaBuf[:nf], gnBuf[:nf]
		gnOK := !lmNoShortcut && gaussNewton(R, nf, qtr, yGN, V, float64(max(m, n)))
		var gnNorm float64
		if gnOK {
			for _, v := range yGN {
				gnNorm += v * v
			}
			gnNorm = math.Sqrt(gnNorm)
		}
		haveSVD := false
		var tiny float64
		svd := func() bool {
			// SVD of R: R = U S V^T (R is overwritten with U).
			if !jacobiSVD(R, nf, sv, V) {
				return false
			}
			for k := range nf {
				var s float64
				for i := range nf {
					s += R[k*nf+i] * qtr[i]
				}
				beta[k] = s
			}
			tiny = sv[0] * float64(max(m, n)) * 1e-15
			haveSVD = true
			return true
		}
		if !gnOK && !svd() {
			status = NumericalFailure
			break
		}
		ynorm := func(lambda float64) float64 {
			var s float64
			for k, sk := range sv {
				if sk <= tiny {
					continue
				}
				v := sk * beta[k] / (sk*sk + lambda)
				s += v * v
			}
			return math.Sqrt(s)
		}

		accepted := false
		for !accepted {
			lambda := 0.0
			useGN := gnOK && gnNorm <= delta*1.1
			if !useGN {
				if !haveSVD && !svd() {
					status = NumericalFailure
					goto done
				}
				if y0 := ynorm(0); y0 > delta*1.1 {
					lambda = solveLambda(sv, beta, tiny, delta, ynorm)
				}
			}
			// y = -V diag(s/(s^2+lambda)) beta, step = D^-1 y on the free components.
			for j := range step {
				step[j] = 0
			}
			if useGN {
				for i, j := range free {
					step[j] = -yGN[i]
				}
			} else {
				for k, sk := range sv {
					if sk <= tiny {
						continue
					}
					c := -sk * beta[k] / (sk*sk + lambda)
					vk := V[k*nf : (k+1)*nf]
					for i, j := range free {
						step[j] += vk[i] * c
					}
				}
			}
			var dpn float64
			for _, j := range free {
				dpn += step[j] * step[j]
				step[j] /= diag[j]
			}
			dpn = math.Sqrt(dpn)
			for j := range n {
				xt[j] = x[j] + step[j]
			}
			project(xt, p.lower, p.upper)
			// Predicted reduction with the projected step.
			var dxn float64
			for j := range n {
				step[j] = xt[j] - x[j]
				dxn += (diag[j] * step[j]) * (diag[j] * step[j])
			}
			dxn = math.Sqrt(dxn)
			copy(jp, r)
			for j, sj := range step {
				if sj == 0 {
					continue
				}
				if jneg {
					sj = -sj // (-sj) v is sj (-v), bit for bit
				}
				floats.AddScaled(jp, sj, jv[j*js:j*js+m])
			}
			pred := rss - sumSq(jp)
			var rssT float64
			ok := p.resid(xt, rt) == nil
			res.nfev++
			if ok {
				rssT = sumSq(rt)
				ok = finite(rssT)
			}
			rho := -1.0
			if ok && pred > 0 {
				rho = (rss - rssT) / pred
			}
			// Trust-region update (More 1978, section 7, simplified).
			if rho < 0.25 {
				delta = 0.5 * math.Min(delta, math.Max(dxn, 1e-300))
			} else if rho > 0.75 || lambda == 0 {
				delta = math.Max(delta, 2*dxn)
			}
			var xn float64
			for j := range n {
				xn += (diag[j] * x[j]) * (diag[j] * x[j])
			}
			xn = math.Sqrt(xn)
			actRel, predRel := math.Inf(1), pred/rss
			if ok {
				actRel = (rss - rssT) / rss
			}
			// MINPACK's relative-reduction test, applied whether or not the step is taken.
			// The actual reduction is compared against rounding noise when that is larger.
			fconv := math.Abs(actRel) <= math.Max(set.ftol, fnoise) && predRel <= set.ftol && rho <= 2
			if set.chi2Tol > 0 && ok && !fconv && m > n {
				s2 := set.noiseVar
				if s2 <= 0 {
					s2 = rss / float64(m-n)
				}
				tol := set.chi2Tol * s2
				fconv = math.Abs(rss-rssT) <= tol && pred <= tol && rho <= 2
			}
			if rho > 1e-4 {
				accepted = true
				copy(x, xt)
				copy(r, rt)
				rss = rssT
				jacFresh = false
				if fconv {
					status = ConvergedResidual
					goto done
				}
				if dxn <= set.xtol*(xn+set.xtol) {
					status = ConvergedStep
					goto done
				}
			} else {
				if fconv {
					status = ConvergedResidual
					goto done
				}
				if ok && pred <= 0 || dpn == 0 {
					// No descent is possible from here in floating point.
					status = Stalled
					goto done
				}
				if delta <= set.xtol*(xn+set.xtol) {
					status = ConvergedStep
					goto done
				}
			}
		}
	}
done:
	if !jacFresh && p.jacCols == nil {
		// lmResult.j is the Jacobian at the solution (not returned with jacCols).
		if err := evalJac(); err != nil {
			return nil, err
		}
	}
	res.x, res.r, res.rss, res.j, res.status = x, r, rss, J, status
	return res, nil
}

// lmNoJacView makes levmar copy the Jacobian through jacCols even where the problem
// offers jacView, as it did before the view (for tests that compare the two).
var lmNoJacView bool

// lmNoShortcut makes levmar take every step through the SVD of R, as it did before
// the Gauss-Newton shortcut (for tests that compare the two).
var lmNoShortcut bool

// gaussNewton writes to y the solution of R y = qtr for the n x n upper triangular
// column-major R, and reports true when R is so well conditioned that the SVD of R
// would count none of its singular values negligible (levmar's tiny: below mn 1e-15
// times the largest, mn the larger dimension of the Jacobian), with four orders of
// magnitude to spare. y is then the step the SVD gives for lambda = 0, -V S^-1 U^T qtr
// = -R^-1 qtr up to its sign, found by back substitution in n^2 flops instead of the
// Jacobi sweeps' several n^3. The test bounds the 2-norm condition number from above by
// ||R||_F ||R^-1||_F (R^-1, n^3/6 flops, is written to inv, n x n column-major upper
// triangle); it reports false for a zero or non-finite diagonal too.
func gaussNewton(R []float64, n int, qtr, y, inv []float64, mn float64) bool {
	rn, in := triInverse(R, n, inv)
	// kappa mn 1e-15 < 1e-4, squared; false for NaN and Inf too.
	if !(rn*in*mn*mn < 1e22) {
		return false
	}
	for i := n - 1; i >= 0; i-- {
		s := qtr[i]
		for j := i + 1; j < n; j++ {
			s -= R[j*n+i] * y[j]
		}
		y[i] = s / R[i*n+i]
	}
	return true
}

// solveLambda finds lambda > 0 with ||y(lambda)|| = delta (to 1%) for the scaled LM step
// y(lambda) = -V diag(s/(s^2+lambda)) beta, by safeguarded Newton iteration on
// 1/||y|| - 1/delta, which is nearly linear in lambda (More 1978, section 5).
func solveLambda(sv, beta []float64, tiny, delta float64, ynorm func(float64) float64) float64 {
	var up float64
	for k, sk := range sv {
		up += (sk * beta[k]) * (sk * beta[k])
	}
	hi := math.Sqrt(up) / delta
	lo := 0.0
	lambda := hi * 1e-3
	for range 60 {
		var s, ds float64
		for k, sk := range sv {
			if sk <= tiny {
				continue
			}
			den := sk*sk + lambda
			v := sk * beta[k] / den
			s += v * v
			ds += -2 * v * v / den
		}
		yn := math.Sqrt(s)
		phi := yn - delta
		if math.Abs(phi) <= 0.01*delta {
			return lambda
		}
		if phi > 0 {
			lo = lambda
		} else {
			hi = lambda
		}
		// d||y||/dlambda = ds/(2||y||); Newton on 1/||y||.
		dyn := ds / (2 * yn)
		next := lambda - (yn/delta)*phi/dyn
		if !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
			if lo == 0 {
				next = math.Sqrt(math.Max(lo, 1e-300*hi) * hi)
				if next <= lo || next >= hi {
					next = 0.5 * hi
				}
			}
		}
		lambda = next
	}
	return lambda
}

func project(x, lower, upper []float64) {
	for j := range x {
		if lower != nil && x[j] < lower[j] {
			x[j] = lower[j]
		}
		if upper != nil && x[j] > upper[j] {
			x[j] = upper[j]
		}
	}
}

func sumSq(v []float64) float64 {
	return floats.Dot(v, v)
}

// finite reports whether x is neither infinite nor NaN (x - x is NaN exactly then).
func finite(x float64) bool { return x-x == 0 }
