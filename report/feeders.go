package report

import "math"

// Two feeders, not one circuit.
//
// Two cables close together with opposite currents read, group by group,
// like the two cores of one go-and-return circuit: circuitOf's strict test
// (the net current at most half the stronger core's) holds for feeders of
// 12 A and -8 A as for a circuit of 10 A out and 8 A back. Followed as a
// pair, the route took their net current and the second feeder got no
// conductor number of its own, though each was resolved to about 1%.
//
// No test of one group parts them, so the route decides once, along its
// whole length (twoFeeders): the strongest line and its partner are
// followed as two conductors only when every group that found a current
// resolves the two (no unresolved pair holds the strongest line), pairs it
// with the same partner (the one choosePartners chose, at a spacing like
// its neighbours', not partnerOdd), parts them clearly (spacing beyond
// feederK sigmas and at least feederMinSpacing of the centre's depth below
// the readings), knows each current to feederCurrentShare, finds a net
// current beyond feederK sigmas and at least feederMinNet of the strongest
// core's (a healthy circuit returns nearly all of it), and each core keeps
// its own current along the route (within feederSteady of its median, or
// feederK sigmas). A circuit that leaves a quarter or more of its current
// to other paths and passes all of these is followed as two conductors
// too: the second is read as flowing the other way to conductor 1 (a
// return path, for example), in AC with the share it carries back and the
// net left to other paths (returnShareClause), the same reading in other
// words. Where the cores are not resolved at some group, or the partner
// changes (a closer line beside conductor 1 in place of the return,
// TestPairPartnerChangeCaveated), or a core's current changes, the route
// stays a pair (followsPair): each core's current taken alone there would
// read the unresolved pair's net, or another line's, as conductor 1's (two
// false warnings in review of a per-group rule).

// feederK is the number of sigmas by which two feeders' spacing and net
// current must stand clear of zero (twoFeeders).
const feederK = 5

// feederMinSpacing is the least spacing of two feeders, as a share of
// their centre's depth below the readings (twoFeeders).
const feederMinSpacing = 0.3

// feederCurrentShare is the largest sigma of each feeder's current, as a
// share of that current (twoFeeders).
const feederCurrentShare = 0.05

// feederSteady is the share of its median current by which each feeder's
// current may differ from group to group (twoFeeders).
const feederSteady = 0.1

// feederMinNet is the least net current of two feeders, as a share of the
// strongest core's: a circuit whose return carries back more than three
// quarters of its go core's current stays one circuit (a healthy 30 A / 27 A
// pair with an earth wire beside it, TestPairEarthWireNoFaultStep, nets
// 10%; the two feeders of TestTwoFeedersFollowedApart 33%, rv28b's AC
// feeders 49%).
const feederMinNet = 0.25

// feederMinGroups is the least number of groups that must show the two
// feeders (twoFeeders).
const feederMinGroups = 3

// twoFeeders reports whether the strongest line and its partner (circuitOf)
// are two feeders that the route follows as two conductors: see above.
// It reads the partners choosePartners chose.
func twoFeeders(fits []Fit, ac bool) bool {
	var a, b []float64 // each core's current magnitude, group by group
	var sa, sb []float64
	for i := range fits {
		f := &fits[i]
		p, _, ok := circuitOf(f, ac)
		if !ok {
			continue
		}
		res := f.Result
		if p == nil || pairOf(res) != nil || !f.partnerChosen || f.partner < 0 || f.partnerOdd != "" {
			return false
		}
		j := p.Lines[0] + p.Lines[1]
		s0, o := &res.Sources[0], &res.Sources[j]
		below := centroid(f.Problem.Points)[2] - p.Point[2]
		switch {
		case !(p.Spacing > feederK*p.SpacingSigma) || !(p.Spacing >= feederMinSpacing*below):
			return false
		case !(s0.CurrentSigma <= feederCurrentShare*math.Abs(s0.Current)) || !(o.CurrentSigma <= feederCurrentShare*math.Abs(o.Current)):
			return false
		case !(math.Abs(p.NetCurrent) > feederK*p.NetCurrentSigma) || !(math.Abs(p.NetCurrent) >= feederMinNet*math.Abs(s0.Current)):
			return false
		}
		a, sa = append(a, math.Abs(s0.Current)), append(sa, s0.CurrentSigma)
		b, sb = append(b, math.Abs(o.Current)), append(sb, o.CurrentSigma)
	}
	if len(a) < feederMinGroups {
		return false
	}
	return steadyCurrents(a, sa) && steadyCurrents(b, sb)
}

// steadyCurrents reports whether each current in cur lies within
// feederSteady of their median or feederK of its sigmas (sigma).
func steadyCurrents(cur, sigma []float64) bool {
	med := median(cur)
	for i, c := range cur {
		if d := math.Abs(c - med); d > feederSteady*med && d > feederK*sigma[i] {
			return false
		}
	}
	return true
}
