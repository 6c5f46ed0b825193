package report

import (
	"fmt"
	"math"
	"strings"
)

// routeAnomalyK is the number of combined standard deviations by which a
// station's current must differ from both nearest used neighbours', in
// the same sense, for routeCoverDoubt to call it inconsistent with them
// (the object search's dipoleAgreeK).
const routeAnomalyK = dipoleAgreeK

// routeCoverDoubt says why conductor 1's least cover, at its station s of
// route r, may not be the conductor's: the fit of s's group is poor or
// ambiguous (Group.Problem, not a base-gap mark alone: fitDoubted), or
// s's current differs from both nearest used neighbours' in the same
// sense by more than routeAnomalyK combined standard deviations (the
// stations' sigmas and the route's between-station scatter in
// quadrature). A conductor keeps its current
// between tees and faults, and a step changes it on one side only; a
// fit whose current departs from both sides has absorbed a field the
// straight-line model does not describe (in review a steel object
// lying over a 20 A cable 1.0 m down gave a poor fit of 14.9 A at its
// traverse, neighbours 20.0 ± 0.02 A, and a headline least cover of
// 0.578 ± 0.018 m, 23 sigma shallow, with no caveat). "" when neither
// holds.
func routeCoverDoubt(d *Document, r *Route, s Station) string {
	var why []string
	if g := d.groupByKey(s.Key); g != nil && d.fitDoubted(g) {
		why = append(why, "its traverse's fit is poor or ambiguous")
	}
	if lo, hi, ok := routeNeighbours(r, s.Key); ok {
		tau := 0.0
		if r.StationScatterCurrent != nil {
			tau = *r.StationScatterCurrent
		}
		// At the first walk's level on a route walked again at another
		// current (Route.FirstWalk), with the sigmas the steps take
		// (Station.RouteCurrentSigma), as the route's own neighbour tests
		// do: with the fit's widened sigma of a poor neighbour, T14's
		// 0.16 A for the 0.027 A the route weighed it by, T15's anomaly
		// fell under the limit and the least cover there lost its caveat
		// (open/bend.toml seed 5; found in review).
		sv, ss := s.routeLevelCurrent()
		off := func(n Station) float64 {
			nv, ns := n.routeLevelCurrent()
			sg := math.Sqrt(ss*ss + ns*ns + tau*tau)
			return (sv - nv) / sg
		}
		a, b := off(lo), off(hi)
		if (a > routeAnomalyK && b > routeAnomalyK) || (a < -routeAnomalyK && b < -routeAnomalyK) {
			lv, ls := lo.routeLevelCurrent()
			hv, hs := hi.routeLevelCurrent()
			level := ""
			if r.FirstWalk != "" {
				level = fmt.Sprintf(", at the level of %s", r.FirstWalk)
			}
			// A poor fit's uncertainty here is the route's, narrower than
			// the one its row in the table of fits gives: say so, or the
			// caveat reads against the table.
			var narrowed []string
			for _, n := range []Station{s, lo, hi} {
				if n.RouteCurrentSigma != nil {
					narrowed = append(narrowed, n.Key)
				}
			}
			route := ""
			if len(narrowed) > 0 {
				route = fmt.Sprintf(", taking %s's uncertainty as the route weighs it, without the widening for its misfit that the table of fits gives", keyList(narrowed))
			}
			why = append(why, fmt.Sprintf("its current, %s A, differs from both neighbours' (%s A at %s, %s A at %s%s) by more than %d times their uncertainties%s",
				pm(sv, ss), pm(lv, ls), lo.Key, pm(hv, hs), hi.Key, level, routeAnomalyK, route))
		}
	}
	if len(why) == 0 {
		return ""
	}
	return "from a fit that may not describe the conductor there (" + strings.Join(why, "; ") +
		"; a magnetised object near the conductor, a bend or a change of depth that the straight-line model misses)"
}

// routeNeighbours returns the nearest used stations of r before and after
// the station keyed key; ok is false when either side has none. Its own
// repeats (a route walked again: stations within RepeatGap of it, or at
// its chainage) are not its neighbours: T14 had been compared with its
// own repeat and the other walk's T13 at their raw currents, 10% above
// its own on a re-walk at more current (found in review).
func routeNeighbours(r *Route, key string) (lo, hi Station, ok bool) {
	at := -1
	for i, s := range r.Stations {
		if s.Key == key {
			at = i
			break
		}
	}
	if at < 0 {
		return lo, hi, false
	}
	c := r.Stations[at].Chainage
	other := func(n *Station) bool {
		d := math.Abs(n.Chainage - c)
		return n.Used && d > 0 && d >= r.RepeatGap
	}
	okLo, okHi := false, false
	for i := at - 1; i >= 0 && !okLo; i-- {
		if other(&r.Stations[i]) {
			lo, okLo = r.Stations[i], true
		}
	}
	for i := at + 1; i < len(r.Stations) && !okHi; i++ {
		if other(&r.Stations[i]) {
			hi, okHi = r.Stations[i], true
		}
	}
	return lo, hi, okLo && okHi
}

// soundCoverOf is the shallowest used station of route r for which
// routeCoverDoubt finds nothing, its cover and the cover's sigma; ok is
// false when there is none or the ground is not known.
func soundCoverOf(d *Document, r *Route) (lo Station, cover, sigma float64, ok bool) {
	found := false
	for _, s := range r.Stations {
		if s.Used && (!found || s.Depth < lo.Depth) && routeCoverDoubt(d, r, s) == "" {
			lo, found = s, true
		}
	}
	if !found {
		return lo, 0, 0, false
	}
	cover, ok = d.cover(lo.Depth)
	return lo, cover, d.coverSigma(lo.DepthSigma), ok
}

// groupByKey is the group keyed key, nil when there is none.
func (d *Document) groupByKey(key string) *Group {
	for i := range d.Groups {
		if d.Groups[i].Key == key {
			return &d.Groups[i]
		}
	}
	return nil
}
