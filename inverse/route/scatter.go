package route

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"
)

// Between-station scatter.
//
// Each station's current sigma comes from its own fit: it covers the noise
// of that traverse's readings but not the error of the model itself. A
// conductor that bends near a traverse, or a traverse that is not quite
// straight, is fitted as a straight infinite line, and the fitted current
// is off by an amount that changes from station to station and that no
// single fit can see. When the fits are good, their sigmas are small and
// this model error dominates the station-to-station differences; tested
// against the fit sigmas alone, every bend would be a step.
//
// The model error is taken as a variance tau^2 shared by every station (the
// random-effects model the plateau sizing uses, see plateau.go) and
// estimated robustly from the differences of current between successive
// stations after removing the smooth trend (the median gradient of the
// neighbouring intervals, as the step test does). With e_j such a detrended
// difference and s_j its sigma from the fits,
//
//	e_j ~ N(0, s_j^2 + 2 tau^2)
//
// and tau is the value for which the median of |e_j| / sqrt(s_j^2 + 2 tau^2)
// equals 0.6745, the median of |N(0, 1)| (the MAD estimate of scale, robust
// to the few intervals that hold real steps or anomalies: each step moves
// one difference, each anomaly two). Zero when the differences do not
// scatter more than the fits' sigmas say.

// madNormal is the median of |Z| for a standard normal Z (Phi^-1(0.75)).
const madNormal = 0.6744897501960817

// minScatterIntervals is the fewest intervals from which tau is taken as
// it is estimated. The MAD estimates a normal scale with about 37%
// efficiency (Rousseeuw & Croux, J. Am. Stat. Assoc. 88(424):1273-1283,
// 1993), a relative standard error near 1.17/sqrt(n): 30% at 15 intervals.
//
// Below that (short routes, down to minShortIntervals) the estimate is too
// uncertain to use as it stands, and leaving tau out is worse: a Monte
// Carlo of ten stations whose currents scatter by four times their fit
// sigmas (model error, common in real surveys where the fits' sigmas come
// from a nanotesla of noise) found false steps or anomalies on 73% of
// routes with no fault. There tau is estimated when a test finds
// it (shortScatter) and widened for its own uncertainty
// (finite-sample widening): a difference divided
// by sqrt(2) tau-hat behaves as Student's t with nu degrees of freedom
// rather than a normal deviate, nu = shortNuPerInterval m (the MAD's
// efficiency: its variance is that of a standard deviation from 0.37 m
// degrees of freedom), so tau-hat is multiplied by
//
//	c = t_nu^-1(Phi(k)) / k        (k = Settings.StepK)
//
// which keeps the step test's false-alarm rate at the normal k-sigma
// tail's. The sizes' sigmas are widened with it (conservative). A route of
// fewer than minShortIntervals intervals has no estimate (tau is zero).
const (
	minScatterIntervals = 15
	minShortIntervals   = 6
	shortNuPerInterval  = 0.37
	gateP               = 0.01
)

// modelScatter returns tau (A), the standard deviation of the
// between-station model error of the stations u (in route order), widened
// on short routes, and the widening factor applied (1 when none).
func modelScatter(u []*Placed, set *Settings) (tau, widen float64) {
	m := len(u) - 1
	if m < minShortIntervals {
		return 0, 1
	}
	dI, dx, s := make([]float64, m), make([]float64, m), make([]float64, m)
	for j := range m {
		dI[j] = u[j+1].Current - u[j].Current
		dx[j] = u[j+1].Chainage - u[j].Chainage
		s[j] = math.Hypot(u[j].CurrentSigma, u[j+1].CurrentSigma)
	}
	// The trend is removed even when the step test is told not to (a
	// negative TrendWindow): a smooth decay is not model error.
	w := max(set.trendWindow(), 2)
	for j := range m {
		if !finite(dI[j]) || !(s[j] > 0) {
			return 0, 1 // no sigmas given: nothing is tested (see detect)
		}
	}
	if m < minScatterIntervals {
		tau, widen = shortScatter(dI, dx, s, set.stepK())
		// The excess may be a step spread over several stations rather
		// than scatter: then it is taken about the step (stepscatter.go).
		if tau > 0 {
			if t1, w1, ok := stepScatter(u, tau/widen, set); ok && t1 < tau {
				return t1, w1
			}
		}
		return tau, widen
	}
	// MAD is robust to the few intervals that hold real steps or
	// anomalies; the trend leaves them out only as the step test's does.
	return scatterOnce(dI, dx, s, make([]bool, m), w), 1
}

