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
// counts the dipole's six parameters against the line's four or five,
// and a long line, whose field along the traverse falls as the inverse
// distance and not as its cube, keeps a lower criterion than a point
// dipole put in its place. A short one does not: a short current element
// (a bonding lead, a stub, a service ending near the traverse) has a
// field that falls faster than a long line's, and in review a 0.3 A lead
// 0.3 m down across one traverse beside a 20 A cable fitted a dipole 0.9
// m down better by 231; its shallow-cover warning had become an
// info-level object. The readings do not tell the two apart, so the line
// the object replaces (dipoleSearch.replaced, Fit.replaced) keeps its
// cover check: where its cover is short, addLoneCover gives the finding
// at the line's own severity naming both readings, "a shallow live
// conductor or a magnetised object; treat as live" (objectLineCover),
// and the object's own finding points to it; the object replaces the
// line silently only where the line's cover is clear
// (TestBondLeadKeepsShallowWarning). An object alone (the conductor then
// carrying nothing) still needs dipoleBIC.
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

// searchLone searches f's fit for a magnetised object in place of one of
// its loneWeak lines at a time: the fit's other lines held (a weak line
// along the conductor, such as a steel main's own small current, is
// kept: dropped, the object takes its field and is misplaced towards the
// cable; and so is every other weak line, which the object does not
// explain: before fix-fx28n all of the group's weak lines went together,
// and a real service beside a joint went with it), the object placed
// where the grid puts it and from the line's point, the search with the
// largest gain kept, with the line it replaces (dipoleSearch.replaced).
func searchLone(f *Fit) *dipoleSearch {
	res := f.Result
	var weak []int
	for k := range res.Sources {
		if loneWeak(res, k) {
			weak = append(weak, k)
		}
	}
	if len(weak) == 0 || len(weak) == len(res.Sources) {
		return nil
	}
	var best *dipoleSearch
	for _, k := range weak {
		var lines []*inverse.SourceEstimate
		for j := range res.Sources {
			if j != k {
				lines = append(lines, &res.Sources[j])
			}
		}
		start := res.Sources[k].Point
		for _, at := range []*[3]float64{nil, &start} {
			if ds := searchFrom(f, lines, at); ds != nil && (best == nil || ds.gain > best.gain) {
				ds.replaced = []int{k}
				best = ds
			}
		}
	}
	return best
}
