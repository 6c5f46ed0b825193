package main

import (
	"cmp"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"strings"

	"undercurrent/inverse"
)

// Phase ramps.
//
// A window's phasor is the field demodulated at the frequency used, f. When
// the field runs at f + δf (a frequency estimated from the log is off by
// its sigma, a grid wanders between the frequency check and a traverse),
// every phasor turns by 2π δf t: across a group walked in T seconds, by
// 360 δf T degrees. One complex current per line cannot follow that turn.
// At high signal to noise even a degree matters: on a walk over a 20 A
// cable at 50.05 Hz demodulated at 50.0505 Hz (a 1.1° turn per 6 s
// traverse) the residual was 3.6 nT against 0.12 nT at the exact
// frequency, so every sigma came out 30 times too wide, and the phases of
// neighbouring traverses differed by 2° each; on a coil log it left a weak
// line of 1% of the current in quadrature, followed as a second conductor.
//
// fitRamp fits each AC group with a phase ramp as well: the phasors are
// turned back by e^{-i 2π δf (t - t̄)} (t̄ the group's mean window time, so
// the phases reported stay those at the group's middle) and δf is chosen to
// minimise the fit's residual with the group's line count held (a
// parabola through fits at 0, a linearised estimate and twice it, then
// parabolas centred on its minimum until that settles: refineRamp). The
// ramp is kept only when it pays for
// itself: the group's refit (with the count chosen afresh) must lower the
// Bayesian information criterion by more than its extra parameter costs,
// and δf must be rampSigmas of its own sigma away from 0. A ramp too weak
// to estimate (the linearised estimate within rampScreen of its sigma)
// costs nothing but that estimate. The ramp's sigma comes from the
// curvature of the last parabola, centred on the minimum; the other parameters' sigmas are those at the
// fitted ramp (they hardly correlate with it: the ramp is centred on the
// group's middle and acts in quadrature).
//
// Once every group is fitted, ramps that are the lines' model missing the
// field rather than the frequency are taken back: those that leave their
// fit still missing by far more than the survey's noise, having taken out
// under a third of that misfit (dropMisfitRamps), small ones kept by a
// traverse whose neighbours in time kept none (dropLoneRamps), and small
// ones that turn with the walking direction (dropWalkRamps).
//
// Coil logs are fitted without a ramp: a moving coil's voltage also holds
// its motion through the field, (v·∇)B, which the conversion at ω leaves as
// a quadrature term -i (v·∇)B/ω; across a line at distance r it turns the
// phase by about v² t/(ω r²), the same way whichever way the traverse is
// walked: a ramp of v²/(2π ω r²) Hz (0.0004 Hz on the coil walk at 1 m/s,
// which a ramp took for a frequency offset, moving the phases 0.12°, ten
// of their sigmas).

const (
	// rampMinWindows is the fewest windows a group needs for a ramp to be
	// fitted (it costs one parameter).
	rampMinWindows = 8
	// rampScreen is how many of its sigmas the linearised estimate must be
	// from 0 before the ramp is searched for.
	rampScreen = 2
	// rampSigmas is how many of its sigmas a fitted ramp must be from 0 to
	// be kept (two-sided 0.1%).
	rampSigmas = 3.29
	// rampMaxDegrees bounds the turn searched for across a group: the
	// frequency check acts on errors that turn the phase by more than
	// freqCheckDegrees.
	rampMaxDegrees = 20
	// rampSearchSteps bounds the parabolas of the search.
	rampSearchSteps = 6
	// rampRefineSteps bounds the parabolas centred on the search's minimum
	// (rampSearch), and rampRefineSigmas is their half-width and
	// rampRefineTol the move below which the minimum has settled, both in
	// the ramp's sigmas.
	rampRefineSteps  = 6
	rampRefineSigmas = 3
	rampRefineTol    = 0.1
)

