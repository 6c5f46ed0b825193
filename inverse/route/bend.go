package route

import (
	"fmt"
	"math"
)

// A conductor that bends near a station, but not under its readings (a
// bore's entry pit or the foot of its dive two or three depths along the
// line), is model error that one straight line absorbs: the fit tilts the
// line, and its depth and current follow, while its sigmas, which count
// the reading noise alone, stay tight and the fit looks sound. In review
// a 20 A cable diving at 15 degrees fitted 12.6, 12.8 and 11.6 ± 0.1 deg
// at the three traverses of its dive (20 to 40 sigma), cover 2 to 4 per
// cent shallow (7 to 18 sigma) and current 1 to 3 per cent low (up to 9
// sigma), DC and AC alike. The route sees it: the depths of the stations
// either side slope at 14.8 deg. bendDoubt compares each station's fitted
// dip with that slope and, where they disagree, widens the station's dip,
// depth and current sigmas to cover the disagreement and adds a caution.

// BendFloorDeg is the least disagreement, degrees, between a station's
// fitted dip and the slope of its neighbours' depths that bendDoubt takes
// for a bend, beyond bendK combined sigmas. On a clean straight dipping
// conductor (an infinite line, no bend anywhere: 5, 15 and 25 deg at 3
// to 15 m under the middle of five 40 m traverses 10 m apart, 5 A, 2 nT,
// five seeds, 150 stations; report TestBendNearStraightDipNoCaution) no
// station departed by more than 3 combined sigmas (the largest, 0.03 deg
// short of it): the straight-line model adds no disagreement of its own,
// and 0.1 deg is margin for what the simulation leaves out (the ground's
// and the sensors' small departures from level). The review's bore
// departs by 1.7 to 3.2 deg, a bore 10 to 40 m past its entry by 0.5 to
// 1.3 deg.
const BendFloorDeg = 0.1

// BendMinSlopeDeg is the least slope of the neighbours' depths, degrees,
// at which bendDoubt compares a station's dip with it: the conductor dips
// there by the route's reckoning, and a bend lies within 1/tan(slope)
// depths of it (a bore entering at the surface). Below it a departure is
// more likely a local disturbance that tilts one fit (a magnetised
// object, a crossing cable, a conductor's end: their own findings say
// so), and a level line's bends lie many depths away: in the rv23a sweep
// a 5-degree dive read depth, current and dip within 2 sigma on 95-100%
// of traverses without widening.
const BendMinSlopeDeg = 5.0

// BendMinDepthShift is the least change of depth, m, that a station's
// tilt must make over the readings' reach (the widening of its depth's
// sigma) for bendDoubt to caution and widen: 5 cm, the step a crew reads
// cover to. A shallow cable turning under its traverses (the demo's 0.6
// to 1 m cable, whose fits depart 0.1 to 2 deg from its neighbours'
// slope) moves its depth by 2 to 4 cm, within what its cover is read to,
// and is left to the "Dip across a bend" limit; the review's bore moves
// 0.15 to 0.6 m.
const BendMinDepthShift = 0.05

// BendExtremeShare is the least change of depth, as a share of a
// station's own depth, between the station and one of its neighbours at
// which bendDoubt also compares the slopes of the depths on either side
// of it: a change of a large share of the depth over one station spacing
// puts a bend within a few depths of the station, and where the slope
// before the station differs from the slope after it the bend lies
// between its neighbours, where its straight line sees it. In review
// (rv24f, wrenbeck-dive, 20 seeds) T06 and T07, 6 m deep, 3 m from the
// foot of a dive from 1 m and of the rise back, fitted a dip of 11 deg on
// a level run (45 of their sigmas) and read 0.6 m shallow (12 sigmas),
// "sound" on half the seeds: the slope across them, from the 1 m station
// before the dive to the other 6 m station, is the chord's 12.8 deg, and
// their fitted dip agrees with it. The slopes to either side, 24 and 0.3
// deg, do not. A clean straight line, level or dipping, has the same
// slope on both sides and never passes.
const BendExtremeShare = 0.5

