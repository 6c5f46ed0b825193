package route

import (
	"fmt"
	"math"
	"strings"
)

// Attenuation along the route.
//
// A conductor that leaks current evenly along its length (a coated pipe,
// its coating's conductance to earth spread along it) carries a current
// that falls exponentially with chainage, I0 exp(-a x) (the transmission-
// line model). The step search's trend is a straight line fitted locally;
// over a route long against 1/a the curve departs from it, most near the
// route's ends where the trend is taken from one side only: a 5 A main
// leaking at a = 1e-3 per metre, with no defect, gave "current leaving the
// conductor" warnings with a place on 4 of 6 seeds (found in review). So
// where the currents fall steadily by a good share along the route (a
// fitted exponential fall of attFallMin or more across it, beyond StepK of
// its sigma), the intervals are tested in the logarithm of the current,
// where an exponential fall is a straight line and a step of a share f is
// a change of ln(1 - f); the steps found are sized as before. The rate is
// reported as information, per cent and dB per km, wherever an exponential
// with a level of its own between the steps reported fits the route (the
// steps then found in current as before).

// attFallMin is the least fall across the route, in the logarithm of the
// current (about 10%), for which the intervals are tested in log current.
const attFallMin = 0.1

// attenuation fits ln I = c_k + b x by weighted least squares over the
// stations of u (all currents positive), with one level c_k for each
// stretch between the intervals marked in isStep (nil: one level) and a
// shared slope b, each station weighted by (I / sigma)². It returns b, its
// sigma (scaled up by the Birge ratio when the stations scatter more than
// their sigmas) and ok false when a current is not positive or there are
// too few stations (two levels' worth more than the levels).
func attenuation(u []*Placed, isStep []bool) (b, sigma float64, ok bool) {
	b, sigma, _, ok = attenuationChi(u, isStep)
	return b, sigma, ok
}

// attenuationChi is attenuation, with the fit's chi-square per degree of
// freedom.
func attenuationChi(u []*Placed, isStep []bool) (b, sigma, chiDOF float64, ok bool) {
	b, sigma, chiDOF, _, ok = attenuationFit(u, isStep)
	return b, sigma, chiDOF, ok
}

// attenuationFit is attenuationChi with each station's residual in its
// own sigmas.
func attenuationFit(u []*Placed, isStep []bool) (b, sigma, chiDOF float64, res []float64, ok bool) {
	if len(u) < 4 {
		return 0, 0, 0, nil, false
	}
	seg := make([]int, len(u))
	nseg := 1
	for i := 1; i < len(u); i++ {
		if isStep != nil && isStep[i-1] {
			nseg++
		}
		seg[i] = nseg - 1
	}
	if len(u) < nseg+3 {
		return 0, 0, 0, nil, false
	}
	// The levels are eliminated: per segment, the weighted means of x and
	// y; the slope from the pooled within-segment sums.
	sw := make([]float64, nseg)
	sx := make([]float64, nseg)
	sy := make([]float64, nseg)
	y := make([]float64, len(u))
	w := make([]float64, len(u))
	for i, p := range u {
		if !(p.Current > 0) || !(p.CurrentSigma > 0) {
			return 0, 0, 0, nil, false
		}
		y[i] = math.Log(p.Current)
		w[i] = math.Pow(p.Current/p.CurrentSigma, 2)
		sw[seg[i]] += w[i]
		sx[seg[i]] += w[i] * p.Chainage
		sy[seg[i]] += w[i] * y[i]
	}
	var sxx, sxy float64
	for i, p := range u {
		k := seg[i]
		dx, dy := p.Chainage-sx[k]/sw[k], y[i]-sy[k]/sw[k]
		sxx += w[i] * dx * dx
		sxy += w[i] * dx * dy
	}
	if !(sxx > 0) {
		return 0, 0, 0, nil, false
	}
	b = sxy / sxx
	var chi float64
	res = make([]float64, len(u))
	for i, p := range u {
		k := seg[i]
		r := (y[i] - sy[k]/sw[k]) - b*(p.Chainage-sx[k]/sw[k])
		chi += w[i] * r * r
		res[i] = r * math.Sqrt(w[i])
	}
	chiDOF = chi / float64(len(u)-nseg-1)
	return b, math.Sqrt(math.Max(1, chiDOF)) / math.Sqrt(sxx), chiDOF, res, true
}