// groupRamp is the phase ramp fitted to a group.
type groupRamp struct {
	hz, sigma float64 // frequency offset and its one-sigma, Hz
	mid       float64 // time the ramp is centred on, s
	turn      float64 // turn across the group, degrees
	// held is the residual sum of squares, nT², of the group's fit
	// without a ramp at the ramped fit's line count, heldDOF its degrees
	// of freedom; NaN when that fit failed.
	held    float64
	heldDOF int
}

// turned returns the phasors ps of windows at times ts turned back by a
// ramp of hz about mid, and by a frequency drifting at chirp Hz/s from
// it (followDrift): the phase 2π (hz τ + chirp τ²/2), τ = t - mid.
func turned(ps [][3]complex128, ts []float64, hz, chirp, mid float64) [][3]complex128 {
	out := make([][3]complex128, len(ps))
	for i, p := range ps {
		tau := ts[i] - mid
		r := cmplx.Rect(1, -2*math.Pi*(hz+chirp*tau/2)*tau)
		for k := range p {
			out[i][k] = p[k] * r
		}
	}
	return out
}

// rss is the sum of squares of a fit's residual phasors (real and
// imaginary parts), nT².
func rss(res *inverse.Result) float64 {
	var s float64
	for _, r := range res.ResidualPhasors {
		for _, v := range r {
			s += real(v)*real(v) + imag(v)*imag(v)
		}
	}
	return s
}

// rampStep is the linearised ramp, rad/s, that would best turn res's
// model into its data (phasors at times ts about mid): the data are the
// model turned by a small angle a τ, r ≈ i a τ m, so
// a = Σ τ Im(m* r) / Σ τ² |m|², with sigma σ / sqrt(Σ τ² |m|²) for a noise
// σ per real component (the model's own freedom to follow the turn
// ignored: the step only seeds the search). ok is false when there is
// nothing to go by.
func rampStep(res *inverse.Result, ts []float64, mid float64) (a, sigma float64, ok bool) {
	var num, den float64
	for i, m := range res.PredictedPhasors {
		tau := ts[i] - mid
		for k := range m {
			r := res.ResidualPhasors[i][k]
			num += tau * (real(m[k])*imag(r) - imag(m[k])*real(r))
			den += tau * tau * (real(m[k])*real(m[k]) + imag(m[k])*imag(m[k]))
		}
	}
	if !(den > 0) || !(res.Sigma > 0) {
		return 0, 0, false
	}
	return num / den, res.Sigma / math.Sqrt(den), true
}

// looseTurnBound sets g.looseTurn, for a group whose frequency is not
// known well enough for one phase (g.loose), once its fit (and ramp
// search) is done: the turn across the group, degrees, that its fit still
// allows at freqLooseSigmas: with a ramp kept, that of the ramp's sigma;
// without, that of the linearised ramp (rampStep) plus its sigmas; +Inf
// when the fit gives nothing to go by.
func looseTurnBound(g *group) {
	if !g.loose {
		return
	}
	g.looseTurn = math.Inf(1)
	if g.err != nil || g.res == nil || len(g.times) < 2 || len(g.times) != len(g.res.PredictedPhasors) {
		return
	}
	mid, span := timesMidSpan(g.times)
	if g.ramp != nil {
		if g.ramp.sigma > 0 {
			g.looseTurn = 360 * freqLooseSigmas * g.ramp.sigma * span
		}
		return
	}
	if a, sa, ok := rampStep(g.res, g.times, mid); ok {
		g.looseTurn = 360 * (math.Abs(a) + freqLooseSigmas*sa) / (2 * math.Pi) * span
	}
}

// timesMidSpan is the mean of times (not empty) and their span.
func timesMidSpan(times []float64) (mid, span float64) {
	lo, hi := times[0], times[0]
	for _, t := range times {
		mid += t
		lo, hi = math.Min(lo, t), math.Max(hi, t)
	}
	return mid / float64(len(times)), hi - lo
}

