package route

import "math"

// spreadStation returns the index in u of a station strictly inside the
// bracket u[ia..ib], near the location pl.at, that reads between the
// levels either side, beyond StepK of its sigma (with the level's) from
// each; ok is false when there is none.
//
// Such a station reads what one change right under it gives (a half line
// under a traverse's middle reads half its current, Biot-Savart) and
// equally what changes spread either side of it give, each station
// between them reading the current already reduced by those before it:
// two 0.2 A losses 5 m either side of a station 10 m from its neighbours
// over a main 1.2 m deep read as one 0.4 A step "most likely at 79.92 ±
// 0.19 m", 26 sigma from both (simulated, found in review;
// TestOnePointLocationSaysSo). The location's interval holds only if the
// change is at one point; the stations cannot tell the two apart.
func spreadStation(u []*Placed, ia, ib int, pl levels, set *Settings) (int, bool) {
	lo, hi := math.Min(pl.before, pl.after), math.Max(pl.before, pl.after)
	sLo, sHi := pl.sigmaBefore, pl.sigmaAfter
	if pl.before > pl.after {
		sLo, sHi = sHi, sLo
	}
	k := set.stepK()
	best, bestD := -1, math.Inf(1)
	for i := ia + 1; i < ib; i++ {
		p := u[i]
		if !levelSound(p, set) || !(p.Depth > 0) {
			continue
		}
		// Near the station: within onePointDepths depths, and within a
		// quarter of the spacing to the stations either side. A change
		// midway between stations closer than a few depths is read in
		// part by both, whose readings trace the transition's shape,
		// which changes spread over the stretch would alter (a 2 A loss
		// midway between traverses 3 m apart is placed to 0.06 m and
		// within its sigma: TestLeakLocationSigmaCalibrated).
		sp := math.Min(p.Chainage-u[i-1].Chainage, u[i+1].Chainage-p.Chainage)
		d := math.Abs(p.Chainage - pl.at)
		if d > onePointDepths*p.Depth || d > sp/4 || d >= bestD {
			continue
		}
		if p.Current-lo > k*math.Hypot(p.CurrentSigma, sLo) && hi-p.Current > k*math.Hypot(p.CurrentSigma, sHi) {
			best, bestD = i, d
		}
	}
	return best, best >= 0
}

// onePointDepths is how near the location, in depths, a station reading
// between the levels must lie for spreadStation: a half line's field
// under a traverse reaches 96% of its full value 3.5 depths beyond it
// ((1 + 3.5/sqrt(3.5^2+1))/2), so a station two depths from a single
// change reads well within the levels only past that.
const onePointDepths = 2.0
