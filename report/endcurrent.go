package report

import (
	"fmt"
	"math"
	"strings"
)

// The currents at a route's ends, as the summary sentences give them.
//
// Conductor 1's sentence and each further conductor's give the current
// at the first and last used stations. On a route walked again at
// another current (Route.FirstWalk) each end is the inverse-variance
// mean over the end station's repeats at the first walk's level
// (endLevel), named by the first walk's station; a further conductor's
// sentence took the first station's raw current and the last repeat's
// raw current, so the feeder of a re-walked route read "25.026 A at T01
// and 24.299 A at d2.csv:T12", a 0.7 A fall from one day's start to the
// next day's end, where each walk lost 3 A (found in review). On an AC
// route each end's phase is given beside its RMS current: where current
// leaves at an angle to the line current the RMS current can rise past
// the fault while the phase turns, and conductor 1's sentence without
// the phase read as current joining (found in review).

// endStation returns the station naming route r's end at used station a:
// when the walks were brought to one level (r.FirstWalk), the first of
// a's repeats in route order (the first walk's, as the route puts
// repeats in the order of the walks), else a itself.
func (r *Route) endStation(a *Station) *Station {
	if r.FirstWalk == "" {
		return a
	}
	for i := range r.Stations {
		s := &r.Stations[i]
		if s.Used && math.Abs(s.Chainage-a.Chainage) < r.RepeatGap {
			return s
		}
	}
	return a
}

// endPhase returns the AC phase at route r's end at used station a, deg,
// and its sigma: pooled over a's repeats, as endLevel pools the current,
// when the walks were brought to one level (inverse-variance mean of the
// phases taken within 180 degrees of a's own); a's own otherwise. ok is
// false when a has no phase.
func (r *Route) endPhase(a *Station) (ph, sigma float64, ok bool) {
	if a.Phase == nil || a.PhaseSigma == nil {
		return 0, 0, false
	}
	ref := *a.Phase
	if r.FirstWalk == "" {
		return ref, *a.PhaseSigma, true
	}
	var sw, swv float64
	for i := range r.Stations {
		s := &r.Stations[i]
		if !s.Used || s.Phase == nil || s.PhaseSigma == nil || math.Abs(s.Chainage-a.Chainage) >= r.RepeatGap {
			continue
		}
		if !(*s.PhaseSigma > 0) {
			return ref, *a.PhaseSigma, true
		}
		w := 1 / (*s.PhaseSigma * *s.PhaseSigma)
		sw += w
		swv += w * (ref + wrapDeg(*s.Phase-ref))
	}
	if !(sw > 0) {
		return ref, *a.PhaseSigma, true
	}
	return wrapDeg(swv / sw), math.Sqrt(1 / sw), true
}

// endCurrent words the current at route r's end at used station a for a
// summary sentence: "25.006 ± 0.011 A", on an AC route with its phase,
// "20.2051 ± 0.0052 A ∠-8.3653 ± 0.0077°" (" (phase not determined)" when
// the fit gave none), at the first walk's level when r.FirstWalk is set.
func endCurrent(d *Document, r *Route, a *Station) string {
	i, si := r.endLevel(a)
	s := fmt.Sprintf("%s A", pm(i, si))
	if ph, sp, ok := r.endPhase(a); ok {
		return s + stationPhase(d, Station{Phase: &ph, PhaseSigma: &sp, Used: true})
	}
	return s + stationPhase(d, *a)
}

// firstWalkClause is the summary's clause saying that route r's end
// currents are at the first walk's level: ", both at the level of
// day1.csv (...)"; empty when the walks were not brought to one level.
func firstWalkClause(r *Route) string {
	if r.FirstWalk == "" {
		return ""
	}
	return fmt.Sprintf(", both at the level of %s (the walks' currents differ; the others' are brought to it as the walks-differ caution says)", r.FirstWalk)
}

// firstWalkName names the first walk for a plot or caption: "d1.csv
// (the first walk)", or "the first walk" when the walks are not named
// by their logs (Route.FirstWalk).
func firstWalkName(w string) string {
	if w == "" || strings.HasPrefix(w, "the ") {
		return w
	}
	return w + " (the first walk)"
}

// endBefore returns the current that conductor 1 carries before an end
// found next to its used end station at chainage (an end finding of
// inverse/route ends.go: a current-step warning with the "current before"
// and "depth before" values, its bracket starting or ending there), as
// that warning gives it: allowing, where it could, for the share of the
// end's field that the stations nearest the end miss. Those stations'
// own currents read low: the summary gave "9.996 A at chainage 0 m and
// 7.800 A at 28 m", a 2.2 A loss, beside the warning that the conductor
// carries 10.042 A up to its end (found in review). ok is false when no
// end lies next to it; past is true when the end lies at greater
// chainage than the station.
func endBefore(d *Document, chainage float64) (current Value, past, ok bool) {
	const near = 0.5 // m: the bracket's end is the station's own chainage
	for i := range d.Findings {
		f := &d.Findings[i]
		if f.Kind != "current-step" || f.Conductor != 0 || f.Lone {
			continue
		}
		if math.Abs(f.ChainageFrom-chainage) > near && math.Abs(f.ChainageTo-chainage) > near {
			continue
		}
		var cur Value
		var hasCur, hasDepth bool
		for _, v := range f.Values {
			switch v.Name {
			case "current before":
				cur, hasCur = v, true
			case "depth before":
				hasDepth = true
			}
		}
		if hasCur && hasDepth {
			return cur, math.Abs(f.ChainageFrom-chainage) <= near, true
		}
	}
	return Value{}, false, false
}

// endClause words the current at route r's used end station a for the
// summary: its own current (endCurrent) and chainage, after at
// ("chainage " for the first), or, next to an end
// (endBefore), the current before the end as its warning gives it, with
// a's own low reading beside it.
func endClause(d *Document, r *Route, a *Station, at string) string {
	own := fmt.Sprintf("%s at %s%.0f m", endCurrent(d, r, a), at, a.Chainage)
	c, past, ok := endBefore(d, a.Chainage)
	if !ok || d.Signal.Mode == SignalAC {
		return own
	}
	lv, ls := r.endLevel(a)
	side := "before"
	if past {
		side = "past"
	}
	// Signed as the station's current, along the route.
	s := fmt.Sprintf("%s A up to the conductor's end %s chainage %.0f m, as the end's warning gives it", pm(math.Copysign(math.Abs(c.Value), lv), c.Sigma), side, a.Chainage)
	if math.Abs(math.Abs(lv)-math.Abs(c.Value)) > 2*math.Hypot(ls, c.Sigma) {
		s += fmt.Sprintf(" (a station near an end reads only part of its field: %s's own current reads %s A)", r.endStation(a).Key, pm(lv, ls))
	}
	return s
}