// fitRamp fits g (fitted already without a ramp, g.res) with a phase
// ramp, and keeps it (g.ramp, g.res) when it pays for itself; see above.
// The search starts at 0, or at g.hint (the offset of the group's own
// frequency, from its windows) when the fit there is better: a grid that
// wandered 0.03 Hz turns the phase 65° across a 6 s traverse, beyond what
// the linearised step finds from 0, while a group whose windows' phases
// turn because conductors of different phase overlap along it (the
// windows then seem to run 0.03 Hz off, walked one way) fits worse there.
//
// The ramp is searched with the group's line count held, and, for a
// group demodulated at a frequency estimated from the log, also with one
// line fewer: without a ramp the count may already hold an extra line
// that absorbs the turn (an 11 A line at 1.8 m beside a three-phase
// circuit 1 mHz off the frequency demodulated at, whose ramp then seemed
// too weak to search for; found in review), so that the ramp only pays
// for itself once that line goes. Each search's ramp is refitted with the
// count chosen afresh, and the one that lowers the information criterion
// most is kept.
func fitRamp(g *group, set *inverse.Settings, noise float64) {
	res := g.res
	if g.err != nil || res == nil || len(res.Sources) == 0 || len(g.times) < rampMinWindows ||
		len(g.times) != len(g.phasors) || len(res.PredictedPhasors) != len(g.phasors) {
		return
	}
	mid, span := timesMidSpan(g.times)
	if !(span > 0) {
		return
	}
	count := 0
	for _, s := range res.Sources {
		if s.Kind == "line" {
			count++
		}
	}
	fitAt := func(hz float64, s *inverse.Settings) (*inverse.Result, float64) {
		p := g.problem(true, noise)
		p.Phasors = turned(g.phasors, g.times, hz, g.chirp, mid)
		r, err := inverse.FitLines(p, s)
		if err != nil || r == nil || len(r.Sources) == 0 {
			return nil, math.Inf(1)
		}
		return r, rss(r)
	}
	// The criterion: a refit's residual against the fit without a ramp,
	// each with the parameters it took (the ramp one more).
	n := 6 * len(g.phasors)
	s0 := rss(res)
	k0 := n - res.DOF
	gainOf := func(r1 *inverse.Result) (gain, cost float64) {
		if noise > 0 {
			gain = (s0 - rss(r1)) / (res.Sigma * res.Sigma)
		} else {
			gain = float64(n) * math.Log(s0/rss(r1))
		}
		return gain, float64(n-r1.DOF+1-k0) * math.Log(float64(n))
	}
	var keep *inverse.Result
	var keepHz, keepSigma, keepGain float64
	// The search with one line fewer runs only where the group was
	// demodulated at a frequency estimated from the log (the phase then
	// turns by the estimate's error), or at one not known well enough for
	// one phase per group (group.loose): run for every AC group it made the
	// demo four times slower and kept ramps of 3e-5 Hz at exactly 50 Hz
	// that moved a 15 A cable's current 3-6 sigma (found in review).
	least := max(count, 1)
	if g.estimated || g.loose {
		least = max(count-1, 1)
	}
	for c := max(count, 1); c >= least; c-- {
		held := *set
		held.Count = c
		r0 := res // res has count lines
		if c != count {
			if r0, _ = fitAt(0, &held); r0 == nil {
				continue
			}
		}
		best, sigmaHz, ok := rampSearch(g, r0, &held, fitAt, mid, span, noise)
		if !ok {
			continue
		}
		r1, _ := fitAt(best, set)
		if r1 == nil {
			continue
		}
		gain, cost := gainOf(r1)
		if gain > cost && (keep == nil || gain-cost > keepGain) {
			keep, keepHz, keepSigma, keepGain = r1, best, sigmaHz, gain-cost
		}
	}
	if keep == nil {
		return
	}
	g.res0, g.res = res, keep
	g.ramp = &groupRamp{hz: keepHz, sigma: keepSigma, mid: mid, turn: 360 * keepHz * span, held: math.NaN()}
	// The fit without a ramp at the ramped fit's line count, for
	// dropMisfitRamps: the refit may hold a line more than res, which
	// takes out misfit of its own.
	held := *set
	held.Count = 0
	for _, s := range keep.Sources {
		if s.Kind == "line" {
			held.Count++
		}
	}
	if held.Count == count {
		g.ramp.held, g.ramp.heldDOF = rss(res), res.DOF
	} else if r, s := fitAt(0, &held); r != nil {
		g.ramp.held, g.ramp.heldDOF = s, r.DOF
	}
	keep.Notes = append(keep.Notes, fmt.Sprintf("the phase turned %.2g° across the group (%.3g s): fitted as a frequency offset of %s Hz from the one demodulated at, the field's frequency being off it or wandering; phases are those at the group's middle", g.ramp.turn, span, plusMinusHz(keepHz, keepSigma)))
}

