package report

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sort"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// The partner core of a go-and-return pair whose cores the fits resolve.
//
// inverse lists, with each fit, the lines beside the strongest that carry
// the opposite current (inverse.Result.Opposed), nearest first. The route
// took the nearest of them as the strongest core's partner (circuitOf).
// In review a small earth wire 0.48 m from the go core of a healthy 30 A /
// 27 A pair 1 m apart, carrying 0.45 A, was fitted on some traverses and
// not on others: where it was, it became the partner (net current 29.7 A,
// the real return core followed as a further conductor), where it was not
// the return core was (net 2.5 A), and the route warned of three 27 A
// earth faults along a circuit where nothing changes. With the wire near
// quadrature with the go core the "opposite" test itself flipped from
// traverse to traverse, with the same result.
//
// The partner is now chosen as the same conductor along the route:
//
//   - a line carrying less than minPartnerShare of the strongest core's
//     current is not taken as its partner (it returns too little of it to
//     be the circuit's other core: an earth wire, a bond, a line at
//     another phase);
//   - among the lines left, where a fit has more than one, the one whose
//     spacing from the strongest core is nearest the spacing of the
//     partners chosen at the nearest other groups on either side of it
//     (each first taking the
//     line that best balances its strongest core, the least net current);
//     with no other group to go by, the one that best balances.
//
// A group whose partner (its only possible one, or the one nearest the
// neighbours' spacing on either side) lies at a spacing that differs from
// its neighbours' partners' on each side along the route by over a quarter
// and three sigma (partnerOdd, neighbourSpacing) is marked, and a change in net
// current set against it is worded as resting on a change of partner and
// reported a severity lower (caveatPartnerSteps): the net current there is
// not the same pair's.

// minPartnerShare is the least share of the strongest core's current a line
// must carry to be taken as its partner in a go-and-return pair.
const minPartnerShare = 0.1

// partnerNeighbours is the number of nearest other groups whose partners'
// spacing sets the spacing a group's partner is chosen by.
const partnerNeighbours = 4

// partnerCandidates returns the indices into f.Result.Opposed of the lines
// that may be the partner of the strongest line of fit f (see above and
// circuitOf), the best balanced (least net current) first; nil when the
// fit failed, found no current in its strongest line, or an unresolved
// pair holds it.
func partnerCandidates(f *Fit, ac bool) []int {
	res := f.Result
	if res == nil || len(res.Sources) == 0 || !(res.Status.Converged() || res.Status == inverse.Stalled) || pairOf(res) != nil {
		return nil
	}
	s0 := &res.Sources[0]
	if s0.Kind == KindDipole || !sound(s0) || NoCurrent(s0, ac) {
		return nil
	}
	zc := centroid(f.Problem.Points)[2]
	var out []int
	for i := range res.Opposed {
		p := &res.Opposed[i]
		j := p.Lines[1]
		if p.Lines[0] != 0 {
			j = p.Lines[0]
		}
		if j < 0 || j >= len(res.Sources) {
			continue
		}
		o := &res.Sources[j]
		if o.Kind == KindDipole || !sound(o) || NoCurrent(o, ac) || !(p.Spacing <= zc-p.Point[2]) {
			continue
		}
		if !(math.Abs(o.Current) >= minPartnerShare*math.Abs(s0.Current)) {
			continue
		}
		out = append(out, i)
	}
	sort.SliceStable(out, func(a, b int) bool {
		return math.Abs(res.Opposed[out[a]].NetCurrent) < math.Abs(res.Opposed[out[b]].NetCurrent)
	})
	return out
}

