package route

import (
	"fmt"
	"math"
)

// furtherWeak is the fraction of a station's conductor's current below
// which a further line source of its fit counts as weak. A quarter: on
// the demo route a line of 8.5 A beside the 42 A cable (20%), 3.4 m down
// and dipping 58 degrees, absorbed the cable's change of depth at T16 and
// went unexplained at 10% (found in review).
const furtherWeak = 0.25

// furtherSteep is the dip, degrees from horizontal, above which a further
// line source counts as steep. Buried conductors run near level between
// their ends and risers; a weak line fitted steeply beside a strong level
// one is more likely the fit absorbing a bend or a change of depth of the
// strong one (a departure from one straight line) than a conductor.
const furtherSteep = 45.0

// WeakSteep tells whether a further line of current current (the sign
// ignored) dipping dip degrees from horizontal, beside a station's
// conductor of current main, is weak and steep: reported as a possible
// artefact (weakSources), not checked as a conductor (LoneCover).
func WeakSteep(main, current, dip float64) bool {
	main = math.Abs(main)
	return main > 0 && math.Abs(current)/main < furtherWeak && math.Abs(dip) > furtherSteep
}

// weakSources reports the further line sources (Station.Further) of usable
// stations that are weak (under furtherWeak of the station's current) and
// steep (dipping more than furtherSteep): they may be artefacts, or real
// and shallow, and a crew should know either way.
func weakSources(ps []Placed, set *Settings) []Finding {
	var out []Finding
	for i := range ps {
		p := &ps[i]
		main := math.Abs(p.Current)
		if !p.usable() || main == 0 {
			continue
		}
		for k := range p.Further {
			l := &p.Further[k]
			if !l.finite() {
				continue
			}
			share := math.Abs(l.Current) / main
			dip := l.dip()
			if share >= furtherWeak || dip <= furtherSteep {
				continue
			}
			out = append(out, weakFinding(p, l, share, dip, set, len(ps) == 1))
		}
	}
	return out
}

// finite reports whether all of l's numbers are finite and its sigmas not
// negative; other lines are not judged.
func (l *Line) finite() bool {
	for _, v := range []float64{l.Point[0], l.Point[1], l.Point[2], l.Dir[0], l.Dir[1], l.Dir[2], l.Current, l.Depth} {
		if !finite(v) {
			return false
		}
	}
	return finite(l.CurrentSigma) && finite(l.DepthSigma) && l.CurrentSigma >= 0 && l.DepthSigma >= 0
}

// dip is the line's angle from horizontal, degrees in [0, 90]; zero for a
// zero Dir.
func (l *Line) dip() float64 {
	return math.Atan2(math.Abs(l.Dir[2]), math.Hypot(l.Dir[0], l.Dir[1])) * 180 / math.Pi
}

// weakFinding describes weak, steep further line l at station p. It is a
// caution when the minimum cover is checked and l, were it a conductor,
// may lie shallower than it; information otherwise.
func weakFinding(p *Placed, l *Line, share, dip float64, set *Settings, single bool) Finding {
	f := Finding{
		Kind:     KindWeakSource,
		Severity: SeverityInfo,
		From:     p.Chainage, To: p.Chainage,
		Position: l.Point,
		Keys:     []string{p.Key},
	}
	msg := fmt.Sprintf("the fit at %s has a further line source of %s A (%.2g%% of the conductor's %.3g A) dipping %.0f degrees, %s at its fitted point: a source this much weaker than the conductor and this steep may absorb a bend or a change of depth of the conductor rather than mark another conductor",
		at(p, single), pm(math.Abs(l.Current), l.CurrentSigma), 100*share, math.Abs(p.Current), dip, set.depthText(l.Depth, l.DepthSigma))
	if set != nil && set.MinCover > 0 {
		msg += fmt.Sprintf(", so its cover is not checked against the %.2f m minimum", set.MinCover)
		if c, sc := set.cover(l.Depth, l.DepthSigma); c-set.coverK()*sc < set.MinCover {
			f.Severity = SeverityCaution
			msg += "; but if it is a real conductor it may lie shallower than that minimum: confirm before digging here"
		}
	} else {
		msg += "; if it is a real conductor, it lies at the depth given"
	}
	f.Message = msg
	f.Values = append([]Value{
		{Name: "current", Value: math.Abs(l.Current), Sigma: l.CurrentSigma, Unit: "A"},
		{Name: "share of the conductor's current", Value: 100 * share, Unit: "%"},
		{Name: "dip", Value: dip, Unit: "deg"},
	}, set.depthValues(l.Depth, l.DepthSigma)...)
	return f
}