// shortScatter is modelScatter on a short route (minShortIntervals to
// minScatterIntervals-1 intervals). The trend is one robust slope for the
// whole route, the median of every interval's gradient (a local window
// leaves the intervals near the ends two gradients, one of which may hold
// the step); with it removed, e_j = dI_j - g dx_j has variance
//
//	v_j = s_j^2 + 2 tau^2 + (pi/2) mean(s_k^2/dx_k^2) dx_j^2 / m
//
// (the last term the median slope's, as in trend). The excess is taken
// only when it is significant (a test at gateP, below);
// otherwise a chance excess, widened several times, would hide real steps
// on a route whose fits' sigmas are honest. (A gate on the median of
// |e_j|/sqrt(v_j), the statistic the estimate uses, was tried: at seven or
// eight stations it missed a scatter four times the fits' sigmas on one
// route in five, all of which then reported false steps.) A significant
// excess is estimated as on a long route, the median of |e_j|/sqrt(v_j)
// set to madNormal, and widened by shortWidening.
func shortScatter(dI, dx, s []float64, k float64) (tau, widen float64) {
	m := len(dI)
	gs := make([]float64, m)
	var v0 float64
	for j := range m {
		if !(dx[j] > 0) {
			return 0, 1
		}
		gs[j] = dI[j] / dx[j]
		v0 += (s[j] / dx[j]) * (s[j] / dx[j])
	}
	g := medianOf(gs)
	vg := math.Pi / 2 * (v0 / float64(m)) / float64(m)
	r := make([]float64, m)
	med := func(t2 float64) float64 {
		for j := range m {
			r[j] = math.Abs(dI[j]-g*dx[j]) / math.Sqrt(s[j]*s[j]+vg*dx[j]*dx[j]+2*t2)
		}
		return medianOf(r)
	}
	// The gate: the sum of e_j^2/v_j at tau 0 without its largest term
	// (which a real step would hold; gateStat) against its gateP upper
	// quantile with no excess (gateCrit).
	if gateStat(dI, dx, s, g, vg) <= gateCrit[m-minShortIntervals] {
		return 0, 1
	}
	var hi float64
	for j := range m {
		e := dI[j] - g*dx[j]
		hi = math.Max(hi, e*e)
	}
	t2 := bisectDown(hi/(2*madNormal*madNormal), func(t2 float64) bool { return med(t2) > madNormal })
	widen = shortWidening(shortNuPerInterval*float64(m), k)
	return math.Sqrt(t2) * widen, widen
}

// gateCrit holds, for m = minShortIntervals ... minScatterIntervals-1
// intervals, the 99% point (gateP = 0.01) of gateStat with no scatter
// beyond the fits' sigmas, by simulation: 10^6 routes each of m+1
// stations with independent normal currents of one sigma, evenly spaced,
// the statistic computed as shortScatter computes it. The terms are not
// independent chi-square variables (successive differences share a
// station, the slope is fitted, the largest term is dropped), so the
// chi-square quantile with m-1 degrees of freedom, which this gate used
// first, let through only 0.1-0.5% at its nominal 2.5% and missed real
// scatter. Stations of mixed sigmas (0.05-0.3 A) and spacings (5-10 m) give
// quantiles 2-3% lower: the table errs on the side of no scatter.
// TestGateFalsePassRate checks it with other draws. The level trades false
// findings on routes with scatter against steps missed on clean routes
// (whose chance scatter, once let through, is widened several times): by
// Monte Carlo at 1%, false findings on 5.0, 4.2 and 2.2% of 7-, 8- and
// 10-station routes whose currents scatter by four times their fit sigmas
// (3.8, 3.7 and 2.0% at 2.5%; 11, 7 and 3% with the chi-square quantile),
// and a step of ten fit sigmas on a clean route missed in 3.3% (12
// stations) and 8.3% (8 stations) of draws (7.8 and 13.5% at 2.5%).
var gateCrit = [minScatterIntervals - minShortIntervals]float64{
	8.67, 10.85, 12.38, 14.43, 15.83, 17.79, 19.14, 20.94, 22.34,
}

