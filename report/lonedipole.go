package report

import (
	"math"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// Weak further lines that may be magnetised objects.
//
// A steel object beside a conductor whose fit stays near the noise is
// not a route anomaly (dipoleCandidates): the fit absorbs its field in a
// weak further line, which no track follows, and the lone line's cover
// check (addLoneCover) then read it as a shallow crossing service. In
// review (an invented street: a 12 A cable 0.6 m down and an uncharged
// steel gas main 1.1 m beside it at 0.8 m, seven magnetised joints of
// 0.8-2 A m^2, 20 traverses 3 m apart) one joint in seven was named as an
// object; the others became lines of 0.09-0.56 A at azimuths 73-145
// degrees, two of them with a warning that their cover (0.22 and 0.13 m)
// was less than the minimum, "confirm before digging", for services that
// do not exist, and the cable's current beside them stood 11 sigma off.
//
// So once the tracks are built, every usable group whose fit holds a
// loneWeak line (under weakShare of the group's strongest current, more
// than loneAzimuth off that conductor's azimuth in plan, sound, and on no
// track) is searched for an object in its place (searchLone: the other
// lines held as the fit's conductors, the object placed from the best
// grid point and from each such weak line), and the object is kept as
// checkDipoles keeps one (credible, off the conductor, the refitted
// current agreeing with its neighbours, one object seen from two
// traverses reported once) when it fits the readings as well as the line
// or better: its gain in the information criterion over the fit with
// the line at least zero, not over dipoleBIC. The criterion already
// counts the dipole's six parameters against the line's four or five, so
// a real line, whose field along the traverse falls as the inverse
// distance and not as its cube, keeps a lower criterion than any point
// dipole put in its place. An object alone (the conductor then carrying
// nothing) still needs dipoleBIC.
//
// A loneWeak line that was not so tested (the test did not run: an object
// already kept at the group, a group the route does not use) keeps its
// cover check as a caution at most (addLoneCover): its field is too weak
// beside the conductor's to tell a service from an object by its cover.

// loneAzimuth is the least angle in plan, degrees, between a weak further
// line and its group's strongest line for the line to be tested as a
// possible object: a weak line along the conductor is more often the
// conductor's own bend or change of depth, which a point dipole also
// mimics (dipoleOffLine).
const loneAzimuth = 10.0

// loneWeak reports whether source j of res is a weak further line off
// the strongest line's azimuth, sound, as checkLoneDipoles tests.
func loneWeak(res *inverse.Result, j int) bool {
	if res == nil || j <= 0 || j >= len(res.Sources) {
		return false
	}
	strongest, at := 0.0, -1
	for k := range res.Sources {
		if res.Sources[k].Kind == KindDipole {
			return false
		}
		if c := math.Abs(res.Sources[k].Current); c > strongest {
			strongest, at = c, k
		}
	}
	s := &res.Sources[j]
	if at < 0 || at == j || s.Kind != KindLine || !sound(s) || !(math.Abs(s.Current) < weakShare*strongest) {
		return false
	}
	return planCos(s.Dir, res.Sources[at].Dir) < math.Cos(loneAzimuth*math.Pi/180)
}

// checkLoneDipoles tests the loneWeak lines that no track follows for a
// magnetised object in their place (see above), marks the groups whose
// object is kept as checkDipoles does, and records on each fit searched
// that its weak lines were tested (Fit.weakTested). It reports whether
// any group changed.
func checkLoneDipoles(fits []Fit, r *route.Route, tracks []builtTrack) bool {
	type key struct{ fit, source int }
	tracked := map[key]bool{}
	for _, t := range tracks {
		for _, m := range t.members {
			for _, j := range m.lines() {
				tracked[key{m.fit, j}] = true
			}
		}
	}
	usable := map[string]bool{}
	for k := range r.Stations {
		if p := &r.Stations[k]; p.OK && !p.Dipole {
			usable[p.Key] = true
		}
	}
	cand := map[string]bool{}
	for i := range fits {
		f := &fits[i]
		if f.Dipole || f.object != nil || f.lineObject != nil || f.surface != nil || f.sameObject != "" ||
			f.Result == nil || f.Problem == nil || !usable[f.Key] {
			continue
		}
		for j := range f.Result.Sources {
			if loneWeak(f.Result, j) && !tracked[key{i, j}] {
				cand[f.Key] = true
				f.weakTested = f.Result
				break
			}
		}
	}
	if len(cand) == 0 {
		return false
	}
	skip := dipoleCandidates(r)
	for k := range cand {
		skip[k] = true
	}
	return checkDipolesOf(fits, r, nil, cand, skip, 0, searchLone)
}

// searchLone searches f's fit for a magnetised object in place of its
// loneWeak lines: from the fit's other lines (a weak line along the
// conductor, such as a steel main's own small current, is kept: dropped,
// the object takes its field and is misplaced towards the cable), the
// object placed first where the grid puts it and then from each loneWeak
// line's point, the search with the larger gain kept.
func searchLone(f *Fit) *dipoleSearch {
	res := f.Result
	var lines []*inverse.SourceEstimate
	var weak []int
	for k := range res.Sources {
		if loneWeak(res, k) {
			weak = append(weak, k)
			continue
		}
		lines = append(lines, &res.Sources[k])
	}
	if len(lines) == 0 || len(weak) == 0 {
		return nil
	}
	best := searchFrom(f, lines, nil)
	for _, k := range weak {
		start := res.Sources[k].Point
		if ds := searchFrom(f, lines, &start); ds != nil && (best == nil || ds.gain > best.gain) {
			best = ds
		}
	}
	return best
}