// sideKink is the spread of dip that a bend between station k's
// neighbours a and b leaves on its fit: when the depth changes between k
// and a or b by BendExtremeShare of k's depth or more, and the slopes
// from a to k and from k to b differ by more than bendK of their combined
// sigmas plus BendFloorDeg, the true dip at k lies anywhere between those
// slopes, and the standard deviation of a uniform spread over them,
// |sa - sb|/sqrt(12), is returned with the two slopes; ok is false
// otherwise.
func sideKink(ps []Placed, k, a, b int) (spread, sa, sb float64, ok bool) {
	if a == k || b == k {
		return 0, 0, 0, false
	}
	z := ps[k].Point[2]
	lim := BendExtremeShare * math.Abs(ps[k].Depth)
	if !(lim > 0) || !(math.Abs(z-ps[a].Point[2]) > lim || math.Abs(z-ps[b].Point[2]) > lim) {
		return 0, 0, 0, false
	}
	sa, ssa := slopeDeg(&ps[a], &ps[k])
	sb, ssb := slopeDeg(&ps[k], &ps[b])
	d := math.Abs(sa - sb)
	if !(d > bendK*math.Hypot(ssa, ssb)+BendFloorDeg) {
		return 0, 0, 0, false
	}
	return d / math.Sqrt(12), sa, sb, true
}

// bendK is the number of combined sigmas by which a station's fitted dip
// must depart from its neighbours' slope, beyond BendFloorDeg, to be read
// as a bend nearby.
const bendK = 3.0

// BendDoubt records a station whose fitted dip departs from the slope of
// the depths of the stations either side (bendDoubt), and the sigmas the
// route widened for it.
type BendDoubt struct {
	// FitDip and FitDipSigma are the station's fitted dip along
	// increasing chainage (positive: deepening), degrees, and its sigma.
	FitDip, FitDipSigma float64
	// RouteDip and RouteDipSigma are the slope of the depths of the
	// stations either side, over the chainage between them, degrees.
	RouteDip, RouteDipSigma float64
	// Spread is the departure of FitDip from RouteDip, degrees: the
	// amount by which the sigmas are widened.
	Spread float64
	// DipSigma, DepthSigma and CurrentSigma are the station's widened
	// sigmas (degrees, m, A); the fit's own are FitDipSigma and
	// FitDepthSigma, FitCurrentSigma.
	DipSigma, DepthSigma, CurrentSigma float64
	FitDepthSigma, FitCurrentSigma     float64
	// Depth and Current are the station's, m and A.
	Depth, Current float64
	// between names the stations whose depths give RouteDip.
	between string
	// Kinked is true when the widening is for the change of slope at the
	// station (sideKink): SlopeBefore is the slope from the station
	// before (named by before) to this one, SlopeAfter from this one to
	// the station after, degrees.
	Kinked                  bool
	SlopeBefore, SlopeAfter float64
	before, after           string
}

// bendValues are the numbers behind a bend-near clause.
func bendValues(bd *BendDoubt) []Value {
	return []Value{
		{Name: "fitted dip", Value: bd.FitDip, Sigma: bd.FitDipSigma, Unit: "deg"},
		{Name: "slope of neighbouring depths", Value: bd.RouteDip, Sigma: bd.RouteDipSigma, Unit: "deg"},
		{Name: "depth", Value: bd.Depth, Sigma: bd.DepthSigma, Unit: "m"},
		{Name: "current", Value: bd.Current, Sigma: bd.CurrentSigma, Unit: "A"},
	}
}

// fitDipAlong is the dip of p's line along increasing chainage, degrees,
// positive where the line deepens (Dir is a unit vector along the route).
func fitDipAlong(p *Placed) float64 {
	return math.Atan2(-p.Dir[2], math.Hypot(p.Dir[0], p.Dir[1])) * 180 / math.Pi
}

// slopeDeg is the slope of the conductor from a to b, degrees, positive
// where it deepens along the chainage, and its sigma from the two
// depths' sigmas. The depths are the fitted points' heights (the conductor
// in space, whatever the depth reference), the run their chainage apart;
// a traverse's place along the route is its own, so the run's sigma is
// taken as zero.
func slopeDeg(a, b *Placed) (deg, sigma float64) {
	run := b.Chainage - a.Chainage
	g := (a.Point[2] - b.Point[2]) / run
	sg := math.Hypot(a.DepthSigma, b.DepthSigma) / math.Abs(run)
	return math.Atan(g) * 180 / math.Pi, sg / (1 + g*g) * 180 / math.Pi
}