// rampSearch searches for g's ramp with the line count of held, starting
// from r0 (g's fit at that count without a ramp): the ramp, Hz, and its
// sigma; ok is false when there is none worth keeping (too weak to search
// for, no minimum found, no better than r0, or within rampSigmas of its
// sigma of 0). fitAt fits g's phasors turned back by a ramp about mid.
func rampSearch(g *group, r0 *inverse.Result, held *inverse.Settings, fitAt func(float64, *inverse.Settings) (*inverse.Result, float64), mid, span, noise float64) (best, sigmaHz float64, ok bool) {
	s0 := rss(r0)
	centre, sc, rc := 0.0, s0, r0
	if g.hint != 0 {
		if r, s := fitAt(g.hint, held); s < s0 {
			centre, sc, rc = g.hint, s, r
		}
	}
	a, sa, ok := rampStep(rc, g.times, mid)
	if !ok || (centre == 0 && !g.estimated && !g.loose && math.Abs(a) < rampScreen*sa) {
		return 0, 0, false
	}
	// The step: the linearised estimate, at least three of its sigmas (so
	// that the parabola's curvature stands above the fits' rounding) and at
	// most the bound. The search may go as far as the frequency check's
	// one-way limit (freqCheckUntrustedHz) beyond which it acts itself, or
	// rampMaxDegrees across the group if that is further.
	// Where the frequency is not known well enough for one phase per
	// group, as far as its uncertainty reaches (group.rampBound).
	bound := math.Max(math.Max(rampMaxDegrees/360.0/span, 2*freqCheckUntrustedHz), g.rampBound) // Hz
	d := math.Copysign(math.Min(bound, math.Max(math.Abs(a), 3*sa)/(2*math.Pi)), a)
	// Parabolas through (centre, sc), (centre + d, s1), (centre + 2 d, s2),
	// sc + b u + c u² at centre + d u, moving the centre on while the
	// minimum lies beyond them: the linearised estimate can fall far short
	// (7% of a 0.003 Hz offset for a cable 3.5 m off the middle of the
	// traverses, where the geometry absorbs much of the turn; found in
	// review, when one parabola was all).
	var c float64
	found := false
	best = centre
	for range rampSearchSteps {
		_, s1 := fitAt(centre+d, held)
		_, s2 := fitAt(centre+2*d, held)
		if math.IsInf(s1, 0) || math.IsInf(s2, 0) {
			return 0, 0, false
		}
		c = (s2 - 2*s1 + sc) / 2
		b := s1 - sc - c
		u := 8.0 // not convex here: on along the descent
		if c > 0 {
			u = -b / (2 * c)
		} else if s2 > sc {
			u = -8
		}
		if c > 0 && u >= -1 && u <= 3 {
			best, found = centre+u*d, true
			break
		}
		next := math.Max(-bound, math.Min(bound, centre+math.Max(-8, math.Min(8, u))*d))
		if next == centre {
			break
		}
		centre = next
		if _, sc = fitAt(centre, held); math.IsInf(sc, 0) {
			return 0, 0, false
		}
	}
	if !found || !(c > 0) {
		return 0, 0, false
	}
	_, sb := fitAt(best, held)
	if !(sb < s0) {
		return 0, 0, false
	}
	sigma2 := r0.Sigma * r0.Sigma
	if noise == 0 {
		sigma2 = sb / float64(r0.DOF-1)
	}
	sigmaHz = math.Sqrt(sigma2/c) * math.Abs(d)
	best, sb, sigmaHz = refineRamp(best, sb, sigmaHz, sigma2, func(hz float64) float64 {
		_, s := fitAt(hz, held)
		return s
	})
	if !(sb < s0) {
		return 0, 0, false
	}
	if noise == 0 {
		// The sigma of the refined minimum's residual, as above.
		sigmaHz *= math.Sqrt(sb / float64(r0.DOF-1) / sigma2)
	}
	if !(math.Abs(best) > rampSigmas*sigmaHz) {
		return 0, 0, false
	}
	return best, sigmaHz, true
}