// choosePartners sets the partner of each fit's strongest line (Fit.partner,
// an index into Result.Opposed, -1 for none) and marks the fits whose
// partner lies at a spacing unlike their neighbours' (Fit.partnerOdd); see
// above. fits is changed in place: the caller passes its own copy.
func choosePartners(fits []Fit, ac bool) {
	cands := make([][]int, len(fits))
	first := make([]float64, len(fits)) // spacing of the best balanced partner
	for i := range fits {
		fits[i].partner, fits[i].partnerChosen, fits[i].partnerOdd = -1, true, ""
		cands[i] = partnerCandidates(&fits[i], ac)
		if len(cands[i]) > 0 {
			first[i] = fits[i].Result.Opposed[cands[i][0]].Spacing
		}
	}
	cent := make([][3]float64, len(fits))
	for i := range fits {
		cent[i] = centroid(fits[i].Problem.Points)
	}
	for i := range fits {
		c := cands[i]
		if len(c) == 0 {
			continue
		}
		sides := neighbourSpacing(i, cands, first, fits, cent)
		pick := c[0]
		res := fits[i].Result
		if len(sides) > 0 && len(c) > 1 {
			best := math.Inf(1)
			for _, k := range c {
				for _, sd := range sides {
					if d := math.Abs(res.Opposed[k].Spacing - sd.ref); d < best {
						pick, best = k, d
					}
				}
			}
		}
		fits[i].partner = pick
		if len(sides) > 0 {
			// Odd only when unlike the partners on each side: a real
			// change of spacing along the route (a joint where the
			// cores come together) matches one side.
			p := &res.Opposed[pick]
			var refs []string
			odd := true
			for _, sd := range sides {
				tol := math.Max(0.25*sd.ref, 3*math.Hypot(p.SpacingSigma, sd.sigma))
				if math.Abs(p.Spacing-sd.ref) <= tol {
					odd = false
				}
				refs = append(refs, fmt.Sprintf("%.2g m", sd.ref))
			}
			if odd {
				what := "its neighbours with one " + refs[0] + " from it"
				if len(refs) == 2 {
					what = "its neighbours on one side with one " + refs[0] + " from it, on the other with one " + refs[1]
				}
				fits[i].partnerOdd = fmt.Sprintf("%s pairs conductor 1 with a line %.2g m from it, %s", fits[i].Key, p.Spacing, what)
			}
		}
	}
}

// sideSpacing is the spacing of the partners on one side of a group along
// the route (neighbourSpacing).
type sideSpacing struct {
	ref, sigma float64
	n          int
}

// neighbourSpacing returns, for each side of group i along its strongest
// line (before it and after it) that has any, the median spacing of the
// best balanced partners (first) of the partnerNeighbours/2 groups on that
// side nearest group i (by their readings' centres in plan), with the
// largest spacing sigma among them. The sides are kept apart: in review
// the median of the four nearest groups, two before a joint where the
// cores' spacing changes from 1 m to 0.5 m and two after, read 0.75 m, a
// spacing no group had, and a group correctly paired at 0.52 m past the
// joint was taken as paired with another line, demoting a real 3 A earth
// fault there. Without a direction to go by all neighbours are one side.
func neighbourSpacing(i int, cands [][]int, first []float64, fits []Fit, cent [][3]float64) []sideSpacing {
	type nb struct {
		j int
		d float64
	}
	var u [2]float64
	if res := fits[i].Result; res != nil && len(res.Sources) > 0 {
		d := res.Sources[0].Dir
		if h := math.Hypot(d[0], d[1]); h > 0 {
			u = [2]float64{d[0] / h, d[1] / h}
		}
	}
	var nbs [2][]nb
	for j := range fits {
		if j == i || len(cands[j]) == 0 {
			continue
		}
		dx, dy := cent[j][0]-cent[i][0], cent[j][1]-cent[i][1]
		side := 0
		if dx*u[0]+dy*u[1] > 0 {
			side = 1
		}
		nbs[side] = append(nbs[side], nb{j, math.Hypot(dx, dy)})
	}
	var out []sideSpacing
	for _, sn := range nbs {
		if len(sn) == 0 {
			continue
		}
		sort.SliceStable(sn, func(a, b int) bool { return sn[a].d < sn[b].d })
		if len(sn) > partnerNeighbours/2 {
			sn = sn[:partnerNeighbours/2]
		}
		sd := sideSpacing{n: len(sn)}
		sp := make([]float64, len(sn))
		for k, b := range sn {
			sp[k] = first[b.j]
			sd.sigma = math.Max(sd.sigma, fits[b.j].Result.Opposed[cands[b.j][0]].SpacingSigma)
		}
		sd.ref = median(sp)
		out = append(out, sd)
	}
	return out
}

