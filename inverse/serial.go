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
// (Problem.Sigma) the correlation found in residuals smaller than that
// noise says little about it (the residuals of a noise-free simulation are
// rounding, often smooth): the factor's excess over 1 is then taken in the
// share of the given noise variance the residuals show, at most all of it.
func (f *fitter) serialFactor(res []float64, dof int) (rho, factor float64) {
	rho, pairs := lag1(res, 3)
	if pairs < 8 || dof <= 0 || !(rho > 2/math.Sqrt(float64(pairs))) {
		return rho, 1
	}
	factor = AR1Factor(rho)
	if s := f.prob.Sigma; s > 0 {
		share := math.Min(1, sumSq(res)/float64(dof)/(s*s))
		factor = 1 + (factor-1)*share
	}
	return rho, factor
}

// SerialNotePrefix begins the note (Result.Notes) of a DC fit whose sigmas
// were widened for residuals correlated from reading to reading.
const SerialNotePrefix = "residuals correlated from reading to reading"

// serialNote is the note of a fit whose covariance was widened by the
// variance factor f for residuals of lag-1 autocorrelation rho.
func serialNote(rho, f float64) string {
	return fmt.Sprintf("%s (lag-1 autocorrelation %.2f along the traverse): the readings count as %.2g times fewer independent ones and every sigma is widened %.2g times (slow drift, sensor tilt wander, traffic, mains aliased into a slow log, or a model that misses part of the field)",
		SerialNotePrefix, rho, f, math.Sqrt(f))
}