// refineRamp settles the minimum of a ramp search, best Hz with residual
// sb (nT²) and sigma sigmaHz from the search's parabola, by parabolas
// through three fits centred on it, rampRefineSigmas of its sigma either
// side, moving to each one's vertex (at most one half-width a step: the
// search's own bound is not applied, since its start, a group's own
// frequency, may lie beyond it) until the move is under rampRefineTol of
// the sigma. The sigma is that of the last parabola's curvature: the ramp
// whose residual rises by one noise variance sigma2 (nT²) above the
// minimum, Δχ² = 1 for the one parameter with the others refitted. ss is
// the group's residual at a ramp, Hz (+Inf when its fit fails). A failed
// fit, a parabola that is not convex or a vertex that fits no better
// keeps what was found so far.
//
// The search's parabola runs through its centre (0, or the group's hint)
// and one or two steps of the linearised ramp beyond, which can fall far
// short of the minimum (the lines' geometry takes up part of the turn),
// and the residual is not a parabola over tens of degrees of turn: on
// 32 s traverses over a 200 nT cable at 60 nT of reading noise,
// demodulated 0.015 Hz off (an 86° turn), its vertex stopped at 0.009 to
// 0.012 Hz, 11 to 18 of its sigmas short of the simulated offset, while
// the residual's own minimum lay at the offset (found in review).
func refineRamp(best, sb, sigmaHz, sigma2 float64, ss func(hz float64) float64) (float64, float64, float64) {
	if !(sigmaHz > 0) {
		return best, sb, sigmaHz
	}
	for range rampRefineSteps {
		h := rampRefineSigmas * sigmaHz
		lo, hi := ss(best-h), ss(best+h)
		if math.IsInf(lo, 0) || math.IsInf(hi, 0) {
			break
		}
		c := (hi - 2*sb + lo) / 2 // in units of h²
		if !(c > 0) {
			break
		}
		u := math.Max(-1, math.Min(1, (lo-hi)/(4*c)))
		next := best + u*h
		sigmaHz = math.Sqrt(sigma2/c) * h
		if math.Abs(next-best) < rampRefineTol*sigmaHz {
			break
		}
		s := ss(next)
		if math.IsInf(s, 0) || !(s < sb) {
			break
		}
		best, sb = next, s
	}
	return best, sb, sigmaHz
}

