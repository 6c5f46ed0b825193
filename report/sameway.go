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

// markSplitSums sets Fit.sumSplit on the fits whose strongest line is split
// in two same-way lines whose shares the readings do not part
// (inverse.Result.SameWay) when the route should take their sum: the second
// line is followed by none of the tracks, and the sum lies nearer the
// current of the nearest used stations either side along r that are not
// split (the ratio nearer 1) than the stronger share does. It returns
// whether it set any.
//
// A split is one conductor bending under the traverse (where it dives under
// a road, its fits took 0.92 and 0.80 A for its 2 A, the stations either
// side 2.0 A), or two conductors: a cable crossing conductor 1 at a shallow
// angle is parted from it along its track but not where they cross, and
// there the stronger share, not the sum, is conductor 1's current.
func markSplitSums(fits []Fit, r *route.Route, tracks []builtTrack) bool {
	followed := map[[2]int]bool{}
	for _, t := range tracks {
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
		if strong == 0 || sum == 0 || !(math.Abs(math.Log(sum/ref)) < math.Abs(math.Log(strong/ref))) {
			continue
		}
		fits[p.Index].sumSplit = true
		marked = true
	}
	return marked
}

// splitSumNote words the group note of a station that takes the sum of its
// fit's same-way split sw.
func splitSumNote(sw *inverse.PairEstimate, ac bool) string {
	unit := "A"
	if ac {
		unit = "A RMS"
	}
	return fmt.Sprintf("the route takes the sum of lines %d and %d, %s %s at their centre, %s m deep: nearer the current either side than either line's, as where one conductor bends under the readings",
		sw.Lines[0]+1, sw.Lines[1]+1, PlusMinus(math.Abs(sw.NetCurrent), sw.NetCurrentSigma), unit, PlusMinus(sw.Depth, sw.DepthSigma))
}