// bendDoubt widens the sigmas of the stations whose fitted dip departs
// from the slope of their neighbours' depths by more than bendK combined
// sigmas plus BendFloorDeg, where that slope is BendMinSlopeDeg or more
// and the widening moves the depth by BendMinDepthShift or more, and
// returns a caution for each. A station is checked when its fit is
// usable, its dip was fitted (DipSigma > 0) and a usable station lies
// more than 1 m along the route on at least one side: at the route's
// ends the slope is the one to the neighbour there.
//
// The widening W is the departure of the fitted dip from the neighbours'
// slope. (Taking the larger departure from the slope to either neighbour
// alone covered a station beside the foot of a dive better, but at a
// sharp change of depth one side's slope reached 13 deg more than the
// fit's, and the depth's sigma 1.5 m at 5.4 m.) The dip's sigma becomes hypot(sigma, W). A
// straight line tilted by W about the point under the traverse moves by
// W (radians) times the distance along it over which the readings weigh
// it, about their distance from it (the median of Station.Reach, or the
// depth): the depth's sigma widens by that. The current of a line read at
// a distance r scales as the distance the fit puts it at, so its sigma
// widens by the same fraction, W times the current.
func bendDoubt(ps []Placed, set *Settings) []Finding {
	var out []Finding
	single := len(ps) == 1
	for k := range ps {
		p := &ps[k]
		if !p.usable() || !(p.DipSigma > 0) || len(ps) < 2 {
			continue
		}
		a, b := -1, -1
		for i := k - 1; i >= 0; i-- {
			if ps[i].usable() && p.Chainage-ps[i].Chainage > 1 {
				a = i
				break
			}
		}
		for i := k + 1; i < len(ps); i++ {
			if ps[i].usable() && ps[i].Chainage-p.Chainage > 1 {
				b = i
				break
			}
		}
		if a < 0 && b < 0 {
			continue
		}
		// At the route's end the slope to the one neighbour there is.
		if a < 0 {
			a = k
		}
		if b < 0 {
			b = k
		}
		fit := fitDipAlong(p)
		rd, rs := slopeDeg(&ps[a], &ps[b])
		d := fit - rd
		w := 0.0
		if math.Abs(rd) >= BendMinSlopeDeg && math.Abs(d) > bendK*math.Hypot(p.DipSigma, rs)+BendFloorDeg {
			w = math.Abs(d)
		}
		kink, sa, sb, kinked := sideKink(ps, k, a, b)
		kinked = kinked && kink > w
		if kinked {
			w = kink
		}
		if !(w > 0) {
			continue
		}
		wr := w * math.Pi / 180
		reach := p.Depth
		if n := len(p.Reach); n > 0 {
			reach = p.Reach[n/2]
		}
		if !(wr*math.Abs(reach) >= BendMinDepthShift) {
			continue
		}
		bd := &BendDoubt{between: pairText(ps[a].Key, ps[b].Key), Depth: p.Depth, Current: p.Current, FitDip: fit, FitDipSigma: p.DipSigma, RouteDip: rd, RouteDipSigma: rs, Spread: w,
			FitDepthSigma: p.DepthSigma, FitCurrentSigma: p.CurrentSigma}
		if kinked {
			bd.Kinked, bd.SlopeBefore, bd.SlopeAfter = true, sa, sb
			bd.before, bd.after = ps[a].Key, ps[b].Key
		}
		bd.DipSigma = math.Hypot(p.DipSigma, w)
		bd.DepthSigma = math.Hypot(p.DepthSigma, wr*math.Abs(reach))
		bd.CurrentSigma = math.Hypot(p.CurrentSigma, wr*math.Abs(p.Current))
		if kinked {
			// Beside a change of slope the current is not widened: the
			// review's T06 and T07 read it within 1% (0.8 of their own
			// sigmas) while their dip was 11 deg off; widened by W times
			// it, 0.25 A on 2 A, it hid the anomaly the summed splits
			// beside them are (report TestScatterLeavesOutAnomalies).
			bd.CurrentSigma = p.CurrentSigma
		}
		p.Bend = bd
		out = append(out, Finding{
			Kind:     KindBendNear,
			Severity: SeverityCaution,
			From:     p.Chainage,
			To:       p.Chainage,
			Position: p.Point,
			Keys:     []string{p.Key},
			Message:  at(p, single) + ": " + bendClause(bd, bd.between) + ". Check the depth here by another means before relying on it.",
			Values:   bendValues(bd),
		})
	}
	// Widened after every station is checked, so that each is compared
	// with its neighbours' own sigmas.
	for k := range ps {
		if bd := ps[k].Bend; bd != nil {
			ps[k].DipSigma, ps[k].DepthSigma, ps[k].CurrentSigma = bd.DipSigma, bd.DepthSigma, bd.CurrentSigma
		}
	}
	return out
}

