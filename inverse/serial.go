package inverse

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Noise correlated from reading to reading along a traverse (a fluxgate's
// slow drift, a hand-held sensor's tilt wander, a passing vehicle, mains
// hum aliased into a slow DC log) carries less information than as many
// independent readings: a fit's covariance taken under independence is
// then too small, and its chi-square does not show it (the marginal noise
// is what the fit expects). A DC line fit therefore measures the lag-1
// autocorrelation of its residuals along the readings (ResidualAR1, in
// the order of the Problem's points, which is the order they were taken
// along the traverse; within each traverse, traverseStarts) and, when it is
// significant, takes its covariance from a sandwich on the full Jacobian
// with the residuals' correlation (serialSandwich), each parameter widened
// by how its own signature weighs that correlation. The count's choice
// (serialCount) still counts the readings with the AR(1) variance factor
// AR1Factor.

// AR1Factor is the factor by which residuals with lag-1 autocorrelation rho
// inflate the variance of a fitted parameter against white residuals of the
// same variance, (1 + rho) / (1 - rho): the effective number of readings of
// an AR(1) series is n (1 - rho) / (1 + rho) (Bartlett 1946; e.g. Box,
// Jenkins & Reinsel, Time Series Analysis, on the variance of the mean of
// an autocorrelated series; from memory). 1 for rho <= 0, and at most 100
// (rho near 1: the residuals are one slow swell and the factor would say
// nothing more).
func AR1Factor(rho float64) float64 {
	if !(rho > 0) {
		return 1
	}
	return math.Min((1+rho)/(1-rho), 100)
}

// AR1MaxRho is the largest lag-1 autocorrelation AR1Factor takes:
// (1 + rho)/(1 - rho) = 100.
const AR1MaxRho = 99.0 / 101

// ResidualAR1 returns the lag-1 autocorrelation of r's residuals in reading
// order (the order of the traverse), pooled over the axes and, for AC, the
// in-phase and quadrature parts; 0 when there are too few (or r is nil).
func ResidualAR1(r *Result) float64 {
	if r == nil {
		return 0
	}
	if r.ResidualPhasors != nil {
		n := len(r.ResidualPhasors)
		flat := make([]float64, 6*n)
		for i, e := range r.ResidualPhasors {
			for a := range 3 {
				flat[6*i+2*a], flat[6*i+2*a+1] = real(e[a]), imag(e[a])
			}
		}
		rho, _ := lag1(flat, 6)
		return rho
	}
	flat := make([]float64, 3*len(r.Residuals))
	for i, e := range r.Residuals {
		copy(flat[3*i:3*i+3], e[:])
	}
	rho, _ := lag1(flat, 3)
	return rho
}

// lag1 returns the lag-1 autocorrelation of the series interleaved in res
// (stride of them, reading i of series s at res[i*stride+s]), pooled over
// the series (sum of lagged products over the sum of squares; the residuals
// of a fit with a background have mean near zero), and the number of
// lagged pairs pooled.
func lag1(res []float64, stride int) (rho float64, pairs int) {
	var num, den float64
	for i, v := range res {
		den += v * v
		if i >= stride {
			num += v * res[i-stride]
			pairs++
		}
	}
	if !(den > 0) {
		return 0, pairs
	}
	return num / den, pairs
}

// serialFactor returns the lag-1 autocorrelation of a DC fit's residuals
// res (3 axes interleaved per reading, dof degrees of freedom) and the
// variance factor its covariance takes for it: AR1Factor(rho) when rho
// exceeds twice its standard error under white noise, 2/sqrt(pairs) (the
// large-sample standard error of the lag-1 autocorrelation of white noise
// is 1/sqrt(n); Bartlett 1946, from memory), else 1. Under white noise the
// factor is 1 in about 98 fits of 100. With the noise given
// (Problem.Sigma) the correlation is taken as the noise's only beyond what
// the residuals' excess over that noise (a misfit: an object beside a
// cable) could hold, and in the share of that noise's variance the
// residuals show (the residuals of a noise-free simulation are rounding,
// often smooth, and say nothing of the noise).
//
// A fit that misses the readings by more than serialMaxOverFloor times
// their noise floor (noiseFloor, from fourth differences) is not widened:
// its residuals are the model's error (an object fitted by lines, the
// sharp turn of a bend), which the poor-fit yardstick and the route's
// strain allowance count, and whose near-total correlation would widen
// every sigma tenfold and hide the misfit's cause behind it.
func (f *fitter) serialFactor(c *candidate, res []float64, dof int) (rho, factor float64) {
	rho, pairs := lag1Within(res, 3, traverseStarts(f.sv.pts))
	if pairs < 8 || dof <= 0 || !(rho > 2/math.Sqrt(float64(pairs))) {
		return rho, 1
	}
	if f.overFloor(c.sp, sumSq(res)) > serialMaxOverFloor {
		return rho, 1
	}
	if s := f.prob.Sigma; s > 0 {
		// The noise given: of the residuals' lag-1 autocovariance
		// rho s_r^2, the misfit beyond that noise (s_r^2 - s^2, when
		// positive) may hold that much, and only the rest is taken as
		// the noise's: rho_n = (rho s_r^2 - max(0, s_r^2 - s^2)) / s^2.
		v := sumSq(res) / float64(dof)
		rho = (rho*v - math.Max(0, v-s*s)) / (s * s)
		if !(rho > 2/math.Sqrt(float64(pairs))) {
			return rho, 1
		}
	}
	return rho, AR1Factor(rho)
}

// serialCount judges the automatic count's fit c against fewer, the fit of
// the count before it, when c's residuals are correlated along the
// readings: the criterion's fall from fewer to c counts every reading as
// independent, and correlated noise lets a further line take up a slow
// swell of it (a phantom conductor beside the cable, or a second line
// under it). With n readings, c's variance factor F (serialFactor) counts
// them as n/F independent ones (the effective sample size; see
// AR1Factor), so the fall in chi-square is divided by F and the BIC's
// penalty taken with ln(n/F) (AIC: 2 per parameter, as before). It returns
// why c is refused when the criterion then does not fall, else "".
func (f *fitter) serialCount(c, fewer *candidate) string {
	if c.sp.nrhs != 1 || !(c.rss > 0) || !(fewer.rss > 0) {
		return ""
	}
	res, err := c.sp.fullResiduals(c.x)
	if err != nil {
		return ""
	}
	n, k := c.counts()
	_, k0 := fewer.counts()
	rho, F := f.serialFactor(c, res, n-k)
	if !(F > 1) {
		return ""
	}
	ne := float64(n) / F
	var fall float64
	if s := f.prob.Sigma; s > 0 {
		fall = (fewer.rss - c.rss) / (s * s)
	} else {
		fall = float64(n) * math.Log(fewer.rss/c.rss)
	}
	penalty := float64(k-k0) * math.Log(ne)
	if f.set.Criterion == AIC {
		penalty = 2 * float64(k-k0)
	}
	if fall/F > penalty {
		return ""
	}
	return fmt.Sprintf("%s: the %d readings are worth only about %.0f independent ones, and counted so the further line does not improve the fit enough to keep (lag-1 autocorrelation %.2f; information criterion not lower)", SerialNotePrefix, n, ne, rho)
}

// serialMaxOverFloor is the most a fit's RMS residual may exceed the
// readings' noise floor (fourth differences) for the fit to be widened
// for correlated residuals. Fourth differences of AR(1) noise of lag-1
// correlation r have 1 + (2/70)(-56 r + 28 r^2 - 8 r^3 + r^4) of its
// variance (the AR(1) autocorrelation r^k weighed by the difference
// coefficients 1, -4, 6, -4, 1), so such noise reads 3.0, 4.1 and 5.9
// times its floor at r = 0.82, 0.9 and 0.95: up to 6 the misfit may be
// noise so correlated.
const serialMaxOverFloor = 6.0

// SerialNotePrefix begins the note (Result.Notes) of a DC fit whose sigmas
// were widened for residuals correlated from reading to reading.
const SerialNotePrefix = "residuals correlated from reading to reading"

// serialNote is the note of a fit whose covariance was widened for
// residuals of lag-1 autocorrelation rho (serialSandwich): the first
// line's current's variance by the factor f, its sources' other
// parameters' by lo to hi.
func serialNote(rho, f, lo, hi float64) string {
	others := ""
	if hi > lo*1.1 {
		others = fmt.Sprintf(", the sources' other uncertainties %.2g-%.2g times, each by how its signature along the traverse weighs the correlation", math.Sqrt(lo), math.Sqrt(hi))
	}
	return fmt.Sprintf("%s: the readings count as fewer independent ones, and the current's uncertainty is widened %.2g times%s (lag-1 autocorrelation %.2f along the traverse; slow drift, sensor tilt wander, traffic, mains aliased into a slow log, or a model that misses part of the field)",
		SerialNotePrefix, math.Sqrt(f), others, rho)
}

// serialWidening returns, from the variance factors vf of the parameters
// named names (serialSandwich's variance over the plain one), the first
// line's current's factor (line1.current; the greatest when there is no
// line) and the least and greatest of the sources' parameters' (the
// background's left out).
func serialWidening(names []string, vf []float64) (first, lo, hi float64) {
	lo, hi = math.Inf(1), 1.0
	for j, v := range vf {
		if j >= len(names) || !(strings.HasPrefix(names[j], "line") || strings.HasPrefix(names[j], "dipole")) {
			continue
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if math.IsInf(lo, 1) {
		lo = 1
	}
	first = hi
	if j := slices.Index(names, "line1.current"); j >= 0 && j < len(vf) {
		first = vf[j]
	}
	return max(first, 1), max(lo, 1), hi
}

// traverseStarts returns the index of the first reading of each traverse
// among pts in reading order: a new traverse begins where the step from one
// reading to the next exceeds traverseBreakSteps times the median step (the
// walk from one traverse's end to the next one's start, or back along the
// next line). Noise is correlated along a traverse, not across the walk
// between two: the autocorrelations and the sandwich (serialSandwich) pair
// readings within a traverse only. One traverse (starts {0}) when the
// median step is zero or there are too few readings.
func traverseStarts(pts [][3]float64) []int {
	starts := []int{0}
	if len(pts) < 3 {
		return starts
	}
	// One allocation for the steps and the copy that the median reorders.
	n := len(pts) - 1
	buf := make([]float64, 2*n)
	step, tmp := buf[:n:n], buf[n:]
	for i := range step {
		a, b := pts[i], pts[i+1]
		step[i] = math.Sqrt((b[0]-a[0])*(b[0]-a[0]) + (b[1]-a[1])*(b[1]-a[1]) + (b[2]-a[2])*(b[2]-a[2]))
	}
	copy(tmp, step)
	med := medianInPlace(tmp)
	if !(med > 0) {
		return starts
	}
	for i, d := range step {
		if d > traverseBreakSteps*med {
			starts = append(starts, i+1)
		}
	}
	return starts
}

// traverseBreakSteps: a step of more than this many median steps between
// two readings ends a traverse (traverseStarts). A walking survey's steps
// vary by tens of percent; the walk to the next traverse, a metre or more
// against a step of 0.1 m, is ten times one or more.
const traverseBreakSteps = 5.0

// lag1Within is lag1 over the readings of each traverse (starts, from
// traverseStarts), pairing no readings across two traverses.
func lag1Within(res []float64, stride int, starts []int) (rho float64, pairs int) {
	var num, den float64
	n := len(res) / stride
	for k, s := range starts {
		e := n
		if k+1 < len(starts) {
			e = starts[k+1]
		}
		for i := s * stride; i < e*stride; i++ {
			v := res[i]
			den += v * v
			if i >= (s+1)*stride {
				num += v * res[i-stride]
				pairs++
			}
		}
	}
	if !(den > 0) {
		return 0, pairs
	}
	return num / den, pairs
}

// serialSandwich returns the covariance of a DC fit's parameters, in units
// of the plain one's noise variance (the summary scales it by sigma^2),
// when its residuals are correlated along the readings: a
// heteroscedasticity-and-autocorrelation-consistent sandwich
//
//	c C0 (J^T Sigma J) C0
//
// with C0 = (J^T J)^-1 (c0, the covariance under independence for unit
// noise, a pseudo-inverse where some direction is unresolved), J the full
// Jacobian at the solution (variable projection: the line geometry and the
// linear strengths and background alike, unweighted), and Sigma the
// correlation of the noise along the readings of each traverse and axis,
// estimated from the residuals e by the prewhitened kernel estimator
// (Andrews & Monahan 1992, from memory):
//
//   - An AR(1) part of lag-1 correlation rho. The residuals' lag-1
//     correlation r1 (pooled within traverses) reads AR(1) noise short on
//     a traverse of 81 readings: the fit's background takes the noise's
//     mean and its lines the broad part of the rest. rho is therefore the
//     one for which the residuals' expected lag-1 correlation under AR(1)
//     noise, tr(R M D M) / tr(R M), equals r1 (M = I - J C0 J^T the
//     residual projection, R the AR(1) correlation rho^|i-j| within a
//     traverse and axis, D the lag-1 pairing): the bias of the residuals'
//     autocorrelation taken out for this fit's own regressors (a
//     moment-matched estimator; for a mean alone it is the known bias
//     of about (1 + 3 rho)/T of a mean-corrected series, Kendall 1954,
//     from memory).
//   - The residuals whitened by that AR(1) filter (Prais-Winsten:
//     u_0 = sqrt(1 - rho^2) e_0, u_t = e_t - rho e_(t-1), per traverse and
//     axis), Sigma = A^-1 K A^-T, J^T Sigma J = G^T K G with G = A^-T J
//     (one backward recursion per column, G_t = J_t + rho G_(t+1)), and
//     K the correlation the filter leaves in u, taken by a Bartlett kernel
//     (Newey & West 1987) over its pooled autocorrelations with the
//     bandwidth of Andrews's (1991) AR(1) plug-in, S = 1.1447 (alpha
//     T)^(1/3), alpha = 4 r^2 / ((1 - r)(1 + r))^2 for u's lag-1
//     correlation r and T readings (both from memory). The autocovariances
//     are the biased ones (divided by the number of values), whose
//     sequence with the Bartlett weights keeps the middle matrix positive
//     semi-definite.
//
// c = (N - k) / (N - tr(C0 J^T Sigma J)) for N values and k parameters
// when the noise is estimated from the residuals (Problem.Sigma zero):
// correlated noise leaves less of its variance in the residuals than
// white noise does (the fitted lines and background take its slow part),
// so RSS / (N - k) reads the noise's marginal variance low, and E[RSS] =
// sigma^2 tr(M Sigma) says by how much. For rho = 0 and u white the
// sandwich is C0 exactly, the plain covariance. Each parameter's variance
// then grows by how its own signature along the traverse weighs the
// correlation: a current's broad signature takes nearly the long-run
// variance (1 + rho)/(1 - rho) of AR(1) noise, an offset's (an odd
// derivative of the field, with little of a mean in it) less.
//
// No variance falls below its plain value, nor below the AR(1) part's
// alone (K = I, at the same c; each parameter's row and column scaled up
// to the larger where it would): a long-run variance estimated from a short series is
// biased low, the whitened residuals' autocorrelations too (a negative
// lag-1 one, which the kernel would take for less variance, is what the
// filter leaves of noise the AR(1) model does not fit: white noise beside
// a drift, a slow oscillation), and the plain covariance is the least the
// readings' marginal noise allows. Unresolved parameters keep their plain
// variance and no covariance. Nil when the residuals are all zero, the
// fit is not of three values per reading, or the residuals' lag-1
// correlation is more than AR(1) noise of correlation AR1MaxRho would
// leave after this fit (a smooth misfit: the caller then widens every
// parameter by the AR(1) factor of the residuals' lag-1 correlation, as
// the one factor did before the sandwich).
//
// Matching the AR(1) correlation at further lags as well (2, 4, 8, taking
// the largest where significant) covered 1/f drift better (pull sd of the
// current 1.3 against 1.46 on one traverse) but read a small share of
// slow noise beside white noise as all slow: a base record's own noise,
// shared by 50 survey readings, was then widened for twice, here and by
// the base-noise widening of locate (TestBaseNoiseInSigmas). It is not
// done.
func (f *fitter) serialSandwich(c *candidate, c0 *mat.SymDense, unres []bool, r1 float64) (*mat.SymDense, error) {
	sp := c.sp
	if f.posWeighted {
		// The sandwich takes the unweighted Jacobian and residuals: with
		// the positions' weights each parameter is widened by the AR(1)
		// factor instead.
		return nil, nil
	}
	r0, err := sp.fullResiduals(c.x)
	if err != nil {
		return nil, err
	}
	res := slices.Clone(r0)
	saved := sp.w
	sp.w = nil
	a, rows, k, err := sp.fullJacobianCols(c.x)
	sp.w = saved
	if err != nil {
		return nil, err
	}
	if err := sp.evaluate(c.x); err != nil {
		return nil, err
	}
	n := rows / 3
	if rows != 3*n || len(res) != rows || k != c0.SymmetricDim() || n != len(f.sv.pts) {
		return nil, nil // not a DC fit of one value per reading and axis
	}
	g0 := sumSq(res) / float64(rows)
	if !(g0 > 0) {
		return nil, nil
	}
	starts := traverseStarts(f.sv.pts)
	ends := make([]int, len(starts))
	npairs := 0
	for t := range starts {
		ends[t] = n
		if t+1 < len(starts) {
			ends[t] = starts[t+1]
		}
		npairs += 3 * (ends[t] - starts[t] - 1)
	}
	// eachSeries calls fn with the row of each reading of one traverse and
	// axis, for every traverse and axis.
	eachSeries := func(fn func(s, e, ax int)) {
		for t, s := range starts {
			for ax := range 3 {
				fn(s, ends[t], ax)
			}
		}
	}
	cz := make([]float64, k*k)
	for i := range k {
		for j := range k {
			cz[i*k+j] = c0.At(i, j)
		}
	}
	// gram returns x^T y for column-major x, y of k columns of rows.
	gram := func(x, y []float64) []float64 {
		out := make([]float64, k*k)
		for i := range k {
			xi := x[i*rows : (i+1)*rows]
			for j := range k {
				out[i*k+j] = floats.Dot(xi, y[j*rows:(j+1)*rows])
			}
		}
		return out
	}
	mul := func(x, y []float64) []float64 {
		out := make([]float64, k*k)
		for i := range k {
			for l := range k {
				if v := x[i*k+l]; v != 0 {
					for j := range k {
						out[i*k+j] += v * y[l*k+j]
					}
				}
			}
		}
		return out
	}
	trace := func(x, y []float64) float64 { // tr(x y)
		var s float64
		for i := range k {
			for j := range k {
				s += x[i*k+j] * y[j*k+i]
			}
		}
		return s
	}
	rj := make([]float64, len(a))
	dj := make([]float64, len(a))
	N := float64(rows)
	// match returns the AR(1) correlation rho for which the residuals'
	// expected lag-l correlation, tr(R M D M) / tr(R M), is target (D the
	// lag-l pairing, half the sum of each value's neighbours l readings
	// away within its traverse and axis).
	match := func(l int, target float64) (rho float64, saturated bool) {
		pairs := 0
		for t := range starts {
			pairs += 3 * max(ends[t]-starts[t]-l, 0)
		}
		for j := range k {
			x, y := a[j*rows:(j+1)*rows], dj[j*rows:(j+1)*rows]
			eachSeries(func(s, e, ax int) {
				for i := s; i < e; i++ {
					var v float64
					if i-l >= s {
						v += x[3*(i-l)+ax]
					}
					if i+l < e {
						v += x[3*(i+l)+ax]
					}
					y[3*i+ax] = v / 2
				}
			})
		}
		aD := mul(cz, gram(a, dj))
		expected := func(rho float64) float64 {
			for j := range k {
				x, y := a[j*rows:(j+1)*rows], rj[j*rows:(j+1)*rows]
				eachSeries(func(s, e, ax int) {
					var fw float64
					for i := s; i < e; i++ {
						fw = x[3*i+ax] + rho*fw
						y[3*i+ax] = fw
					}
					var bw float64
					for i := e - 1; i >= s; i-- {
						bw = x[3*i+ax] + rho*bw
						y[3*i+ax] += bw - x[3*i+ax]
					}
				})
			}
			aR := gram(a, rj)
			den := N - trace(cz, aR)
			num := math.Pow(rho, float64(l))*float64(pairs) - 2*trace(cz, gram(dj, rj)) + trace(mul(cz, aR), aD)
			if !(den > 0) {
				return 1
			}
			return num / den
		}
		switch {
		case !(target > expected(0)):
			return 0, false
		case expected(AR1MaxRho) <= target:
			return AR1MaxRho, true
		}
		lo, hi := 0.0, AR1MaxRho
		for range 24 { // to 6e-8 of the range
			mid := (lo + hi) / 2
			if expected(mid) < target {
				lo = mid
			} else {
				hi = mid
			}
		}
		return (lo + hi) / 2, false
	}
	rho, sat := match(1, r1)
	if sat {
		// More correlated than AR(1) noise of any correlation up to
		// AR1MaxRho would leave after this fit: the residuals are a
		// smooth misfit, not noise (a half-line's field past a
		// conductor's end fitted as a line, a bend), which the AR(1)
		// model would make a random walk of and widen without bound.
		return nil, nil
	}
	pw := math.Sqrt(1 - rho*rho)
	// Whitened residuals u and regressors G.
	u := make([]float64, rows)
	g := rj // reused
	eachSeries(func(s, e, ax int) {
		u[3*s+ax] = pw * res[3*s+ax]
		for i := s + 1; i < e; i++ {
			u[3*i+ax] = res[3*i+ax] - rho*res[3*(i-1)+ax]
		}
		for j := range k {
			jc, gc := a[j*rows:(j+1)*rows], g[j*rows:(j+1)*rows]
			next := 0.0
			for i := e - 1; i >= s; i-- {
				next = jc[3*i+ax] + rho*next
				gc[3*i+ax] = next
			}
			gc[3*s+ax] /= pw
		}
	})
	// The pooled autocovariance of u at lag l (readings), within traverses.
	gammaU := func(l int) float64 {
		var s float64
		for t, st := range starts {
			for r := 3 * (st + l); r < 3*ends[t]; r++ {
				s += u[r] * u[r-3*l]
			}
		}
		return s / N
	}
	gu0 := gammaU(0)
	if !(gu0 > 0) {
		return nil, nil
	}
	ru := math.Max(-0.97, math.Min(gammaU(1)/gu0, 0.97))
	alpha := 4 * ru * ru / ((1 - ru) * (1 + ru) * (1 - ru) * (1 + ru))
	S := 1.1447 * math.Cbrt(alpha*float64(n))
	L := min(int(math.Ceil(S))-1, n/len(starts)/2)
	// B = (1 - rho^2) G^T K G: J^T Sigma J for unit marginal variance.
	B := make([]float64, k*k)
	var B0 []float64 // the AR(1) part alone, K = I
	for l := 0; l <= max(L, 0); l++ {
		if l == 1 {
			B0 = slices.Clone(B)
		}
		w := 1.0
		if l > 0 {
			w = (1 - float64(l)/S) * gammaU(l) / gu0
		}
		w *= 1 - rho*rho
		if w == 0 {
			continue
		}
		for i := range k {
			gi := g[i*rows : (i+1)*rows]
			for j := i; j < k; j++ {
				gj := g[j*rows : (j+1)*rows]
				var s float64
				for t, st := range starts {
					for r := 3 * (st + l); r < 3*ends[t]; r++ {
						s += gi[r]*gj[r-3*l] + gi[r-3*l]*gj[r]
					}
				}
				if l == 0 {
					s /= 2
				}
				B[i*k+j] += w * s
				if j != i {
					B[j*k+i] += w * s
				}
			}
		}
	}
	if B0 == nil {
		B0 = B
	}
	scale := 1.0
	if !(f.prob.Sigma > 0) {
		den := math.Max(N-trace(cz, B), (N-float64(k))/100)
		scale = (N - float64(k)) / den
	}
	h, h0 := mul(mul(cz, B), cz), mul(mul(cz, B0), cz)
	out := mat.NewSymDense(k, nil)
	d := make([]float64, k)
	for i := range k {
		hv, p := scale*h[i*k+i], math.Max(cz[i*k+i], scale*h0[i*k+i])
		d[i] = 1
		if !unres[i] && hv > 0 && p > hv {
			d[i] = math.Sqrt(p / hv)
		}
	}
	for i := range k {
		for j := i; j < k; j++ {
			switch {
			case unres[i] || unres[j]:
				if i == j {
					out.SetSym(i, i, cz[i*k+i])
				}
			default:
				out.SetSym(i, j, d[i]*d[j]*scale*0.5*(h[i*k+j]+h[j*k+i]))
			}
		}
	}
	return out, nil
}
