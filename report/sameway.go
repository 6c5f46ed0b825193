package report

import (
	"fmt"
	"math"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// sameWayOf returns the strongest line's same-way split of res
// (inverse.Result.SameWay), or nil.
func sameWayOf(res *inverse.Result) *inverse.PairEstimate {
	if res == nil {
		return nil
	}
	for i := range res.SameWay {
		if res.SameWay[i].Lines[0] == 0 {
			return &res.SameWay[i]
		}
	}
	return nil
}

// splitSumFound reports whether the strongest line of res is split in two
// same-way lines (sameWayOf) whose sum carries a current found: beyond
// currentK times its sigma from zero. Such a fit is not one with no
// current found even where neither share is (noLineCurrent), and where the
// strongest share alone has none the route takes the sum (Build sets
// sumSplit before markSplitSums weighs it against the neighbours): the sum
// is then the only current the readings give. On a 20 A bore rising to
// 1 m (rv23a hdd.toml, invented), the traverse 8 m past the bend was split
// into 10.6 ± 4.2 and 8.7 ± 4.2 A whose sum was 19.3 ± 0.047 A, a field
// about 1000 times the noise; it was dropped as "a conductor too deep or
// weak ... longer traverses or a stronger current would" on 3 of 4 seeds,
// and summed on the others, where the stronger share happened to pass 3
// sigma (found in review).
func splitSumFound(res *inverse.Result, ac bool) bool {
	sw := sameWayOf(res)
	if sw == nil || len(res.Sources) == 0 || res.Sources[0].Kind == KindDipole {
		return false
	}
	return sw.NetCurrentSigma > 0 && math.Abs(sw.NetCurrent) > currentK(ac)*sw.NetCurrentSigma
}

// markSplitSums sets Fit.sumSplit on the fits whose strongest line is split
// in two same-way lines whose shares the readings do not part
// (inverse.Result.SameWay) when the route should take their sum: the second
// line is followed by none of the tracks, and the sum lies nearer the
// current of the nearest used stations either side along r that are not
// split (the ratio nearer 1) than the stronger share does: nearer their
// mean, or nearer one of them. It returns
// whether it set any. A track made mostly of the second lines of such splits
// (sharesTrack) does not count as following them.
//
// A split is one conductor bending under the traverse (where it dives under
// a road, its fits took 0.92 and 0.80 A for its 2 A, the stations either
// side 2.0 A), or two conductors: a cable crossing conductor 1 at a shallow
// angle is parted from it along its track but not where they cross, and
// there the stronger share, not the sum, is conductor 1's current.
func markSplitSums(fits []Fit, r *route.Route, tracks []builtTrack) bool {
	followed := map[[2]int]bool{}
	for _, t := range tracks {
		if sharesTrack(fits, &t) {
			continue
		}
		for _, m := range t.members {
			for _, j := range m.lines() {
				followed[[2]int{m.fit, j}] = true
			}
		}
	}
	split := func(k int) *inverse.PairEstimate {
		p := &r.Stations[k]
		if p.Index < 0 || p.Index >= len(fits) || p.PairNet {
			return nil
		}
		return sameWayOf(fits[p.Index].Result)
	}
	// reference is the |current| of the nearest used, unsplit station
	// from k in steps of step, or 0.
	reference := func(k, step int) float64 {
		for i := k + step; i >= 0 && i < len(r.Stations); i += step {
			p := &r.Stations[i]
			if p.OK && !p.Dipole && split(i) == nil && p.Current != 0 {
				return math.Abs(p.Current)
			}
		}
		return 0
	}
	marked := false
	for k := range r.Stations {
		p := &r.Stations[k]
		sw := split(k)
		if sw == nil || !p.OK || p.Dipole || fits[p.Index].sumSplit || followed[[2]int{p.Index, sw.Lines[1]}] {
			continue
		}
		var refs []float64
		for _, step := range []int{-1, 1} {
			if c := reference(k, step); c > 0 {
				refs = append(refs, c)
			}
		}
		if len(refs) == 0 {
			continue
		}
		ref := 0.0
		for _, c := range refs {
			ref += c / float64(len(refs))
		}
		strong, sum := math.Abs(p.Current), math.Abs(sw.NetCurrent)
		if strong == 0 || sum == 0 {
			continue
		}
		// Nearer their mean, or nearer one of them than the stronger
		// share is to either: a station beside a step in the current
		// reads the level of one side, and the mean of the two lies
		// between. At a main's coating defect, between the station split
		// in 1.19 + 0.18 A and the next, the sum 1.37 A matched the 1.39
		// A before (the stronger share the 1.16 A after it by 3%), but the
		// mean, 1.28 A, was nearer the share: the route took it, and put
		// the defect one interval upstream (found in review).
		nearest := func(x float64) float64 {
			d := math.Inf(1)
			for _, c := range refs {
				d = math.Min(d, math.Abs(math.Log(x/c)))
			}
			return d
		}
		if !(math.Abs(math.Log(sum/ref)) < math.Abs(math.Log(strong/ref))) && !(nearest(sum) < nearest(strong)) {
			continue
		}
		fits[p.Index].sumSplit = true
		marked = true
	}
	return marked
}

// splitSumNote words the group note of a station that takes the sum of its
// fit's same-way split sw, placed depth (sigma depthSigma) deep
// (splitSumCentre); alone says that the stronger share carries no current
// found, so that the sum is the only current the readings give
// (splitSumFound).
func splitSumNote(sw *inverse.PairEstimate, depth, depthSigma float64, ac, alone bool) string {
	unit := "A"
	if ac {
		unit = "A RMS"
	}
	why := "nearer the current either side than either line's, as where one conductor bends under the readings"
	if alone {
		why = "the only current these readings find, as neither line's own is, as where one conductor bends under or near the readings"
	}
	return fmt.Sprintf("the route takes the sum of lines %d and %d, %s %s at their centre (weighted by their currents, and in plan, where the lines cross, by how well each is placed), %s m deep (the uncertainty holds half the lines' %.2g m spacing: readings that do not part the shares do not fix the conductor's depth better): %s",
		sw.Lines[0]+1, sw.Lines[1]+1, PlusMinus(math.Abs(sw.NetCurrent), sw.NetCurrentSigma), unit, PlusMinus(depth, depthSigma), sw.Spacing, why)
}

// sharesTrack reports whether track t is made of the weaker shares of
// conductor 1's line that the fits split in two: at least two of its
// members, and two thirds of them, are the second line of their fit's
// same-way split of conductor 1's line (sameWayOf). Such a track follows
// no conductor of its own. On a steel main with girth welds every 12 m the
// fits at two of three traverses split the pipe's 1.37 A into 1.19 + 0.18
// A and like shares; with a 0.02 A line 3 m aside at the third traverse
// they made a "conductor 2" whose current rose by 0.13 A, and the route
// took the stronger share, 13% low, and bracketed the main's coating
// defect 50 m from where it was (found in review). The sum is still taken
// only where it fits the stations either side better (markSplitSums), so
// a cable laid beside conductor 1, resolved at the traverses where it is
// parted from it, keeps its track.
func sharesTrack(fits []Fit, t *builtTrack) bool {
	if t.pair {
		return false
	}
	shares := 0
	for _, m := range t.members {
		if m.pair != nil || m.fit < 0 || m.fit >= len(fits) {
			continue
		}
		if sw := sameWayOf(fits[m.fit].Result); sw != nil && sw.Lines[1] == m.source {
			shares++
		}
	}
	return shares >= 2 && 3*shares >= 2*len(t.members)
}

// splitSumCentre returns where the route places the sum of the same-way
// split sw of res: the lines' current-weighted depth (and up) and, in
// plan, their centre and direction weighted by current, and by precision
// too where the lines cross each other (splitParallel, splitPlanWeights;
// turned as sw.Dir). The current-weighted centre is
// where one line carrying their sum has the same field to first order
// (the two lines' moment about it vanishes); in plan an unresolved share
// is kept from moving it. The depth's sigma comes from
// the lines' own depth sigmas and the shares' current sigma (the sum is
// known far better than either share, so the weights vary together).
// The pair's centre (sw.Point, the midpoint) lies half-way whatever the
// shares: a 20 A cable split into 19.49 and 0.44 A by a drum beside it
// was placed at the midpoint, 0.54 m deep for its 1.0 m, a false least
// cover (found in review); the lines' mean direction, 23 degrees off the
// cable's there, made a bend. It returns sw's own centre and direction
// when a share is missing or the currents do not add.
//
// The sigma also holds half the lines' spacing (splitGeometrySigma): the
// readings that do not part the shares do not fix the geometry of the
// conductor they stand for either, and its depth is not known better than
// that.
func splitSumCentre(res *inverse.Result, sw *inverse.PairEstimate) (point, dir [3]float64, depth, depthSigma float64) {
	i, j := sw.Lines[0], sw.Lines[1]
	if i < 0 || j < 0 || i >= len(res.Sources) || j >= len(res.Sources) {
		return sw.Point, sw.Dir, sw.Depth, math.Hypot(sw.DepthSigma, splitGeometrySigma(sw))
	}
	a, b := &res.Sources[i], &res.Sources[j]
	ia, ib := math.Abs(a.Current), math.Abs(b.Current)
	na, nb := math.Sqrt(dot3(a.Dir, a.Dir)), math.Sqrt(dot3(b.Dir, b.Dir))
	if !(ia+ib > 0) || !(na > 0) || !(nb > 0) {
		return sw.Point, sw.Dir, sw.Depth, math.Hypot(sw.DepthSigma, splitGeometrySigma(sw))
	}
	wa, wb := ia/(ia+ib), ib/(ia+ib)
	// In plan, lines parallel within their azimuth sigmas count by current
	// alone (one conductor bending in depth under the traverse, or a
	// cable and the lines an object beside it splits it into); lines that
	// cross each other count each by its current over the variance of its
	// place across the traverse (offset) and of its azimuth, so that a
	// weaker share whose place the readings do not resolve barely moves
	// the station (splitPlanWeights, splitParallel).
	pa, pb, da, db := wa, wb, wa, wb
	if !splitParallel(a.Azimuth, a.AzimuthSigma, b.Azimuth, b.AzimuthSigma) {
		pa, pb = splitPlanWeights(ia, a.OffsetSigma, ib, b.OffsetSigma)
		da, db = splitPlanWeights(ia, a.AzimuthSigma, ib, b.AzimuthSigma)
	}
	// b's direction turned to a's side: the lines run the same way.
	turn := 1.0
	if dot3(a.Dir, b.Dir) < 0 {
		turn = -1
	}
	for k := range point {
		w1, w2 := pa, pb
		if k == 2 {
			// Up, as the depth: by current.
			w1, w2 = wa, wb
		}
		point[k] = w1*a.Point[k] + w2*b.Point[k]
		dir[k] = da*a.Dir[k]/na + turn*db*b.Dir[k]/nb
	}
	if dot3(dir, sw.Dir) < 0 {
		for k := range dir {
			dir[k] = -dir[k]
		}
	}
	depth = wa*a.Depth + wb*b.Depth
	dw := math.Max(a.CurrentSigma, b.CurrentSigma) / (ia + ib)
	g := splitGeometrySigma(sw)
	depthSigma = math.Sqrt(wa*wa*a.DepthSigma*a.DepthSigma + wb*wb*b.DepthSigma*b.DepthSigma +
		dw*dw*(a.Depth-b.Depth)*(a.Depth-b.Depth) + g*g)
	return point, dir, depth, depthSigma
}

// splitGeometrySigma is the one-sigma the depth of the sum of the same-way
// split sw is given for the split's own geometry: half the lines' spacing
// (the distance between the lines, so at least half the difference of
// their depths). A split is the
// fit's way of taking up a field one straight line does not describe (a
// conductor bending under or near the readings), and the current-weighted
// centre is where one line carrying the sum has the same field only to
// first order. On a 20 A bore rising to 1 m seen from sensors 4 m up
// (rv23a hddp.toml, invented), traverses 8-18 m past the bend split it
// into lines 1.4-1.7 m apart in plan, both about 0.7 m deep, and the sum's
// centre read 0.677-0.701 ± 0.036 m cover for the 1.00 m: a shallow-cover
// warning at 8-9 sigma on every seed (found in review). The depth of
// either share is no better a measure of the conductor's there.
func splitGeometrySigma(sw *inverse.PairEstimate) float64 {
	if !(sw.Spacing > 0) {
		return 0
	}
	return sw.Spacing / 2
}

// splitPlanWeights are the weights, adding to 1, of the two lines of a
// same-way split whose sum the route takes, in placing it in plan: each
// line's current ia, ib over the variance of its place, sa, sb (its offset
// sigma, or its azimuth sigma for the direction). The current-weighted
// centre alone is where one line carrying the sum has the same field to
// first order, but only where both lines are placed: on a steel main with
// girth welds (weld-main.toml) the weaker share, 0.147 ± 0.029 A, lay at
// an offset of 0.833 ± 0.140 m against the stronger's -0.348 ± 0.018 m,
// and it drew the station 0.42-0.74 m off the pipe in plan where the
// stronger line alone was 0.07-0.35 m (found in review). With sigmas
// missing (a held place) the weights are the currents'.
func splitPlanWeights(ia, sa, ib, sb float64) (wa, wb float64) {
	if sa > 0 && sb > 0 && !math.IsInf(sa, 0) && !math.IsInf(sb, 0) {
		ia, ib = ia/(sa*sa), ib/(sb*sb)
	}
	if !(ia+ib > 0) {
		return 0.5, 0.5
	}
	return ia / (ia + ib), ib / (ia + ib)
}

// splitParallel reports whether two lines of azimuths aza, azb, degrees
// (lines: 180 degrees apart is the same), with sigmas sa, sb, run parallel
// in plan within 3 sigma of their difference. On weld-main the split
// shares crossed at 40-50 degrees (64.3 ± 2.1 and 112.5 ± 5.3 at T23);
// a cable an object beside it splits (object-over-cable T10: 90.3 ± 0.3
// and 89.7 ± 2.3) gives parallel lines, and there the current-weighted
// centre lay 0.04 m off the cable where the stronger line alone lay 0.19
// m off (found in review).
func splitParallel(aza, sa, azb, sb float64) bool {
	d := math.Mod(math.Abs(aza-azb), 180)
	d = math.Min(d, 180-d)
	return d <= 3*math.Hypot(sa, sb)
}

// splitPlanSigma is the one-sigma of the plan place of the sum of a
// same-way split's lines a and b (splitSumCentre) across the traverse:
// their offset sigmas weighted as the place is (by current where the
// lines are parallel, else splitPlanWeights). The weights' own sigma is
// left out.
func splitPlanSigma(ia, sa, ib, sb float64, parallel bool) float64 {
	wa, wb := ia/(ia+ib), ib/(ia+ib)
	if !parallel {
		wa, wb = splitPlanWeights(ia, sa, ib, sb)
	}
	if !(wa >= 0) || !(wb >= 0) {
		return 0
	}
	return math.Hypot(wa*sa, wb*sb)
}

func dot3(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
