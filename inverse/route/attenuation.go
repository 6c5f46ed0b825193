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
// its sigma), the intervals are tested in the logarithm of the current's
// magnitude, where an exponential fall is a straight line and a step of a
// share f is a change of ln(1 - f), and the steps found are sized from
// levels fitted with the exponential divided out (plateauExp). That is
// done where one exponential fits the whole route, and also where the
// steps found in log current leave one between them (logTrendFor): a
// coating defect on a leaking pipe spoils the fit of one exponential, and
// the straight-line null then missed it or gave phantom steps near the
// route's ends. The rate is reported as information, per cent and dB per
// km, wherever an exponential with a level of its own between the steps
// reported fits the route.

// attFallMin is the least fall across the route, in the logarithm of the
// current (about 10%), for which the intervals are tested in log current.
// It no longer gates the rate reported (attRateMin).
const attFallMin = 0.1

// attRateMin is the least rate reported, per metre of the logarithm of
// the current (0.01 per km, 1.0% or 0.087 dB per km): a practical floor,
// under the leakage of a well-coated main (a few per cent per km), where
// a slope beyond StepK of its sigma is more likely the fits' own drift
// along the route (depth, a bend) than leakage. Before, the rate was
// reported only where the fitted fall across the route reached
// attFallMin: a 1 km main leaking at 0.100 per km, each station's current
// to 0.15%, read 9.52-9.73 ± 0.08% per km on three seeds of five and no
// rate on the other two (ln-fall 0.0998 and 0.0993), and a main leaking
// a few per cent per km surveyed a km a day never got one (review
// rv27b).
const attRateMin = 1e-5