// pairText names the stations whose depths give a slope.
func pairText(a, b string) string { return "from " + a + " to " + b }

// bendClause words a BendDoubt for a crew, the neighbouring stations
// named by between.
func bendClause(bd *BendDoubt, between string) string {
	if bd.Kinked {
		return fmt.Sprintf("the conductor bends near here: by its elevations (not its cover) it dips at %.3g deg from %s to here and at %.3g deg from here to %s (dips positive where it deepens along the chainage), so the straight line fitted here (dip %s deg) is tilted by the conductor's turn nearby; its dip and depth are less certain than the fit alone says (sigmas widened to dip ± %s deg, depth ± %s m)",
			bd.SlopeBefore, bd.before, bd.SlopeAfter, bd.after, PlusMinus(bd.FitDip, bd.FitDipSigma),
			SigmaText(bd.DipSigma), SigmaText(bd.DepthSigma))
	}
	return fmt.Sprintf("the conductor bends near here: the fit gives a dip of %s deg, but by its elevations (not its cover) at the stations %s it dips at %s deg (dips positive where it deepens along the chainage), so the straight line fitted here is tilted by the conductor's turn nearby; its dip, depth and current are less certain than the fit alone says (sigmas widened to dip ± %s deg, depth ± %s m, current ± %s A)",
		PlusMinus(bd.FitDip, bd.FitDipSigma), between, PlusMinus(bd.RouteDip, bd.RouteDipSigma),
		SigmaText(bd.DipSigma), SigmaText(bd.DepthSigma), SigmaText(bd.CurrentSigma))
}

// mergeBends folds each bend-near finding into the poor-fit or weak-source
// finding of the same station, when there is one: that finding already
// tells the crew the straight line is only approximate there, and the
// bend's clause, with its widened sigmas, joins it rather than standing
// as a second caution on one station (the review bore's T17, 2 m from
// where it levels off, keeps its one poor-fit caution).
func mergeBends(fs []Finding, ps []Placed) []Finding {
	bend := map[string]*BendDoubt{}
	for k := range ps {
		if ps[k].Bend != nil && ps[k].Key != "" {
			bend[ps[k].Key] = ps[k].Bend
		}
	}
	merged := map[string]bool{}
	for j := range fs {
		g := &fs[j]
		if g.Kind != KindPoorFit && g.Kind != KindWeakSource || len(g.Keys) != 1 {
			continue
		}
		k := g.Keys[0]
		if bd := bend[k]; bd != nil && !merged[k] {
			g.Message += "; " + bendClause(bd, bd.between)
			vs := bendValues(bd)
			if g.Kind == KindWeakSource {
				// The weak source's own "current" leads its values: the
				// bent station's is named apart, so that the two do not
				// share one name and key (report's findingValueKeys).
				for i := range vs {
					if vs[i].Name == "current" {
						vs[i].Name = "current at the bend"
					}
				}
			}
			g.Values = append(g.Values, vs...)
			if g.Kind == KindPoorFit {
				g.Reasons = append(g.Reasons, bendClause(bd, bd.between))
			}
			merged[k] = true
		}
	}
	out := fs[:0:0]
	for _, f := range fs {
		if f.Kind == KindBendNear && merged[f.Keys[0]] {
			continue
		}
		out = append(out, f)
	}
	return out
}
