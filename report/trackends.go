package report

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/inverse/route"
)

// Where a further conductor ends beside conductor 1.
//
// A service laid beside conductor 1 that ends within the survey (a
// termination, a cut, a joint to a line that leaves it) stops being fitted
// at the first traverse past its end, but the field of its end reaches on:
// a half-line's field falls off as h^2/(4 d^2) past its end and spreads
// wide (Biot-Savart over the half-line), and no count of straight lines
// fits it. In review an 8 A service 1.2 m beside a 25 A main, ending 1.5 m
// past a traverse, was followed as conductor 2 to that traverse; the fits
// past it chose one line, whose current and depth took in the end's field
// (17-24 sigma off, 13 m on), and nothing said that conductor 2 ended,
// which is what a crew needs (simulated).
//
// So a further conductor that is not a go-and-return pair, laid within
// trackEndAngle of conductor 1 in plan at its last stations, whose track
// stops at a group beyond which conductor 1 runs on with usable fits, and
// where the first of those fits misses its readings (a poor fit, or an rms
// over trackEndMisfit times the noise measured apart from it), is reported
// as ending there, with conductor 1's fits beyond that miss their readings
// named: their estimates carry the end's field. The same at the start of
// the route. The end's field is not modelled: conductor 1's sigmas there
// are the line model's.
const (
	trackEndAngle  = 20.0
	trackEndMisfit = 1.5
)

// trackEnds appends to the route of each track of tracks the findings of
// where it ends beside the primary route r (see above); rs gives the
// poor-fit limit.
func trackEnds(r *route.Route, tracks []builtTrack, rs *route.Settings) {
	if r == nil {
		return
	}
	pos := map[string]int{}
	for i := range r.Stations {
		pos[r.Stations[i].Key] = i
	}
	limit := 4.0
	if rs != nil && rs.MaxReducedChi2 != 0 {
		limit = rs.MaxReducedChi2
	}
	misses := func(p *route.Placed) (float64, bool) {
		if !p.OK {
			return 0, false
		}
		if p.Noise > 0 && p.RMS > trackEndMisfit*p.Noise {
			return p.RMS / p.Noise, true
		}
		if limit > 0 && p.DOF > 0 && p.Chi2/float64(p.DOF) > limit {
			return 0, true
		}
		return 0, false
	}
	for ti := range tracks {
		t := &tracks[ti]
		if t.pair || t.route == nil {
			continue
		}
		var at []int // primary positions of the track's usable stations
		own := map[int]*route.Placed{}
		for k := range t.route.Stations {
			p := &t.route.Stations[k]
			if i, ok := pos[p.Key]; ok && p.OK && !p.Dipole {
				at = append(at, i)
				own[i] = p
			}
		}
		if len(at) < 2 {
			continue
		}
		lo, hi := at[0], at[0]
		for _, i := range at {
			lo, hi = min(lo, i), max(hi, i)
		}
		for _, step := range []int{1, -1} {
			last := hi
			if step < 0 {
				last = lo
			}
			// The track's stations nearest its end must run with
			// conductor 1.
			parallel := true
			for n, i := 0, last; n < 3 && i >= lo && i <= hi; i -= step {
				if p := own[i]; p != nil {
					if planAngle(p.Dir, r.Stations[i].Dir) > trackEndAngle {
						parallel = false
					}
					n++
				}
			}
			if !parallel {
				continue
			}
			var past []int
			for i := last + step; i >= 0 && i < len(r.Stations); i += step {
				if p := &r.Stations[i]; p.OK && !p.Dipole {
					past = append(past, i)
				}
			}
			if len(past) == 0 || past[0] != last+step {
				continue
			}
			if _, miss := misses(&r.Stations[past[0]]); !miss {
				continue
			}
			var named []string
			for _, i := range past {
				p := &r.Stations[i]
				ratio, miss := misses(p)
				if !miss {
					break
				}
				if ratio > 0 {
					named = append(named, fmt.Sprintf("%s by %.2g times", p.Key, ratio))
				} else {
					named = append(named, fmt.Sprintf("%s, a poor fit", p.Key))
				}
			}
			t.route.Findings = append(t.route.Findings, trackEndFinding(r, own[last], &r.Stations[last], &r.Stations[past[0]], &r.Stations[past[len(past)-1]], named))
		}
	}
}

// trackEndFinding words the end of a track whose last station p lies at
// conductor 1's station a, with b conductor 1's next usable station past
// it and z its last; named lists conductor 1's stations past it whose fits
// miss their readings, with by how much.
func trackEndFinding(r *route.Route, p, a, b, z *route.Placed, named []string) route.Finding {
	gap := math.Abs(b.Chainage - a.Chainage)
	first, second := p.Chainage, p.Chainage+gap
	return route.Finding{
		Kind:     route.KindCurrentStep,
		Severity: route.SeverityCaution,
		From:     first,
		To:       second,
		Position: p.Point,
		Keys:     []string{a.Key, b.Key},
		Message: fmt.Sprintf("not found past %s (%s A there) while conductor 1 runs on to %s: it appears to end between %s and %s (conductor 1's chainage %.1f to %.1f m; a termination, a cut, or a joint to a line that leaves the survey; check where it goes); conductor 1's fits past it miss their readings by more than the noise measured apart from them (%s), as the field of a line's end beside it makes them (not modelled), so conductor 1's current and depth there may be off by more than their uncertainties",
			a.Key, pm(math.Abs(p.Current), p.CurrentSigma), z.Key, a.Key, b.Key, a.Chainage, b.Chainage, strings.Join(named, ", ")),
		Values: []route.Value{
			{Name: "current at its last station", Value: math.Abs(p.Current), Sigma: p.CurrentSigma, Unit: "A"},
		},
	}
}

// planAngle is the angle in plan between the lines along u and v, degrees
// in [0, 90]; zero when either has no horizontal part.
func planAngle(u, v [3]float64) float64 {
	nu, nv := math.Hypot(u[0], u[1]), math.Hypot(v[0], v[1])
	if !(nu > 0) || !(nv > 0) {
		return 0
	}
	c := math.Abs(u[0]*v[0]+u[1]*v[1]) / (nu * nv)
	return math.Acos(math.Min(1, c)) * 180 / math.Pi
}