// caveatPartnerSteps words the changes in net current of the pair route r
// set against a group whose partner core lies at a spacing unlike its
// neighbours' (Fit.partnerOdd), and reports them a severity lower: the net
// current there may be another pair's.
func caveatPartnerSteps(r *route.Route, fits []Fit) {
	odd := map[string]string{}
	for i := range fits {
		if fits[i].partnerOdd != "" {
			odd[fits[i].Key] = fits[i].partnerOdd
		}
	}
	caveatStepsAt(r, odd, func(why []string) string {
		return "; it rests on a change of the core paired with conductor 1 (" + strings.Join(why, "; ") +
			"), so the net current may be another pair's rather than current leaving or joining the circuit"
	})
}

// caveatWeakTrackSteps words the changes in current of track tr, a further
// conductor of the pair route, set against a group where its line is one
// the pair's net current takes in (weakBeside), and reports them a
// severity lower: such a line's current trades with the cores' in the fit
// (the earth wire of the review read 0.19 to 0.58 A for 0.45 A, its sigmas
// 0.03 to 0.12 A), and where it is not fitted its current is in theirs.
func caveatWeakTrackSteps(tr *route.Route, fits []Fit, members []trackSource, ac bool) {
	weak := map[string]string{}
	for _, m := range members {
		f := &fits[m.fit]
		circ, _, _ := circuitOf(f, ac)
		if circ == nil {
			continue
		}
		for _, j := range weakBeside(f, circ, ac) {
			if j == m.source {
				weak[f.Key] = f.Key
			}
		}
	}
	caveatStepsAt(tr, weak, func(keys []string) string {
		return "; it rests on " + keyList(keys) + ", where this is a weak line beside conductor 1's go-and-return pair whose current the fit trades with the cores' (it is counted in the pair's net current), so it may be the fit's error rather than a change in current"
	})
}

// caveatStepsAt appends to each current step, change or anomaly of r whose
// bracketing stations (an anomaly's own station) include a key of flagged
// the text words gives for their flagged values, and reports it a severity
// lower.
func caveatStepsAt(r *route.Route, flagged map[string]string, words func([]string) string) {
	if r == nil || len(flagged) == 0 {
		return
	}
	demoted := false
	for fi := range r.Findings {
		f := &r.Findings[fi]
		if f.Kind != route.KindCurrentStep && f.Kind != route.KindCurrentChange && f.Kind != route.KindCurrentAnomaly || len(f.Keys) == 0 {
			continue
		}
		look := []string{f.Keys[0], f.Keys[len(f.Keys)-1]}
		if f.Kind == route.KindCurrentAnomaly && len(f.Keys) == 3 {
			look = []string{f.Keys[1]}
		}
		var why []string
		seen := map[string]bool{}
		for _, k := range look {
			if w, ok := flagged[k]; ok && !seen[k] {
				why = append(why, w)
				seen[k] = true
			}
		}
		if len(why) == 0 {
			continue
		}
		f.Message += words(why)
		if f.Severity != route.SeverityInfo {
			demoteFinding(f)
			demoted = true
		}
	}
	if demoted {
		sortFindings(r.Findings)
	}
}

// The net current of a resolved pair with a weak line beside it.
//
// A weak line beside a pair's cores (an earth wire, a bond) is fitted on
// some traverses and not on others. Where it is not, its current goes into
// the cores' (the field far from the lines is set by their total current,
// which the fit keeps): in review a 0.45 A wire 0.48 m from the go core of
// a 30 A / 27 A pair read the go core 29.755 A and the return 27.226 A
// where it was not fitted, the pair's net current 2.53 A, and 2.77 to
// 3.13 A where it was, with the wire's 0.19 to 0.58 A apart; the route
// warned of 0.2 to 0.9 A earth faults along a healthy circuit. The sum of
// the pair and the wire read 2.55 A at every traverse. So the route's net
// current of a resolved pair takes in the lines beside it that are too
// weak to be its partner (under minPartnerShare of the strongest core's
// current) and lie no further from the pair's centre than its spacing,
// each judged once along the route (chooseWeak, weakBeside), with a note
// on the group.