// gateStat is the statistic of shortScatter's test for scatter: the sum of
// e_j^2/v_j at tau 0, e_j = dI_j - g dx_j, without its largest term.
func gateStat(dI, dx, s []float64, g, vg float64) float64 {
	m := len(dI)
	q := make([]float64, m)
	for j := range m {
		e := dI[j] - g*dx[j]
		q[j] = e * e / (s[j]*s[j] + vg*dx[j]*dx[j])
	}
	sort.Float64s(q)
	var trimmed float64
	for _, v := range q[:m-1] {
		trimmed += v
	}
	return trimmed
}

// shortWidening is the factor c = t_nu^-1(Phi(k)) / k (see
// minScatterIntervals): the Student's t quantile with the normal k-sigma
// tail's probability, over k.
func shortWidening(nu, k float64) float64 {
	p := distuv.UnitNormal.CDF(k)
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile(p) / k
}

// scatterOnce estimates tau from the intervals not skipped, their trends
// taken over the intervals not skipped; zero from fewer than
// minScatterIntervals.
func scatterOnce(dI, dx, s []float64, skip []bool, w int) float64 {
	var e, v []float64 // detrended differences and their variances from the fits
	var hi float64
	for j := range dI {
		if skip[j] {
			continue
		}
		g, gs := trend(dI, dx, s, skip, j, w)
		ej := dI[j] - g*dx[j]
		e = append(e, ej)
		v = append(v, s[j]*s[j]+gs*dx[j]*gs*dx[j])
		hi = math.Max(hi, ej*ej)
	}
	if len(e) < minScatterIntervals {
		return 0
	}
	med := func(t2 float64) float64 {
		r := make([]float64, len(e))
		for j := range e {
			r[j] = math.Abs(e[j]) / math.Sqrt(v[j]+2*t2)
		}
		sort.Float64s(r)
		n := len(r)
		if n%2 == 1 {
			return r[n/2]
		}
		return (r[n/2-1] + r[n/2]) / 2
	}
	if !(med(0) > madNormal) {
		return 0 // no excess
	}
	// med(t2) decreases with t2; bisect for med = madNormal (med(hi) <=
	// madNormal at hi = max e^2 / (2 madNormal^2)).
	return math.Sqrt(bisectDown(hi/(2*madNormal*madNormal), func(t2 float64) bool { return med(t2) > madNormal }))
}

// bisectDown returns the root in [0, hi] of a decreasing condition: the
// point where above(x) (true at 0, false at hi) changes, to 60 halvings.
func bisectDown(hi float64, above func(float64) bool) float64 {
	lo := 0.0
	for range 60 {
		mid := (lo + hi) / 2
		if above(mid) {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// usable returns pointers to the usable stations of ps, in route order.
func usable(ps []Placed) []*Placed {
	var u []*Placed
	for i := range ps {
		if ps[i].usable() {
			u = append(u, &ps[i])
		}
	}
	return u
}

// smallestStep is about the smallest change of current between two
// successive stations that the step test reports when every station's
// sigma is widened by the model scatter tau: StepK times the median over
// the intervals between used stations of sqrt(s_a^2 + s_b^2 + 2 tau^2),
// the sigma the test measures a difference against (steps.go; the
// trend's own sigma, added there, is left out, so a step somewhat larger
// can still go unreported). Under large scatter it is large: on two DC
// routes whose current varied by +-30% in time during the walk (station
// scatter 26 A about 228 A, then 135 A past a real 40% loss of 93 A,
// which was not reported; found in review) it came out 170 and 124 A. Zero when tau is zero or there are
// fewer than two used stations.
func smallestStep(ps []Placed, set *Settings, tau float64) float64 {
	if !(tau > 0) {
		return 0
	}
	u := usable(ps)
	if len(u) < 2 {
		return 0
	}
	sig := make([]float64, 0, len(u)-1)
	for j := 0; j+1 < len(u); j++ {
		a, b := u[j].CurrentSigma, u[j+1].CurrentSigma
		sig = append(sig, math.Sqrt(a*a+b*b+2*tau*tau))
	}
	return set.stepK() * medianOf(sig)
}