// dropMisfitRamps takes back ramps that leave their group's fit missing
// the readings by far more than the survey's noise. A frequency offset is
// a turn in time alone: once the ramp takes it out, the group's fit meets
// the noise as the other groups' do (TestLocatePhaseRamp: 3.6 nT before,
// 0.12 nT after, the exact frequency's). Where the lines' model misses
// the field itself (the end of a conductor, a tee where current leaves, a
// bend), its misfit changes along the traverse, and since a traverse is
// walked at a steady pace, part of it always lines up with a turn in time:
// the ramp takes out that part, some sigmas of a residual assumed white,
// and is kept. Beside a 20 A cable with 3 A leaving at 90° and a parallel
// 15 A circuit 3 m away, all at exactly 50 Hz, the eight traverses within
// 20 m of the fault kept ramps of 2e-5 to 3.6e-4 Hz (7-15 sigmas) that
// took out only 14-27% of their misfit beyond the noise; the two either
// side of the fault, turning 2.2-2.6° each, raised a false warning that the
// frequency wandered, and the ramps blocked the phasor-step test, so the
// loss was not reported (found in review).
//
// A ramp is kept when its group's fit with it meets the survey's
// reference noise (chi-square per degree of freedom within three of its
// sigmas of 1), or when it takes out at least rampMisfitShare of the
// misfit beyond that noise, against the fit without a ramp at the same
// line count (the refit with a ramp may take a line more, which takes out
// misfit of its own). The reference noise is each group's measured
// noise (the windows' own, group.measuredNoise) times the survey's
// reference ratio: the lower quartile, at least 1, of the groups' misfit
// ratios (as report's yardstick takes it; the AC fits that meet their
// noise miss by about 1.3 times the windows' noise). Groups without
// measured noise are not judged.
func dropMisfitRamps(groups []*group) {
	var ratios []float64
	for _, g := range groups {
		if m := g.measuredNoise(true); g.err == nil && g.res != nil && g.res.DOF > 0 && m > 0 {
			ratios = append(ratios, math.Sqrt(rss(g.res)/float64(g.res.DOF))/m)
		}
	}
	if len(ratios) == 0 {
		return
	}
	slices.Sort(ratios)
	ref := math.Max(1, ratios[int(math.Ceil(0.25*float64(len(ratios))))-1])
	for _, g := range groups {
		m := g.measuredNoise(true)
		if g.ramp == nil || g.res0 == nil || g.res == nil || !(m > 0) || g.res.DOF <= 0 || !(g.ramp.heldDOF > 0) || math.IsNaN(g.ramp.held) {
			continue
		}
		floor2 := ref * ref * m * m
		dof1 := float64(g.res.DOF)
		if rss(g.res)/(dof1*floor2) <= 1+3*math.Sqrt(2/dof1) {
			continue // meets the noise
		}
		e0 := g.ramp.held - float64(g.ramp.heldDOF)*floor2
		e1 := rss(g.res) - dof1*floor2
		if e1 > (1-rampMisfitShare)*e0 {
			g.res, g.res0, g.ramp = g.res0, nil, nil
		}
	}
}

// dropLoneRamps takes back small ramps (turning the phase less than
// freqCheckDegrees across their group) kept by a group whose neighbours in
// time, the groups walked just before and after it, could each take a
// ramp and kept none. The field's frequency is one for the whole log: an
// offset the ramp can measure (a few 1e-6 Hz) is taken to last longer
// than the half minute between traverses, and so to show in the
// neighbours too (a steadily off frequency, TestLocatePhaseRamp, ramps
// every group). A lone small
// ramp is the model's error that dropMisfitRamps leaves because the fit
// with it meets the noise: 22 m from the fault of dropMisfitRamps' survey
// one traverse kept a ramp of 1.6e-5 Hz (0.1°, 8 sigmas) beside
// neighbours with none, which was enough to block the phasor-step test.
// Large ramps (a wandering grid) are not judged.
func dropLoneRamps(groups []*group) {
	var gs []*group
	for _, g := range groups {
		if g.err == nil && g.res != nil && len(g.times) >= rampMinWindows {
			gs = append(gs, g)
		}
	}
	if len(gs) < 2 {
		return
	}
	slices.SortStableFunc(gs, func(a, b *group) int {
		ma, _ := timesMidSpan(a.times)
		mb, _ := timesMidSpan(b.times)
		return cmp.Compare(ma, mb)
	})
	var lone []*group
	for i, g := range gs {
		if g.ramp == nil || g.res0 == nil || math.Abs(g.ramp.turn) >= freqCheckDegrees {
			continue
		}
		if (i == 0 || gs[i-1].ramp == nil) && (i == len(gs)-1 || gs[i+1].ramp == nil) {
			lone = append(lone, g)
		}
	}
	for _, g := range lone {
		g.res, g.res0, g.ramp = g.res0, nil, nil
	}
}