// A line beside the pair is judged as one conductor along the route, not
// traverse by traverse. In review the per-traverse cut (no further from
// the pair's centre than its spacing, under minPartnerShare of the
// strongest line's current) flipped for a line near either limit: a
// 2.5 A street-light cable 0.99 m from the centre of a pair 1 m apart,
// fitted at every traverse, was counted on six of ten and the route warned
// of 2.5 A and 1.46 A earth faults on a healthy circuit (while it was
// also followed as a conductor of its own, its current counted twice); an
// earth wire at 7 to 12% of the go core's current gave a false 2.31 A one.
// chooseWeak gathers the weak lines beside the pair at every group into
// conductors by their offset across the pair (weakOffset, within
// weakOffsetTol of each other) and decides each once: it is counted at
// every group where it is fitted, or at none. It is counted when, over the
// groups where it is fitted, the median of its share of the strongest
// line's current is under minPartnerShare and the median of its distance
// from the pair's centre line is at most the median of the pair's spacing,
// and it is missing at some group with a resolved pair: a line fitted at
// every such group is followed as a conductor of its own, its current
// never in the cores', and is left out of the pair's net current.

// weakOffsetTol is the largest difference, m, between the offsets across
// the pair (weakOffset) of two lines taken as one conductor, or this share
// of the pair's spacing when that is more.
const weakOffsetTol, weakOffsetShare = 0.15, 0.25

// weakLine is a line beside a pair at one group, a candidate for chooseWeak.
type weakLine struct {
	fit, source             int
	offset, dist, share, sp float64
}

// weakCandidates returns the lines of fit f, other than the pair p's own,
// that carry a current the fit finds and run within 10 degrees of the
// pair (as inverse's opposedMaxAngle), each with its offset across the
// pair to the left of plan direction d (weakOffset), distance from the pair's centre line, and share of
// the strongest line's current.
func weakCandidates(fi int, f *Fit, p *inverse.PairEstimate, d [3]float64, ac bool) []weakLine {
	res := f.Result
	if p == nil || !(p.Spacing > 0) || res == nil || len(res.Sources) == 0 {
		return nil
	}
	i0 := math.Abs(res.Sources[0].Current)
	var out []weakLine
	for j := range res.Sources {
		o := &res.Sources[j]
		if j == p.Lines[0] || j == p.Lines[1] || o.Kind == KindDipole || !sound(o) || NoCurrent(o, ac) {
			continue
		}
		if math.Abs(math.Remainder(o.Azimuth-p.Azimuth, 180)) > 10 {
			continue // not running beside the pair
		}
		share := math.Inf(1)
		if i0 > 0 {
			share = math.Abs(o.Current) / i0
		}
		out = append(out, weakLine{fit: fi, source: j, offset: weakOffset(p, d, o.Point),
			dist: pointToLine(o.Point, p.Point, unit(p.Dir)), share: share, sp: p.Spacing})
	}
	return out
}

// weakOffset returns the offset in plan of point q from the centre of pair
// p, to the left of plan direction d (unit): the same for a line along
// the route when d is turned the same way at every group (chooseWeak).
func weakOffset(p *inverse.PairEstimate, d [3]float64, q [3]float64) float64 {
	return -(q[0]-p.Point[0])*d[1] + (q[1]-p.Point[1])*d[0]
}

