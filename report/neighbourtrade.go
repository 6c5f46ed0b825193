package report

import (
	"fmt"
	"math"

	"undercurrent/inverse/route"
)

// Current traded between close parallel conductors.
//
// Two lines laid side by side within about their depth of each other are
// told apart by the shape of their fields, and their fitted currents are
// strongly anticorrelated: what the line model lacks at a traverse (the
// field of a fault's end, a joint, a nearby object) is taken up by moving
// current from one line to the other, with each line's sigma, computed for
// the line model, none the wider. In review three parallel lines 1.0 and
// 1.5 m apart, the middle one losing 3 A at a fault between two traverses,
// read a fall of 3.5 A on the strongest line beside it (which loses
// nothing) and a rise of 3.6 A on the faulted one, between the same two
// stations; the route reported the fall on conductor 1 and nothing on the
// conductor that lost the current (simulated).
//
// So a current step, change or anomaly on one conductor whose bracketing
// stations another conductor followed within tradeReach times the deeper
// one's depth shares, where that conductor's current changes the other
// way (in the sense of the first's direction) by tradeLo to tradeHi times
// as much, beyond 3 of its sigma, says so, and is reported a severity
// lower: which of the two lines the change belongs to, or whether it is
// the fit's, the line fits there cannot tell.
const (
	tradeReach = 2.0
	tradeLo    = 0.5
	tradeHi    = 2.0
)

// tradeRoute is one conductor's route for caveatNeighbourTrades: its
// number (1 for the primary) and analysis.
type tradeRoute struct {
	number int
	route  *route.Route
}

// caveatNeighbourTrades words the current steps, changes and anomalies of
// the primary route r and of the tracks matched by a change the other way
// on a close parallel conductor between the same stations (see above).
func caveatNeighbourTrades(r *route.Route, tracks []builtTrack) {
	if r == nil || len(tracks) == 0 {
		return
	}
	all := []tradeRoute{{1, r}}
	for _, t := range tracks {
		if t.route != nil && !t.pair {
			all = append(all, tradeRoute{t.number, t.route})
		}
	}
	at := make([]map[string]*route.Placed, len(all))
	for i, c := range all {
		at[i] = map[string]*route.Placed{}
		for k := range c.route.Stations {
			p := &c.route.Stations[k]
			if p.OK {
				at[i][p.Key] = p
			}
		}
	}
	for i, c := range all {
		demoted := false
		for fi := range c.route.Findings {
			f := &c.route.Findings[fi]
			a, b := bracketOf(f, c.route)
			xa, xb := at[i][a], at[i][b]
			if xa == nil || xb == nil {
				continue
			}
			dx := xb.Current - xa.Current
			var words []string
			for j, o := range all {
				if j == i {
					continue
				}
				ya, yb := at[j][a], at[j][b]
				if ya == nil || yb == nil || !tradeClose(xa, ya) || !tradeClose(xb, yb) {
					continue
				}
				s := 1.0
				if xa.Dir[0]*ya.Dir[0]+xa.Dir[1]*ya.Dir[1] < 0 {
					s = -1
				}
				dy := s * (yb.Current - ya.Current)
				// Each with its sigma for independent readings (route
				// Placed.WhiteSigma): the trade is the model's error at
				// these stations, whose smooth misfit widens their fits'
				// sigmas (a real 3 A loss beside the line had lost this
				// clause so).
				sy := math.Hypot(ya.WhiteSigma(), yb.WhiteSigma())
				if !(dx*dy < 0) || !(math.Abs(dy) > 3*sy) || math.Abs(dy) < tradeLo*math.Abs(dx) || math.Abs(dy) > tradeHi*math.Abs(dx) {
					continue
				}
				sep := 0.5 * (tradePlan(xa, ya) + tradePlan(xb, yb))
				words = append(words, fmt.Sprintf("conductor %d, %.2g m beside it, changes the other way by %s A between the same stations (%s A at %s, %s A at %s)",
					o.number, sep, pm(math.Abs(dy), sy), pm(ya.Current, ya.WhiteSigma()), a, pm(yb.Current, yb.WhiteSigma()), b))
			}
			if len(words) == 0 {
				continue
			}
			f.Message += "; " + keyList(words) + ": the fit trades current between lines this close, so the change may be the other conductor's (current leaving it reads as a fall on one line and a rise on the other) or the fit's error, and which conductor it belongs to cannot be told from these fits"
			if f.Severity != route.SeverityInfo {
				demoteFinding(f)
				demoted = true
			}
		}
		if demoted {
			sortFindings(c.route.Findings)
		}
	}
}

// bracketOf returns the keys of the stations of r that bracket a change
// of current reported by f: a current step's or change's first and last
// stations, an anomaly's station and the one before it, or, for a change
// reported as a poor fit's (one with a change between its bracketing
// stations: steps.go, strain.go), the stations at its chainages From and
// To. It returns empty keys for other findings.
func bracketOf(f *route.Finding, r *route.Route) (a, b string) {
	switch f.Kind {
	case route.KindCurrentStep, route.KindCurrentChange:
		if len(f.Keys) >= 2 {
			return f.Keys[0], f.Keys[len(f.Keys)-1]
		}
	case route.KindCurrentAnomaly:
		if len(f.Keys) >= 2 {
			return f.Keys[0], f.Keys[1]
		}
	case route.KindPoorFit:
		if !(f.To > f.From) {
			return "", ""
		}
		named := false
		for _, v := range f.Values {
			named = named || v.Name == "change between bracketing stations"
		}
		if !named {
			return "", ""
		}
		for k := range r.Stations {
			p := &r.Stations[k]
			if math.Abs(p.Chainage-f.From) < 1e-6 {
				a = p.Key
			}
			if math.Abs(p.Chainage-f.To) < 1e-6 {
				b = p.Key
			}
		}
		if a != "" && b != "" {
			return a, b
		}
	}
	return "", ""
}

// tradeClose reports whether the lines of stations p and q lie within
// tradeReach times the deeper one's depth of each other in the cross
// section (plan distance and difference of depth).
func tradeClose(p, q *route.Placed) bool {
	d := math.Hypot(tradePlan(p, q), p.Depth-q.Depth)
	return d <= tradeReach*math.Max(math.Abs(p.Depth), math.Abs(q.Depth))
}

// tradePlan is the distance in plan from q's point to p's line.
func tradePlan(p, q *route.Placed) float64 {
	u := [2]float64{p.Dir[0], p.Dir[1]}
	n := math.Hypot(u[0], u[1])
	dx, dy := q.Point[0]-p.Point[0], q.Point[1]-p.Point[1]
	if !(n > 0) {
		return math.Hypot(dx, dy)
	}
	return math.Abs(dx*u[1]-dy*u[0]) / n
}
