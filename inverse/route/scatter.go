package route

import (
	"math"
	"sort"
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

// minScatterIntervals is the fewest intervals from which tau is estimated;
// with fewer it is taken as zero. The MAD estimates a normal scale with
// about 37% efficiency (Rousseeuw & Croux, J. Am. Stat. Assoc.
// 88(424):1273-1283, 1993), a relative standard error near 1.17/sqrt(n):
// 30% at 15 intervals, too uncertain below that to widen every sigma by.
const minScatterIntervals = 15

// modelScatter returns tau (A), the standard deviation of the
// between-station model error of the stations u (in route order).
func modelScatter(u []*Placed, set *Settings) float64 {
	m := len(u) - 1
	if m < minScatterIntervals {
		return 0
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
			return 0 // no sigmas given: nothing is tested (see detect)
		}
	}
	// MAD is robust to the few intervals that hold real steps or
	// anomalies; the trend leaves them out only as the step test's does.
	return scatterOnce(dI, dx, s, make([]bool, m), w)
}

// scatterOnce estimates tau from the intervals not skipped, their trends
// taken over the intervals not skipped.
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
	// med(t2) decreases with t2; bisect for med = madNormal.
	lo := 0.0
	hi /= 2 * madNormal * madNormal // med(hi) <= madNormal there
	for range 60 {
		mid := (lo + hi) / 2
		if med(mid) > madNormal {
			lo = mid
		} else {
			hi = mid
		}
	}
	return math.Sqrt((lo + hi) / 2)
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