// chooseWeak sets, for each fit whose strongest line the route follows as
// a resolved pair (circuitOf, after choosePartners), the weak lines beside
// it that the pair's net current takes in (Fit.weak); see above.
func chooseWeak(fits []Fit, ac bool) {
	var all []weakLine
	pairs := 0
	var prev [3]float64 // the last pair's plan direction, turned as the first's
	for i := range fits {
		fits[i].weak = nil
		circ, _, _ := circuitOf(&fits[i], ac)
		if circ == nil || !(circ.Spacing > 0) {
			continue
		}
		// The pair's direction turned along the groups (in their order)
		// so that the sides of it read alike at each: the strongest core
		// is one core at one traverse and the other at the next when the
		// pair is balanced.
		d := unit([3]float64{circ.Dir[0], circ.Dir[1], 0})
		if pairs > 0 && d[0]*prev[0]+d[1]*prev[1] < 0 {
			d = [3]float64{-d[0], -d[1], 0}
		}
		prev = d
		pairs++
		all = append(all, weakCandidates(i, &fits[i], circ, d, ac)...)
	}
	sort.SliceStable(all, func(a, b int) bool { return all[a].offset < all[b].offset })
	for lo := 0; lo < len(all); {
		hi := lo + 1
		for hi < len(all) && all[hi].offset-all[hi-1].offset <= math.Max(weakOffsetTol, weakOffsetShare*math.Min(all[hi].sp, all[hi-1].sp)) {
			hi++
		}
		c := all[lo:hi]
		lo = hi
		groups := map[int]bool{}
		var share, dist, sp []float64
		for _, w := range c {
			groups[w.fit] = true
			share = append(share, w.share)
			dist = append(dist, w.dist)
			sp = append(sp, w.sp)
		}
		if len(groups) >= pairs {
			continue // fitted at every group: a conductor of its own
		}
		if !(median(share) < minPartnerShare) || !(median(dist) <= median(sp)) {
			continue
		}
		for _, w := range c {
			fits[w.fit].weak = append(fits[w.fit].weak, w.source)
		}
	}
	for i := range fits {
		sort.Ints(fits[i].weak)
	}
}

// weakBeside returns the lines of fit f, other than the pair p's own,
// that the pair's net current takes in (chooseWeak).
func weakBeside(f *Fit, p *inverse.PairEstimate, ac bool) []int {
	if p == nil || !(p.Spacing > 0) || f.Result == nil {
		return nil
	}
	var out []int
	for _, j := range f.weak {
		if j != p.Lines[0] && j != p.Lines[1] && j < len(f.Result.Sources) {
			out = append(out, j)
		}
	}
	return out
}

// unit returns v scaled to unit length (v itself when it is zero).
func unit(v [3]float64) [3]float64 {
	n := math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2])
	if n == 0 {
		return v
	}
	return [3]float64{v[0] / n, v[1] / n, v[2] / n}
}

// netWithWeak returns the net current of pair p of fit f along p.Dir with
// the currents of the lines ws (weakBeside) added, and its sigma, with
// the phase and its sigma for AC (degrees). The sigmas of the pair's net
// current and of the lines are added in quadrature: the fit's covariance
// makes the sum better known than that (the lines trade current with the
// cores), so the sigma is on the safe side.
func netWithWeak(f *Fit, p *inverse.PairEstimate, ws []int, ac bool) (cur, sigma, phase, phaseSigma float64) {
	res := f.Result
	d := unit(p.Dir)
	if !ac {
		cur, v := p.NetCurrent, p.NetCurrentSigma*p.NetCurrentSigma
		for _, j := range ws {
			o := &res.Sources[j]
			od := unit(o.Dir)
			s := 1.0
			if od[0]*d[0]+od[1]*d[1]+od[2]*d[2] < 0 {
				s = -1
			}
			cur += s * o.Current
			v += o.CurrentSigma * o.CurrentSigma
		}
		return cur, math.Sqrt(v), 0, 0
	}
	rad := math.Pi / 180
	sum := cmplx.Rect(p.NetCurrent, p.NetCurrentPhase*rad)
	v := p.NetCurrentSigma * p.NetCurrentSigma
	vt := math.Pow(p.NetCurrent*p.NetCurrentPhaseSigma*rad, 2) // across the phasor
	for _, j := range ws {
		o := &res.Sources[j]
		od := unit(o.Dir)
		w := cmplx.Rect(o.Current, o.Phase*rad)
		if od[0]*d[0]+od[1]*d[1]+od[2]*d[2] < 0 {
			w = -w
		}
		sum += w
		v += o.CurrentSigma * o.CurrentSigma
		vt += o.CurrentSigma*o.CurrentSigma + math.Pow(o.Current*o.PhaseSigma*rad, 2)
	}
	cur = cmplx.Abs(sum)
	phase = cmplx.Phase(sum) / rad
	phaseSigma = 180
	if cur > 0 {
		phaseSigma = math.Min(180, math.Sqrt(vt)/cur/rad)
	}
	return cur, math.Sqrt(v), phase, phaseSigma
}