// attResolved says whether the stations of u resolve an exponential of
// slope b (per metre of chainage) from a step: a fall of |b| L across the
// route of length L departs from a step at its middle by half of |b| L,
// and a station tells the two apart when its current's relative sigma is
// at most attPrecise of |b| L and its fit is sound (no problem, its misfit
// within the route's soundest fits'). Enough such stations, attMinPrecise
// or more and no stretch without one longer than attMaxHole of the route,
// resolve the fall's shape. Before, a 0.4 A loss between two precise end
// stations, every station between them imprecise (beside a mains cable)
// and misfit, read as a steady fall of 10.6 ± 0.29% per 100 m "which is
// gradual and no dig site", its rate and sigma from the end stations alone
// (found in review).
func attResolved(u []*Placed, b float64) bool {
	if len(u) < 2 {
		return false
	}
	span := u[len(u)-1].Chainage - u[0].Chainage
	fall := math.Abs(b) * span
	if !(fall > 0) {
		return false
	}
	var xs []float64
	for _, p := range u {
		if p.Problem != "" || p.strained || !(p.Current > 0) || !(p.CurrentSigma > 0) {
			continue
		}
		if p.CurrentSigma/p.Current <= attPrecise*fall {
			xs = append(xs, p.Chainage)
		}
	}
	if len(xs) < attMinPrecise {
		return false
	}
	hole := math.Max(xs[0]-u[0].Chainage, u[len(u)-1].Chainage-xs[len(xs)-1])
	for i := 1; i < len(xs); i++ {
		hole = math.Max(hole, xs[i]-xs[i-1])
	}
	return hole <= attMaxHole*span
}

// attPrecise, attMinPrecise and attMaxHole set which stations resolve a
// steady fall from a step (attResolved): a relative sigma at most a sixth
// of the fall across the route (its departure from a step at the middle
// three sigma), at least six such stations, and no stretch without one
// longer than a third of the route.
const (
	attPrecise    = 1.0 / 6
	attMinPrecise = 6
	attMaxHole    = 1.0 / 3
)

// logCurrents returns copies of u with the logarithm of each current and
// its sigma relative to the current, for the interval tests.
func logCurrents(u []*Placed) []*Placed {
	out := make([]*Placed, len(u))
	cp := make([]Placed, len(u))
	for i, p := range u {
		cp[i] = *p
		cp[i].Current = math.Log(p.Current)
		cp[i].CurrentSigma = p.CurrentSigma / p.Current
		out[i] = &cp[i]
	}
	return out
}

// useLogTrend says whether the intervals of u are tested in log current:
// every current positive, the fitted fall across the route at least
// attFallMin and beyond k of its sigma, and the exponential a fit to the
// whole route (chi-square per degree of freedom at most attChiMax) better
// than a straight line in current. A step of any size spoils that fit,
// and the route is then tested as before.
func useLogTrend(u []*Placed, k float64) bool {
	if len(u) < 2 {
		return false
	}
	b, sb, chi, ok := attenuationChi(u, nil)
	span := u[len(u)-1].Chainage - u[0].Chainage
	if !ok || !(math.Abs(b)*span >= attFallMin) || !(math.Abs(b) > k*sb) || !(chi <= attChiMax) || !attResolved(u, b) {
		return false
	}
	// The straight line in current, weighted by the sigmas.
	var sw, sx, sy, sxx, sxy float64
	for _, p := range u {
		w := 1 / (p.CurrentSigma * p.CurrentSigma)
		sw, sx, sy = sw+w, sx+w*p.Chainage, sy+w*p.Current
		sxx, sxy = sxx+w*p.Chainage*p.Chainage, sxy+w*p.Chainage*p.Current
	}
	den := sw*sxx - sx*sx
	if !(den > 0) {
		return false
	}
	g := (sw*sxy - sx*sy) / den
	c := (sy - g*sx) / sw
	var lin float64
	for _, p := range u {
		r := (p.Current - c - g*p.Chainage) / p.CurrentSigma
		lin += r * r
	}
	return chi*float64(len(u)-2) < lin
}

// attMinStations is the fewest usable stations for which the rate is
// reported: fewer fix an exponential too poorly to be worth a figure (a
// tee's branch of five stations read a rise of 22000 ± 19000% per km).
const attMinStations = 8