// attenuation fits ln |I| = c_k + b x by weighted least squares over the
// stations of u (every current of one sign, currentSign), with one level c_k for each
// stretch between the intervals marked in isStep (nil: one level) and a
// shared slope b, each station weighted by (I / sigma)². It returns b, its
// sigma (scaled up by the Birge ratio when the stations scatter more than
// their sigmas) and ok false when the currents are not all of one sign
// (or one is zero) or there are
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
	sign := currentSign(u)
	if sign == 0 {
		return 0, 0, 0, nil, false
	}
	for i, p := range u {
		if !(p.CurrentSigma > 0) {
			return 0, 0, 0, nil, false
		}
		y[i] = math.Log(sign * p.Current)
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
		if p.Problem != "" || p.strained || p.Current == 0 || !(p.CurrentSigma > 0) {
			continue
		}
		if p.CurrentSigma/math.Abs(p.Current) <= attPrecise*fall {
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

// currentSign returns 1 when every current of u is positive, -1 when
// every one is negative, and 0 otherwise (a current of zero, or both
// signs). A DC current is signed along increasing chainage, so the same
// main carries a negative current wherever it flows toward the route's
// start: its magnitude falls or rises as a positive one's does, and is
// fitted the same way. Before, only positive currents were fitted, and a
// leaking main whose current flowed toward the start had no attenuation
// finding and false current steps near its ends (found in review).
func currentSign(u []*Placed) float64 {
	var pos, neg int
	for _, p := range u {
		switch {
		case p.Current > 0:
			pos++
		case p.Current < 0:
			neg++
		default:
			return 0
		}
	}
	switch {
	case pos == len(u) && pos > 0:
		return 1
	case neg == len(u) && neg > 0:
		return -1
	}
	return 0
}

// logCurrents returns copies of u with the logarithm of each current's
// magnitude and its sigma relative to the magnitude, for the interval
// tests (every current of u of one sign: currentSign).
func logCurrents(u []*Placed) []*Placed {
	out := make([]*Placed, len(u))
	cp := make([]Placed, len(u))
	for i, p := range u {
		cp[i] = *p
		cp[i].Current = math.Log(math.Abs(p.Current))
		cp[i].CurrentSigma = p.CurrentSigma / math.Abs(p.Current)
		out[i] = &cp[i]
	}
	return out
}

// useLogTrend says whether the intervals of u are tested in log current:
// every current of one sign, the fall across the route fitted with a
// shared rate (and a level of its own between the intervals marked in
// isStep; nil: one level) at least attFallMin and beyond k of its sigma,
// and each stretch between those intervals, fitted as an exponential of
// its own, a fit (chi-square per degree of freedom at most attChiMax)
// better than each fitted as a straight line in current. With no
// interval marked that is one exponential for the whole route. Between
// steps each stretch has a rate of its own: where a defect takes a fixed
// current, the stretch past it falls by a larger share (0.08 A taken from
// a 1.8 A main leaking at 4e-3 per metre: chi-square per degree of
// freedom 18-19 with one shared rate).
func useLogTrend(u []*Placed, isStep []bool, k float64) bool {
	b, ok := logFits(u, isStep, k)
	return ok && attResolved(u, b)
}

// logFits is useLogTrend but for the stations' resolving the fall
// (attResolved), with the shared rate b per metre.
func logFits(u []*Placed, isStep []bool, k float64) (b float64, ok bool) {
	if len(u) < 2 {
		return 0, false
	}
	b, sb, ok := attenuation(u, isStep)
	span := u[len(u)-1].Chainage - u[0].Chainage
	if !ok || !(math.Abs(b)*span >= attFallMin) || !(math.Abs(b) > k*sb) {
		return 0, false
	}
	chi, dof, ok := stretchChi(u, isStep, true)
	if !ok || dof < 1 || !(chi <= attChiMax*float64(dof)) {
		return 0, false
	}
	lin, _, ok := stretchChi(u, isStep, false)
	return b, ok && chi < lin
}

// stretchChi fits each stretch of u between the intervals marked in
// isStep (nil: the whole of u) with a straight line of its own by
// weighted least squares, in ln |I| (each station weighted by
// (I / sigma)²) when inLog, else in I, and returns the summed chi-square
// and its degrees of freedom (the stations less two for each stretch,
// one for a stretch of a single station).
func stretchChi(u []*Placed, isStep []bool, inLog bool) (chi float64, dof int, ok bool) {
	sign := currentSign(u)
	if inLog && sign == 0 {
		return 0, 0, false
	}
	dof = len(u)
	for lo := 0; lo < len(u); {
		hi := lo + 1
		for hi < len(u) && (isStep == nil || !isStep[hi-1]) {
			hi++
		}
		var sw, sx, sy, sxx, sxy float64
		ys := make([]float64, hi-lo)
		ws := make([]float64, hi-lo)
		for i := lo; i < hi; i++ {
			p := u[i]
			if !(p.CurrentSigma > 0) {
				return 0, 0, false
			}
			y, w := p.Current, 1/(p.CurrentSigma*p.CurrentSigma)
			if inLog {
				y, w = math.Log(sign*p.Current), math.Pow(p.Current/p.CurrentSigma, 2)
			}
			ys[i-lo], ws[i-lo] = y, w
			sw, sx, sy = sw+w, sx+w*p.Chainage, sy+w*y
		}
		mx, my := sx/sw, sy/sw
		for i := lo; i < hi; i++ {
			dx := u[i].Chainage - mx
			sxx += ws[i-lo] * dx * dx
			sxy += ws[i-lo] * dx * (ys[i-lo] - my)
		}
		g := 0.0
		if sxx > 0 {
			g = sxy / sxx
		}
		for i := lo; i < hi; i++ {
			r := ys[i-lo] - my - g*(u[i].Chainage-mx)
			chi += ws[i-lo] * r * r
		}
		dof -= min(hi-lo, 2)
		lo = hi
	}
	return chi, dof, true
}

// logTrendFor says whether the intervals of u are tested in log current
// (steps): where an exponential with no steps fits the whole route
// (useLogTrend), or else where the route's steps, searched in log
// current, leave an exponential with a level of its own between them that
// fits. The steps found are sized against that exponential (plateauExp).
// A coating defect on a main that also leaks evenly spoils the fit of an
// exponential without steps; tested against a straight-line trend, the
// curve near the route's ends had given phantom "current leaving" steps
// and the defect's own drop, 17 sigma beyond the curve, was lost in them
// ("findings: none" on a 400 m main leaking at 3e-3 per metre with 0.08 A
// taken at a defect; found in review).
func logTrendFor(u []*Placed, set *Settings) bool {
	k := set.stepK()
	if set.trendWindow() <= 0 || currentSign(u) == 0 {
		return false
	}
	if useLogTrend(u, nil, k) {
		return true
	}
	// Only where every current is many times its sigma: the logarithm of
	// a current within a few sigma of zero is skewed, and a loss of the
	// whole current through a transition several stations wide read in
	// log current as a steady fall of 7-16% per metre between steps
	// found where there were none (the go-and-return pair of
	// TestShortRouteSpreadStepMonteCarlo).
	for _, p := range u {
		if !(p.CurrentSigma <= attMaxRelSigma*math.Abs(p.Current)) {
			return false
		}
	}
	d := detect(logCurrents(u), set)
	if !stepped(d.isStep) {
		return false
	}
	// The steady fall is judged on the stations clear of every step
	// found: a loss's transition reaches a station or two beyond its
	// bracket (the semi-infinite line, plateau.go), and read in log
	// current its tail passed for a fall of 11% across a 24 m route
	// (TestLeakLocationSigmaCalibrated's 2 A loss from 10 A).
	clear, clearStep := clearOfSteps(u, d.isStep)
	// Whether the stations resolve the fall's shape is judged on them
	// all: those left out are only near the steps (a gap of 160 m where
	// two steps were found 60 m apart on the 400 m pipe had refused it).
	b, ok := logFits(clear, clearStep, k)
	return ok && attResolved(u, b)
}

// attStepReach is how many stations each side of a step are left out
// when the route's steady fall is judged (logTrendFor): the bracketing
// station and the next beyond it. The rate reported leaves out fewer
// (besideSteps).
const attStepReach = 2

// clearOfSteps returns the stations of u more than attStepReach stations
// from every interval marked in isStep (those nearer read part of the
// step: the semi-infinite line, plateau.go), with a step marked between
// successive stations returned wherever a marked interval lies between
// them.
func clearOfSteps(u []*Placed, isStep []bool) ([]*Placed, []bool) {
	drop := make([]bool, len(u))
	for j, st := range isStep {
		if st {
			for i := max(j-attStepReach+1, 0); i <= min(j+attStepReach, len(u)-1); i++ {
				drop[i] = true
			}
		}
	}
	return keepUndropped(u, isStep, drop)
}

// attReachDepths is how far, in depths of the conductor, a station
// beyond a step's bracketing station may still read part of the step
// when the rate is fitted (besideSteps): a traverse 5 m from a coating
// defect 1.3 m deep, about four depths, reads a tenth of it (plateau.go
// nearStation); one farther off reads less.
const attReachDepths = 4

// besideSteps returns the stations of u that read none of a step marked
// in isStep, for the rate's fit (attenuationFinding): it leaves out the
// stations that straddle each step (those bracketing a marked interval,
// and any inside a run of them) and, beyond them, those within
// attReachDepths of their depth of the bracketing station on their side,
// with a step marked between successive stations returned wherever a
// marked interval lies between them. On a route of stations a few depths
// apart only the bracketing ones are left out. Before, two stations each
// side of every step were (clearOfSteps): on a pipe 1.2 m deep with
// traverses 10 m apart and three coating defects that took 12 of 21
// stations, and the rate fitted on the 9 left, 2-3 stations to a level,
// had a sigma too wide for its 18% per 100 m fall to pass StepK of it,
// so no rate was reported at all (found in review, simulated).
func besideSteps(u []*Placed, isStep []bool) ([]*Placed, []bool) {
	drop := make([]bool, len(u))
	for j, st := range isStep {
		if !st {
			continue
		}
		drop[j], drop[j+1] = true, true
		// Beyond the bracket, before and after the step.
		for i := j - 1; i >= 0 && readsStep(u[i], u[j]); i-- {
			drop[i] = true
		}
		for i := j + 2; i < len(u) && readsStep(u[i], u[j+1]); i++ {
			drop[i] = true
		}
	}
	return keepUndropped(u, isStep, drop)
}

// readsStep says whether station p lies within attReachDepths of its depth of
// the bracketing station q (so nearer still to the step beyond q).
func readsStep(p, q *Placed) bool {
	return p.Depth > 0 && math.Abs(p.Chainage-q.Chainage) < attReachDepths*p.Depth
}

// keepUndropped returns the stations of u not marked in drop, with a step
// marked between successive stations returned wherever an interval
// marked in isStep lies between them.
func keepUndropped(u []*Placed, isStep []bool, drop []bool) ([]*Placed, []bool) {
	var clear []*Placed
	var clearStep []bool
	cut := false // a step since the last station kept
	for i, p := range u {
		if i > 0 && isStep[i-1] {
			cut = true
		}
		if drop[i] {
			continue
		}
		if len(clear) > 0 {
			clearStep = append(clearStep, cut)
		}
		clear = append(clear, p)
		cut = false
	}
	return clear, clearStep
}

// attMaxRelSigma is the largest relative sigma of a station's current for
// which a route with steps is searched in log current (logTrendFor): at a
// tenth the logarithm's bias, half the relative variance, is half a per
// cent.
const attMaxRelSigma = 0.1

// stepped says whether any interval is marked in isStep.
func stepped(isStep []bool) bool {
	for _, s := range isStep {
		if s {
			return true
		}
	}
	return false
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
// (chi-square per degree of freedom at most attChiMax) and the rate is at
// least attRateMin and beyond StepK of its sigma, whatever the fall across
// the route.
func attenuationFinding(u []*Placed, isStep []bool, set *Settings) (Finding, bool) {
	// The rate is fitted without the stations beside the steps
	// (besideSteps): the two either side of a step each read part of it
	// (a station 5 m before a coating defect on a pipe 1.5 m below the
	// sensors low by 2-4 sigma, the one 5 m past it high by as much), and
	// a low end to one stretch and a high start to the next both steepen
	// the shared rate: a pipe leaking 4.88% per 100 m with one defect
	// read 5.2-6.3% on ten seeds out of ten, at up to 3 sigma (found in
	// review, simulated).
	all := u
	near, nsteps := 0, 0
	for j, s := range isStep {
		if s && (j == 0 || !isStep[j-1]) {
			nsteps++ // a run of marked intervals is one step's bracket
		}
	}
	if nsteps > 0 {
		cu, cs := besideSteps(u, isStep)
		near = len(u) - len(cu)
		u, isStep = cu, cs
	}
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
	if !ok {
		return Finding{}, false
	}
	span := all[len(all)-1].Chainage - all[0].Chainage
	if !(math.Abs(b) > set.stepK()*sb) || !(math.Abs(b) >= attRateMin) || !(chi <= attChiMax) {
		return Finding{}, false
	}
	// Whether the stations resolve the fall's shape is judged on them
	// all (as logTrendFor does): those left out are only near the steps.
	if len(u) < attMinStations || !attResolved(all, b) {
		return Finding{}, false
	}
	// The values per km, whatever the route's length (machine outputs
	// name them by their unit: attenuation_pct_per_km); the message per
	// km on a route of 500 m or more, else per 100 m: a short route's
	// rate taken to a km would read as a guess.
	ak, sak := -b*1000, sb*1000 // per km, of the logarithm of |I|
	// Positive for a fall of the current's magnitude with increasing
	// chainage, negative for a rise: 100 (1 - |I(x + 1 km)| / |I(x)|).
	pctKm := 100 * (1 - math.Exp(-ak))
	spctKm := 100 * math.Exp(-ak) * sak
	dbKm := 20 / math.Ln10 * ak // the magnitude's ratio in dB
	sdbKm := 20 / math.Ln10 * sak
	per, unit := 1000.0, "km"
	if span < 500 {
		per, unit = 100, "100 m"
	}
	a, sa := -b*per, sb*per
	pct := 100 * (1 - math.Exp(-a))
	spct := 100 * math.Exp(-a) * sa
	db := 20 / math.Ln10 * a
	sdb := 20 / math.Ln10 * sa
	first, last := all[0], all[len(all)-1]
	leak := "current leaking away evenly along the conductor (a coating's leakage to earth, or an earthed cable's), which is gradual and no dig site"
	join := "current joining evenly along the conductor"
	subject, verb, what := "the current", "falls", leak
	if a < 0 {
		verb, what = "rises", join+", or the route's chainage running against the flow"
	}
	if sign := currentSign(u); sign < 0 && !first.AC && !first.PairNet {
		// A DC current signed negative flows toward decreasing
		// chainage: read in the way it flows, a magnitude that falls
		// along the chainage grows, and one that rises falls (as the
		// steps are read; steps.go).
		subject = "the current's magnitude"
		if a > 0 {
			what = "the current flows toward decreasing chainage (it is signed negative), so it grows in the direction it flows: " + join + " (current taken up from earth along its length), which is gradual and no dig site"
		} else {
			what = "the current flows toward decreasing chainage (it is signed negative), so it falls in the direction it flows: " + leak
		}
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
	if near > 0 {
		how = append(how, fmt.Sprintf("the %d %s beside %s, which read part of %s, left out", near, plural(near, "station", "stations"), plural(nsteps, "the step", "the steps"), plural(nsteps, "it", "them")))
	}
	if left > 0 {
		how = append(how, fmt.Sprintf("%d %s far off it left out", left, plural(left, "station", "stations")))
	}
	steps := ""
	if len(how) > 0 {
		steps = " (" + strings.Join(how, "; ") + ")"
	}
	// Where the message gives the rate per 100 m, it gives the values'
	// per km beside it: one row read "29.99 ± 0.14% per 100 m" beside a
	// value of 97.172 ± 0.058 %/km, the same fall compounded over 1 km
	// (found in review).
	perKm := ""
	if unit != "km" {
		perKm = fmt.Sprintf("; compounded over 1 km, the values' unit: %s%% and %s dB per km", pm(math.Abs(pctKm), spctKm), pm(math.Abs(dbKm), sdbKm))
	}
	return Finding{
		Kind:     KindAttenuation,
		Severity: SeverityInfo,
		From:     first.Chainage, To: last.Chainage,
		Position: pointAt(all, (first.Chainage+last.Chainage)/2), // on the route, midway
		Keys:     []string{first.Key, last.Key},
		Message: fmt.Sprintf("%s %s steadily along the route, by %s%% per %s (%s dB per %s, the current's ratio%s) from %s to %s, fitted as an exponential%s: %s",
			subject, verb, pm(math.Abs(pct), spct), unit, pm(math.Abs(db), sdb), unit, perKm, first.Key, last.Key, steps, what),
		// Both named "attenuation", told apart by their units (the
		// GeoJSON properties attenuation_pct_per_km and
		// attenuation_db_per_km).
		Values: []Value{
			{Name: "attenuation", Value: pctKm, Sigma: spctKm, Unit: "%/km"},
			{Name: "attenuation", Value: dbKm, Sigma: sdbKm, Unit: "dB/km"},
		},
	}, true
}