// weakNote words the note of a group whose pair's net current takes in
// the weak lines ws beside it (netWithWeak).
func weakNote(f *Fit, ws []int) string {
	var names []string
	for _, j := range ws {
		names = append(names, fmt.Sprintf("line %d (%.3g A)", j+1, math.Abs(f.Result.Sources[j].Current)))
	}
	return fmt.Sprintf("the pair's net current, as the route takes it, includes %s beside the pair, too weak to be a core of it (under %g%% of the strongest line's current): where such a line is not fitted its current goes into the cores'", keyList(names), 100*minPartnerShare)
}

// caveatTradedSteps words the changes in net current of the pair route r
// matched, between the same bracketing stations, by a change of about the
// same size in a line beside the pair, within its spacing of its centre,
// that the net current does not take in (a line fitted at every group,
// chooseWeak), and reports them a severity lower: the fit trades current
// between such a line and the cores. In review a 3.5 A earth wire 0.48 m
// from the go core of a 30 A / 27 A pair read 2.2 A on two traverses and
// 3.3 to 3.5 A on four, the cores' net current moved with it by the same
// 1.15 A, and the route warned of an earth fault on a healthy circuit.
func caveatTradedSteps(r *route.Route, fits []Fit, ac bool) {
	if r == nil {
		return
	}
	byKey := map[string]int{}
	for i := range fits {
		byKey[fits[i].Key] = i
	}
	at := map[string]*route.Placed{}
	for i := range r.Stations {
		at[r.Stations[i].Key] = &r.Stations[i]
	}
	demoted := false
	for fi := range r.Findings {
		f := &r.Findings[fi]
		if f.Kind != route.KindCurrentStep && f.Kind != route.KindCurrentChange || len(f.Keys) < 2 {
			continue
		}
		a, b := f.Keys[0], f.Keys[len(f.Keys)-1]
		ia, okA := byKey[a]
		ib, okB := byKey[b]
		sa, sb := at[a], at[b]
		if !okA || !okB || sa == nil || sb == nil {
			continue
		}
		dp := math.Abs(sb.Current) - math.Abs(sa.Current)
		if !ac {
			dp = sb.Current - sa.Current
		}
		// As the route's steps take them (route Placed.RouteSigma).
		sp := math.Hypot(sa.RouteSigma(), sb.RouteSigma())
		ca, _, _ := circuitOf(&fits[ia], ac)
		cb, _, _ := circuitOf(&fits[ib], ac)
		if ca == nil || cb == nil || !(ca.Spacing > 0) || !(cb.Spacing > 0) {
			continue
		}
		da := unit([3]float64{ca.Dir[0], ca.Dir[1], 0})
		db := unit([3]float64{cb.Dir[0], cb.Dir[1], 0})
		if da[0]*db[0]+da[1]*db[1] < 0 {
			db = [3]float64{-db[0], -db[1], 0}
		}
		var match string
		for _, wa := range besideUncounted(&fits[ia], ca, da, ac) {
			for _, wb := range besideUncounted(&fits[ib], cb, db, ac) {
				if math.Abs(wa.offset-wb.offset) > math.Max(weakOffsetTol, weakOffsetShare*math.Min(wa.sp, wb.sp)) {
					continue
				}
				oa, ob := &fits[ia].Result.Sources[wa.source], &fits[ib].Result.Sources[wb.source]
				dl := math.Abs(ob.Current) - math.Abs(oa.Current)
				sl := math.Hypot(oa.CurrentSigma, ob.CurrentSigma)
				if math.Abs(dl) > 3*sl && math.Abs(math.Abs(dl)-math.Abs(dp)) <= math.Max(3*math.Hypot(sp, sl), 0.25*math.Abs(dp)) {
					match = fmt.Sprintf("%.3g A at %s, %.3g A at %s", math.Abs(oa.Current), a, math.Abs(ob.Current), b)
				}
			}
		}
		if match == "" {
			continue
		}
		f.Message += "; a line beside the pair, not counted in its net current, changes by about as much between the same stations (" + match +
			"): the fit trades current between such a line and the cores, so it may be the fit's error rather than current leaving or joining the circuit"
		if f.Severity != route.SeverityInfo {
			demoteFinding(f)
			demoted = true
		}
	}
	if demoted {
		sortFindings(r.Findings)
	}
}