// attChiMax is the largest chi-square per degree of freedom of the
// exponential fitted to the whole route for which the intervals are tested
// in log current: the stations' sigmas are already widened by the
// between-station scatter, so a steady fall fits to a few (5 on the
// 5 A main leaking at 1e-3 per metre, where the fits' own model error at
// 1.5 m depth adds to the noise); a step of a tenth of the current on
// sigmas of 1% gives some hundreds.
const attChiMax = 16

// attenuationFinding reports the rate at which the current falls (or
// rises) along the route, fitted in log current with a level of its own
// between the steps found (isStep), as information, when the fit holds
// (chi-square per degree of freedom at most attChiMax) and the fall is at
// least attFallMin across the route and beyond StepK of its sigma.
func attenuationFinding(u []*Placed, isStep []bool, set *Settings) (Finding, bool) {
	b, sb, chi, res, ok := attenuationFit(u, isStep)
	// Stations far off the exponential (a fit that took one share of a
	// conductor split in two lines, read 30-65% low beside girth welds,
	// had pulled a 33% per km fall to 49 ± 1.5%) are left out once:
	// beyond 4 times the residuals' robust scale (1.4826 times their
	// median absolute value), at least 4 sigma.
	left := 0
	if ok {
		abs := make([]float64, len(res))
		for i, r := range res {
			abs[i] = math.Abs(r)
		}
		cut := 4 * math.Max(1, 1.4826*medianOf(abs))
		var keep []*Placed
		var kept []bool // a step between successive stations kept
		last := -1
		for i, p := range u {
			if abs[i] > cut {
				left++
				continue
			}
			if last >= 0 {
				step := false
				for j := last; j < i && isStep != nil; j++ {
					step = step || isStep[j]
				}
				kept = append(kept, step)
			}
			keep = append(keep, p)
			last = i
		}
		if left > 0 {
			if isStep == nil {
				kept = nil
			}
			b, sb, chi, _, ok = attenuationFit(keep, kept)
		}
	}
	span := u[len(u)-1].Chainage - u[0].Chainage
	if !ok || !(math.Abs(b) > set.stepK()*sb) || !(math.Abs(b)*span >= attFallMin) || !(chi <= attChiMax) {
		return Finding{}, false
	}
	if len(u) < attMinStations || !attResolved(u, b) {
		return Finding{}, false
	}
	// Per km on a route of 500 m or more, else per 100 m: a short
	// route's rate taken to a km would be a guess.
	per, unit := 1000.0, "km"
	if span < 500 {
		per, unit = 100, "100 m"
	}
	a, sa := -b*per, sb*per // per km (or 100 m), of the logarithm
	pct := 100 * (1 - math.Exp(-a))
	spct := 100 * math.Exp(-a) * sa
	db := 20 / math.Ln10 * a // current ratio in dB
	sdb := 20 / math.Ln10 * sa
	first, last := u[0], u[len(u)-1]
	verb, what := "falls", "current leaking away evenly along the conductor (a coating's leakage to earth, or an earthed cable's), which is gradual and no dig site"
	if a < 0 {
		verb, what = "rises", "current joining evenly along the conductor, or the route's chainage running against the flow"
		pct, db = -pct, -db
	}
	var how []string
	if isStep != nil {
		for _, s := range isStep {
			if s {
				how = append(how, "each stretch between the steps found at a level of its own")
				break
			}
		}
	}
	if left > 0 {
		how = append(how, fmt.Sprintf("%d %s far off it left out", left, plural(left, "station", "stations")))
	}
	steps := ""
	if len(how) > 0 {
		steps = " (" + strings.Join(how, "; ") + ")"
	}
	return Finding{
		Kind:     KindAttenuation,
		Severity: SeverityInfo,
		From:     first.Chainage, To: last.Chainage,
		Position: pointAt(u, (first.Chainage+last.Chainage)/2), // on the route, midway
		Keys:     []string{first.Key, last.Key},
		Message: fmt.Sprintf("the current %s steadily along the route, by %s%% per %s (%s dB per %s, the current's ratio) from %s to %s, fitted as an exponential%s: %s",
			verb, pm(math.Abs(pct), spct), unit, pm(math.Abs(db), sdb), unit, first.Key, last.Key, steps, what),
		Values: []Value{
			{Name: "attenuation", Value: pct, Sigma: spct, Unit: "%/" + unit},
			{Name: "attenuation (dB)", Value: db, Sigma: sdb, Unit: "dB/" + unit},
		},
	}, true
}