// rampMisfitShare is the least share of its group's misfit beyond the
// reference noise that a ramp must take out to be kept when the fit with
// it still misses (dropMisfitRamps): a frequency offset's ramp takes out
// all of the misfit it caused; the ramps that followed a fault's partial
// field took out 14-27%. Beside a go-and-return pair with a street-light
// cable (TestPairStreetLightNotSwitchedIntoNet) ramps at exactly 50 Hz
// took out 45-50% and are kept: at half, four of them went, and the
// light cable's 1 A fall was then not reported (its stations, nearer
// the truth without the ramps, changed more gradually; not traced).
const rampMisfitShare = 1.0 / 3

// dropWalkRamps takes back small ramps that turn with the walking
// direction. A frequency offset turns the phase the same way whichever way
// a traverse is walked; a turn that reverses with the walking direction is
// the phase changing along the traverses (the lines' model not quite
// following it where conductors of different phase overlap), not the
// frequency. On the demo's exact 50 Hz log four traverses kept ramps of
// ±0.00003-0.00005 Hz (0.1° each), positive on those walked one way and
// negative on the one walked back; with --noise given, twelve. Only ramps
// that turn the phase less than freqCheckDegrees across their group are
// judged: a grid drifting from 50.02 to 49.98 Hz between two traverses
// walked back and forth gives real ramps of opposite sign (43° each),
// which must stay (found in review). When the small ramps come from groups
// walked both ways and at least three quarters of them change sign with
// the direction, every small ramp is taken back (the group keeps its fit
// without one).
func dropWalkRamps(groups []*group) {
	var ref [3]float64
	var walks []float64
	var ramped []*group
	agree := map[float64]int{}
	for _, g := range groups {
		if g.ramp == nil || len(g.points) < 2 || math.Abs(g.ramp.turn) >= freqCheckDegrees {
			continue
		}
		d := sub3(g.points[len(g.points)-1], g.points[0])
		if len(ramped) == 0 {
			ref = d
		}
		walk := math.Copysign(1, d[0]*ref[0]+d[1]*ref[1])
		walks = append(walks, walk)
		agree[math.Copysign(1, g.ramp.hz)*walk]++
		ramped = append(ramped, g)
	}
	if len(ramped) < 2 || !slices.Contains(walks, 1) || !slices.Contains(walks, -1) {
		return
	}
	if 4*max(agree[1], agree[-1]) < 3*len(ramped) {
		return // not mostly reversing with the walk
	}
	for _, g := range ramped {
		g.res, g.res0, g.ramp = g.res0, nil, nil
	}
}

func sub3(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }

// wanderWarning names the groups whose fitted ramp turned the phase more
// than freqCheckDegrees across them: the field's frequency was off the one
// demodulated at, or wandered. "" when none did. When every group that
// could take a ramp took one, two or more, and their offsets agree within
// their sigmas (steadyRamps), the field ran steadily off that frequency
// and the warning says so, with the frequency the ramps put it at: a
// frequency estimated from the windows can be off by more than its sigma
// (the walk over conductors of different phase leaves a small share of
// its own in the windows' frequencies that walking both ways does not
// cancel: 0.002 Hz, 30 of its sigmas, for two cables 120° apart at 49.8 Hz
// demodulated first at 50 Hz, found in review), while the ramps come from
// the lines' own phasors, whose model holds the phase changing along a
// traverse.
func wanderWarning(sv *survey) string {
	var keys []string
	var worst float64
	for _, g := range sv.groups {
		if g.ramp == nil || math.Abs(g.ramp.turn) <= freqCheckDegrees {
			continue
		}
		keys = append(keys, g.key)
		if math.Abs(g.ramp.hz) > math.Abs(worst) {
			worst = g.ramp.hz
		}
	}
	if len(keys) == 0 {
		return ""
	}
	n := len(keys)
	if n > 8 {
		keys = append(keys[:8], "...")
	}
	f := sv.doc.Signal.FrequencyHz
	if off, sigma, estimated, ok := steadyRamps(sv.groups); ok && n >= 2 {
		dec := freqDecimals(sigma)
		why := ""
		if est := estimateSigma(sv.groups); estimated && math.Abs(off) <= estimateWithinSigmas*est {
			// Within the estimate's own uncertainty: the windows' noise,
			// not a bias. Before, the bias was named whatever the offset
			// (a single cable on 32 s traverses at 60 nT of noise, whose
			// estimate was off by 1.5 of its sigma, was said to be off
			// through "the walk over conductors of different phase, or the
			// signal's harmonics"; found in review).
			why = fmt.Sprintf(", so the frequency estimated from single windows was off by %s Hz, within three times its own uncertainty (its sigma ± %.*f Hz): windows of a fraction of a second each fix the frequency far less closely than the lines' fit across a whole group", plusMinusHz(-off, sigma), max(0, 1-int(math.Floor(math.Log10(est)))), est)
		} else if estimated {
			why = fmt.Sprintf(", so the frequency estimated from single windows was off by %s Hz (the walk over conductors of different phase, or the signal's harmonics, can bias single windows beyond their sigmas; the lines' fits hold the phase changing along a traverse)", plusMinusHz(-off, sigma))
		}
		return fmt.Sprintf("in %d group(s) the AC frequency differs from the %.4f Hz demodulated at by the same %s Hz (their phase ramps agree): the field ran steadily at %.*f ± %.*f Hz%s; each of those groups was fitted with a phase ramp, its frequency offset in the group's notes (%s)",
			n, f, plusMinusHz(off, sigma), dec, f+off, dec, sigma, why, strings.Join(keys, ", "))
	}
	return fmt.Sprintf("in %d group(s) the AC frequency differs from the %.4f Hz demodulated at (by up to %+.4f Hz): the frequency was off or wandered during the survey; each of those groups was fitted with a phase ramp, its frequency offset in the group's notes (%s)",
		n, f, worst, strings.Join(keys, ", "))
}

// estimateWithinSigmas is how many of its own sigmas a frequency
// estimated from the windows may be off the groups' ramps for the
// difference to be put down to its noise (wanderWarning).
const estimateWithinSigmas = 3

// estimateSigma is the largest sigma of the frequencies estimated from the
// windows at which groups were demodulated, Hz (0 for none).
func estimateSigma(groups []*group) float64 {
	var s float64
	for _, g := range groups {
		if g.estimated {
			s = math.Max(s, g.estSigma)
		}
	}
	return s
}

// steadyRamps reports whether every AC group that could take a ramp (a fit
// with rampMinWindows windows) took one and the ramps agree: their
// reduced chi-square about their inverse-variance mean within 3 of its
// own sigmas of 1 (sqrt(2/(n-1))). off is that mean, Hz, sigma its sigma
// widened by the square root of the reduced chi-square; estimated is set
// when the groups were demodulated at a frequency estimated from the log.
func steadyRamps(groups []*group) (off, sigma float64, estimated, ok bool) {
	var sw, swf float64
	var hz, w []float64
	for _, g := range groups {
		if g.err != nil || g.res == nil || len(g.times) < rampMinWindows {
			continue
		}
		if g.ramp == nil || !(g.ramp.sigma > 0) {
			return 0, 0, false, false
		}
		wt := 1 / (g.ramp.sigma * g.ramp.sigma)
		hz, w = append(hz, g.ramp.hz), append(w, wt)
		sw += wt
		swf += wt * g.ramp.hz
		estimated = estimated || g.estimated
	}
	if len(hz) < 2 {
		return 0, 0, false, false
	}
	off = swf / sw
	var c2 float64
	for i := range hz {
		c2 += (hz[i] - off) * (hz[i] - off) * w[i]
	}
	dof := float64(len(hz) - 1)
	if c2/dof > 1+3*math.Sqrt(2/dof) {
		return 0, 0, false, false
	}
	return off, math.Sqrt(math.Max(1, c2/dof) / sw), estimated, true
}

// plusMinusHz writes a frequency offset and its sigma to two significant
// digits of the sigma.
func plusMinusHz(v, sigma float64) string {
	d := max(0, 1-int(math.Floor(math.Log10(sigma))))
	return fmt.Sprintf("%+.*f ± %.*f", d, v, d, sigma)
}