// besideUncounted returns the lines beside pair p of fit f (weakCandidates,
// offsets to the left of d) within its spacing of its centre that its net
// current does not take in (Fit.weak).
func besideUncounted(f *Fit, p *inverse.PairEstimate, d [3]float64, ac bool) []weakLine {
	var out []weakLine
	for _, w := range weakCandidates(0, f, p, d, ac) {
		if w.dist <= w.sp && !slices.Contains(f.weak, w.source) {
			out = append(out, w)
		}
	}
	return out
}

// caveatTradedTrackSteps words the changes in current of track tr, a
// further conductor of the pair route r lying beside the pair within its
// spacing and not counted in its net current, matched by a change of
// about the same size in the pair's net current between the same
// stations, and reports them a severity lower: the fit trades current
// between the line and the cores (caveatTradedSteps, the same case seen
// from the line).
func caveatTradedTrackSteps(tr, r *route.Route, fits []Fit, members []trackSource, ac bool) {
	if tr == nil || r == nil {
		return
	}
	pairAt := map[string]*route.Placed{}
	for i := range r.Stations {
		pairAt[r.Stations[i].Key] = &r.Stations[i]
	}
	beside := map[string]bool{} // keys where the track's line is beside the pair, uncounted
	for _, m := range members {
		f := &fits[m.fit]
		circ, _, _ := circuitOf(f, ac)
		if circ == nil || !(circ.Spacing > 0) {
			continue
		}
		for _, w := range besideUncounted(f, circ, unit([3]float64{circ.Dir[0], circ.Dir[1], 0}), ac) {
			if w.source == m.source {
				beside[f.Key] = true
			}
		}
	}
	lineAt := map[string]*route.Placed{}
	for i := range tr.Stations {
		lineAt[tr.Stations[i].Key] = &tr.Stations[i]
	}
	demoted := false
	for fi := range tr.Findings {
		f := &tr.Findings[fi]
		if f.Kind != route.KindCurrentStep && f.Kind != route.KindCurrentChange || len(f.Keys) < 2 {
			continue
		}
		a, b := f.Keys[0], f.Keys[len(f.Keys)-1]
		pa, pb, la, lb := pairAt[a], pairAt[b], lineAt[a], lineAt[b]
		if !beside[a] || !beside[b] || pa == nil || pb == nil || la == nil || lb == nil {
			continue
		}
		dp := math.Abs(pb.Current) - math.Abs(pa.Current)
		dl := math.Abs(lb.Current) - math.Abs(la.Current)
		// As the routes' steps take them (route Placed.RouteSigma).
		sp := math.Hypot(pa.RouteSigma(), pb.RouteSigma())
		sl := math.Hypot(la.RouteSigma(), lb.RouteSigma())
		if !(math.Abs(dp) > 3*sp) || !(math.Abs(math.Abs(dl)-math.Abs(dp)) <= math.Max(3*math.Hypot(sp, sl), 0.25*math.Abs(dl))) {
			continue
		}
		f.Message += fmt.Sprintf("; it lies beside conductor 1's go-and-return pair, whose net current changes by about as much between the same stations (%.3g A at %s, %.3g A at %s): the fit trades current between this line and the cores, so it may be the fit's error rather than a change in current", math.Abs(pa.Current), a, math.Abs(pb.Current), b)
		if f.Severity != route.SeverityInfo {
			demoteFinding(f)
			demoted = true
		}
	}
	if demoted {
		sortFindings(tr.Findings)
	}
}
