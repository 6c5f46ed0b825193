package inverse

import (
	"fmt"
	"math"
)

// Noise correlated from reading to reading along a traverse (a fluxgate's
// slow drift, a hand-held sensor's tilt wander, a passing vehicle, mains
// hum aliased into a slow DC log) carries less information than as many
// independent readings: a fit's covariance taken under independence is
// then too small, and its chi-square does not show it (the marginal noise
// is what the fit expects). A DC line fit therefore measures the lag-1
// autocorrelation of its residuals along the readings (ResidualAR1, in
// the order of the Problem's points, which is the order they were taken
// along the traverse) and, when it is significant, widens its covariance by
// the AR(1) variance factor AR1Factor (see summary.widen).

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
// in-phase and quadrature parts; 0 when there are too few.
func ResidualAR1(r *Result) float64 {
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
	rho, pairs := lag1(res, 3)
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
	return fmt.Sprintf("%s (lag-1 autocorrelation %.2f): counted as %.0f independent readings of %d, the criterion does not fall", SerialNotePrefix, rho, ne, n)
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

// serialNote is the note of a fit whose covariance was widened by the
// variance factor f for residuals of lag-1 autocorrelation rho.
func serialNote(rho, f float64) string {
	return fmt.Sprintf("%s (lag-1 autocorrelation %.2f along the traverse): the readings count as %.2g times fewer independent ones and every sigma is widened %.2g times (slow drift, sensor tilt wander, traffic, mains aliased into a slow log, or a model that misses part of the field)",
		SerialNotePrefix, rho, f, math.Sqrt(f))
}
