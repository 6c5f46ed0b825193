package report

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// addLoneCover checks the cover of every further line source of the
// usable groups of r that no track follows (route.LoneCover: a service
// crossing the route, seen at one traverse) and adds the findings, marked
// Lone and sorted with SortFindings. tracks are the kept tracks; rs the
// route settings; trackMin the fewest groups a track needs
// (BuildSettings.TrackMinStations), so that a line seen at more is not
// said to be seen at too few (route.Line.TrackMin).
//
// A lone line seen in line (loneInLine) and shallow at successive usable
// stations is one finding for the run (route.LoneRunCover), as the
// route's own and the pair's shallow runs are: its stations named, the
// bracket once, the least cover with its station. Before, each station
// gave its own finding with the same run's bracket, and a crew read two
// or three rows of findings.csv for one place (found in review). Lines
// at stations that are not successive, or not in line by their own
// sigmas, stay separate findings.
func (d *Document) addLoneCover(fits []Fit, r *route.Route, rs *route.Settings, tracks []builtTrack, trackMin int) {
	if rs == nil || rs.MinCover <= 0 {
		return
	}
	type key struct{ fit, source int }
	tracked := map[key]bool{}
	for _, t := range tracks {
		for _, m := range t.members {
			for _, j := range m.lines() { // both lines of a pair followed
				tracked[key{m.fit, j}] = true
			}
		}
	}
	// The second line of a same-way split whose sum the route takes
	// (Group.SummedSources) is a share of conductor 1, not a further
	// line: on weld-main (seed 4) and where a cable dives under a road
	// (wrenbeck-dive seed 3, --min-cover 1.0) it was reported as a line
	// "not followed along the route (a crossing service)" with a false
	// shallow cover, at a station whose current is its sum with line 1
	// (found in review).
	summed := map[string][2]int{}
	for i := range d.Groups {
		if g := &d.Groups[i]; g.SummedSources != nil {
			summed[g.Key] = *g.SummedSources
		}
	}
	share := func(fit, j int) bool {
		ss, ok := summed[fits[fit].Key]
		return ok && (j == ss[0] || j == ss[1])
	}
	// The lone lines in route order, each with what its own station's
	// check makes of it (route.LoneMark).
	var lones []loneLine
	for k := range r.Stations {
		p := &r.Stations[k]
		if p.Dipole || p.Index < 0 || p.Index >= len(fits) || fits[p.Index].Result == nil {
			continue
		}
		for j, s := range fits[p.Index].Result.Sources {
			if j == 0 || s.Kind == KindDipole || !sound(&s) || tracked[key{p.Index, j}] || share(p.Index, j) {
				continue
			}
			if lineAboveGround(fits[p.Index].Result, j, rs.SensorHeight) {
				// No buried conductor: the group's poor fit says so
				// (furtherAboveGround), and no cover is checked.
				continue
			}
			l := route.Line{Point: s.Point, Dir: s.Dir, Current: s.Current, CurrentSigma: s.CurrentSigma, Depth: s.Depth, DepthSigma: s.DepthSigma, AzimuthSigma: s.AzimuthSigma}
			lones = append(lones, loneLine{
				station: k,
				src:     trackSource{fit: p.Index, source: j, steep: true, linePoint: s.Point, lineDir: s.Dir, lineDepth: sensorsLevel(&fits[p.Index]) - s.Point[2], azSigma: s.AzimuthSigma},
				// Only a line whose azimuth the readings give is judged
				// in line with another.
				listed:      s.Identifiable.Azimuth,
				depthSigma:  s.DepthSigma,
				offsetSigma: s.OffsetSigma,
				line:        l,
				mark:        route.LoneMark(p, l, rs),
			})
		}
	}
	// The weak lines a magnetised object took the place of
	// (checkLoneDipoles): their cover is still checked (below), as a
	// short live conductor fits a point dipole as well as the object.
	for k := range r.Stations {
		p := &r.Stations[k]
		if p.Index < 0 || p.Index >= len(fits) {
			continue
		}
		f := &fits[p.Index]
		if len(f.replaced) == 0 || f.weakTested == nil || f.replacedBy == nil {
			continue
		}
		for _, j := range f.replaced {
			if j < 0 || j >= len(f.weakTested.Sources) {
				continue
			}
			s := f.weakTested.Sources[j]
			if !sound(&s) || lineAboveGround(f.weakTested, j, rs.SensorHeight) {
				continue
			}
			// The station as it stood with the line: its own check does
			// not use a station given to an object.
			pp := *p
			pp.Dipole = false
			l := route.Line{Point: s.Point, Dir: s.Dir, Current: s.Current, CurrentSigma: s.CurrentSigma, Depth: s.Depth, DepthSigma: s.DepthSigma, AzimuthSigma: s.AzimuthSigma}
			lones = append(lones, loneLine{
				station:     k,
				src:         trackSource{fit: p.Index, source: -1, steep: true, linePoint: s.Point, lineDir: s.Dir, lineDepth: sensorsLevel(f) - s.Point[2], azSigma: s.AzimuthSigma},
				listed:      s.Identifiable.Azimuth,
				depthSigma:  s.DepthSigma,
				offsetSigma: s.OffsetSigma,
				line:        l,
				mark:        route.LoneMark(&pp, l, rs),
				placed:      &pp,
				object:      f.replacedBy,
			})
		}
	}
	// markAt is what station s's fit shows of the lines of (indices into
	// lones), judged in line with them by in (loneInLine to merge,
	// loneNear to bracket): MarkShort, with the shallow lines in line
	// with one of them, when any is; else MarkClear when one in line with
	// them has enough cover; else MarkUnseen, a fit that does not show
	// them, which bounds a run but says nothing of their cover there;
	// MarkSkip for a station the route's own check does not use.
	markAt := func(s int, of []int, in func(a, c *loneLine) bool) (route.Mark, []int) {
		if q := &r.Stations[s]; !q.OK || q.Dipole {
			return route.MarkSkip, nil
		}
		m := route.MarkUnseen
		var short []int
		for b := range lones {
			if lones[b].station != s || lones[b].object != nil || !slices.ContainsFunc(of, func(a int) bool { return in(&lones[a], &lones[b]) }) {
				continue
			}
			switch lones[b].mark {
			case route.MarkShort:
				short = append(short, b)
				m = route.MarkShort
			case route.MarkClear:
				if m == route.MarkUnseen {
					m = route.MarkClear
				}
			}
		}
		return m, short
	}
	const tol = 1e-6 // m: a repeat lies at its station's own chainage
	// next is the nearest station after s that bounds or continues a run
	// whose end station is s and end lines of, with its mark by
	// loneInLine: stations the check skips are passed over, and so is a
	// repeat of s at its chainage that does not show the lines. -1 when
	// none.
	next := func(s int, of []int) (int, route.Mark, []int) {
		for i := s + 1; i < len(r.Stations); i++ {
			m, short := markAt(i, of, loneInLine)
			if m == route.MarkSkip || m == route.MarkUnseen && math.Abs(r.Stations[i].Chainage-r.Stations[s].Chainage) < tol {
				continue
			}
			return i, m, short
		}
		return -1, route.MarkSkip, nil
	}
	// nearMarks are the marks of the route's stations for the run of
	// lines members (indices into lones) at stations (route order), each
	// other station's by loneNear, the tracks' gate, as the bracket was
	// before fix-fx22c: a repeat of a run's station at its chainage that
	// does not show the line bounds nothing.
	nearMarks := func(members, stations []int) []route.Mark {
		marks := make([]route.Mark, len(r.Stations))
		for s := range r.Stations {
			if slices.Contains(stations, s) {
				marks[s] = route.MarkShort
				continue
			}
			m, _ := markAt(s, members, loneNear)
			if m == route.MarkUnseen && slices.ContainsFunc(stations, func(k int) bool {
				return math.Abs(r.Stations[s].Chainage-r.Stations[k].Chainage) < tol
			}) {
				m = route.MarkSkip
			}
			marks[s] = m
		}
		return marks
	}
	stop := func(i int, unseen bool) route.Stop {
		return route.Stop{Name: r.Stations[i].Key, Chainage: r.Stations[i].Chainage, Unseen: unseen}
	}
	// reach brackets nf along the route: the run of stations (lines
	// members) holding stations[0] reaches to the nearest stations either
	// side that show the line clear or do not show it. None with one
	// station.
	reach := func(nf *Finding, members, stations []int) {
		if len(r.Stations) < 2 {
			return
		}
		marks := nearMarks(members, stations)
		for _, cr := range route.CoverRuns(marks) {
			if !slices.Contains(cr.Members, stations[0]) {
				continue
			}
			br := route.BracketOf(cr, stop, marks, "the line")
			nf.Message += "; " + br.Reach()
			nf.ChainageFrom, nf.ChainageTo = br.Range()
			return
		}
	}
	done := make([]bool, len(lones))
	added := false
	for a := range lones {
		if done[a] || lones[a].mark != route.MarkShort {
			continue
		}
		if lones[a].object != nil {
			// A line an object took the place of: its own finding.
			done[a] = true
			if nf, ok := objectLineCover(&lones[a], r, rs); ok {
				reach(&nf, []int{a}, []int{lones[a].station})
				d.Findings = append(d.Findings, nf)
				added = true
				// The object's own finding points to it.
				key := r.Stations[lones[a].station].Key
				for i := range d.Findings {
					if g := &d.Findings[i]; g.Kind == string(route.KindDipole) && slices.Contains(g.Groups, key) &&
						!strings.Contains(g.Message, "fit as well a shallow line") {
						verdict := "less than"
						if nf.Severity != string(route.SeverityWarning) {
							verdict = "that may be less than"
						}
						g.Message += fmt.Sprintf("; the same readings fit as well a shallow line with cover %s the minimum, which a short live conductor would give (see the shallow-cover %s at %s): treat as live", verdict, nf.Severity, key)
					}
				}
			}
			continue
		}
		// The run: lines at successive stations, each in line with one of
		// the station's before it (loneInLine), as far as a station that
		// does not show the line shallow.
		members := []int{a}
		done[a] = true
		stations := []int{lones[a].station}
		for cur := []int{a}; ; {
			s, m, short := next(lones[cur[0]].station, cur)
			if s < 0 || m != route.MarkShort {
				break
			}
			var fresh []int
			for _, b := range short {
				if !done[b] {
					done[b] = true
					fresh = append(fresh, b)
				}
			}
			if len(fresh) == 0 {
				break // taken by another run already
			}
			members = append(members, fresh...)
			stations = append(stations, s)
			cur = fresh
		}
		// The other stations whose fits show the line: by the tracks'
		// gate (loneNear), as before fix-fx22c, not by the merge's
		// stricter test. The merge test, with sigmas of hundredths of a
		// degree and about a millimetre, called the neighbouring fit of a
		// service turning 3 degrees between traverses one that "does not
		// show the line" and dropped the note that it shows it too
		// (found in review).
		var others []string
		for b := range lones {
			k := r.Stations[lones[b].station].Key
			if slices.Contains(stations, lones[b].station) || len(others) > 0 && others[len(others)-1] == k {
				continue
			}
			if slices.ContainsFunc(members, func(m int) bool { return loneNear(&lones[m], &lones[b]) }) {
				others = append(others, k)
			}
		}
		ps := make([]*route.Placed, len(members))
		ls := make([]route.Line, len(members))
		for i, b := range members {
			ps[i], ls[i] = &r.Stations[lones[b].station], lones[b].line
			ls[i].InLineWith = others
			ls[i].TrackMin = trackMin
		}
		f, ok := route.LoneRunCover(ps, ls, rs, len(r.Stations) == 1)
		if !ok {
			continue
		}
		if f.Severity == route.SeverityWarning && !slices.ContainsFunc(members, func(b int) bool {
			return !weakUntested(&fits[lones[b].src.fit], lones[b].src.source)
		}) {
			// Weak lines beside the conductor never tested for a
			// magnetised object in their place (lonedipole.go): a
			// caution at most.
			f.Severity = route.SeverityCaution
			f.Message = strings.Replace(f.Message, " is less than the ", " may be less than the ", 1) +
				"; the line is weak beside the conductor and was not tested against a magnetised object in its place, which its field may be"
		}
		nf := findingOf(f)
		nf.Lone = true
		for _, b := range members {
			if lones[b].line.Point != f.Position {
				continue // the note of the line where the cover is least
			}
			if note := crossPairNote(&fits[lones[b].src.fit], lones[b].src.source); note != "" {
				// Before the cover, which is the line's own.
				if at := strings.Index(nf.Message, "; its cover"); at >= 0 {
					nf.Message = nf.Message[:at] + note + nf.Message[at:]
				} else {
					nf.Message += note
				}
			}
			break
		}
		// The bracket, as the route brackets its own shallow runs
		// (route.CoverRuns): to the nearest usable stations either side
		// whose fits show a line near the run's lines by the tracks' gate
		// (loneNear) with enough cover, or show none, which bounds the
		// stretch but says nothing of the line's cover there (the message
		// tells which); a station whose fit shows such a line shallow
		// widens the stretch. A repeat of a run's station at its chainage
		// that does not show the line bounds nothing. Before fix-fx21g the
		// range was the station's alone while the route's own findings
		// gave the bracket, two meanings for one kind; when fix-fx22c
		// judged the bracket by the merge's test, a service turning 3
		// degrees between two traverses was bounded by the other's fit
		// as one "whose fits do not show the line", though it did (both
		// found in review). None with one station.
		reach(&nf, members, stations)
		d.Findings = append(d.Findings, nf)
		added = true
	}
	if added {
		SortFindings(d.Findings)
	}
}

// loneLine is a further line that no track follows, at station (an index
// into the route's stations), for addLoneCover.
type loneLine struct {
	station int
	src     trackSource
	// listed is true when the readings give the line's azimuth: only then
	// is it judged in line with another (loneInLine).
	listed                  bool
	depthSigma, offsetSigma float64 // m
	line                    route.Line
	mark                    route.Mark // route.LoneMark at its station
	// object, when not nil, is the magnetised object that took the
	// line's place (checkLoneDipoles), and placed the line's station as
	// it stood with the line (not given to the object); src.source is
	// then -1.
	object *route.Object
	placed *route.Placed
}

// objectLineCover is the cover finding of a lone line l that a magnetised
// object took the place of (checkLoneDipoles): route.LoneCover's, at its
// own severity, with both readings named. A short live conductor (a
// bonding lead, a stub, a service ending near the traverse) has a field
// that falls faster than a long line's, and a point dipole fits it as
// well as the line or better: in review a 0.3 A bonding lead 0.3 m down
// across one traverse fitted a dipole 0.9 m down better by 231 in the
// information criterion, and its shallow-cover warning had become an
// info-level "magnetised object". The readings do not tell the two
// apart, so the cover a crew must act on is kept.
func objectLineCover(l *loneLine, r *route.Route, rs *route.Settings) (Finding, bool) {
	f, ok := route.LoneCover(l.placed, l.line, rs, len(r.Stations) == 1)
	if !ok {
		return Finding{}, false
	}
	o := l.object
	depth := fmt.Sprintf("%.2f m", o.Depth)
	if o.DepthSigma > 0 {
		depth = PlusMinus(o.Depth, o.DepthSigma) + " m"
	}
	tail := fmt.Sprintf("; the same readings fit as well a magnetised object %s below ground, reported on its own, which a short live conductor (a bonding lead, a stub, the end of a service) also resembles: a shallow live conductor or a magnetised object; treat as live and confirm before digging here", depth)
	if at := strings.LastIndex(f.Message, ": confirm before digging here"); at >= 0 {
		f.Message = f.Message[:at] + tail
	} else {
		f.Message += tail
	}
	nf := findingOf(f)
	nf.Lone = true
	return nf, true
}

// loneInLineK is how many of their combined sigmas two lone lines' fitted
// azimuths, places and depths may differ by and still be one line
// (loneInLine).
const loneInLineK = 3.0

// The model-error floors of a lone line's sigmas for loneInLine: each
// line's azimuth, offset and depth sigma is taken as at least its own
// sigma and the floor added in quadrature. A straight line fitted at one
// traverse to a service that turns or slopes between two traverses is
// right there to its statistical sigma, but the service is not the one
// straight line the two fits would need to agree: in review a 5 A
// service 0.40 m down, turning 3 degrees at the route between T04 and
// T05 10 m apart, was fitted at 41.02 +- 0.03 and 37.94 +- 0.05 degrees
// (3.08 degrees apart, 50 sigma), and one sloping from 0.40 to 0.55 m
// there at 0.400 +- 0.001 and 0.556 +- 0.002 m (0.156 m, 80 sigma), and
// each gave two findings. With these floors a turn of up to 3 x sqrt 2 x
// 1.5 = 6.4 degrees and a change of depth of up to 3 x sqrt 2 x 0.05 =
// 0.21 m between two stations is one line, and two parallel services
// 0.7 m apart across, or 0.4 m apart in depth, fitted to a few
// centimetres, stay two (0.21 m: TestLoneInLineBySigmas).
const (
	loneAzFloor     = 1.5  // degrees
	loneOffsetFloor = 0.05 // m
	loneDepthFloor  = 0.05 // m
)

// loneInLine tells whether lone lines a and c, at two stations, are one
// line seen at both, to merge their shallow-cover findings (addLoneCover).
// They must pass lineDistance each way (azimuths within max(10 degrees,
// 3 sigma); each point, with the depths' difference, within max(1 m, 1.5
// times the shallower depth) of the other line, widened by the distance
// along it times the azimuth sigma) and then agree within loneInLineK of
// their combined sigmas, each line's sigmas with the model-error floors
// added (loneAzFloor, loneOffsetFloor, loneDepthFloor): the azimuths by
// the azimuth sigmas; each point's distance across the other line by the
// offset sigmas with the distance along the line times the azimuth
// sigmas (statistical), beyond what the lines' own difference in azimuth
// explains (a service turning by that angle between the two points moves
// each point across the other's line by at most the distance along times
// its sine); and the depths by the depth sigmas. The gate alone is a
// fixed distance: two services 0.7 m apart at different depths, each
// fitted to a few centimetres, are one line by it
// (TestLoneInLineBySigmas), and a merged finding would hide one of them;
// and merging is the side to be strict on, as two findings for one
// service only repeat a row. Without the floors a service turning 3
// degrees or sloping 0.15 m between two traverses was two services
// (found in review: TestLoneCoverMergesTurnAndSlope). In trial variants
// of TestLoneCoverMergesInLineRun's scenario (services at 25 to 45
// degrees to the route, 2 to 20 nT of noise) one straight service's lines
// at any two traverses differed by at most about 2.4 sigma in any of the
// three, without the floors. Not in line when a line is not listed or a
// sigma is not a finite number.
func loneInLine(a, c *loneLine) bool {
	if !a.listed || !c.listed {
		return false
	}
	for _, v := range []float64{a.src.azSigma, c.src.azSigma, a.depthSigma, c.depthSigma, a.offsetSigma, c.offsetSigma} {
		if !finite(v) || v < 0 {
			return false
		}
	}
	if _, ok := lineDistance(&a.src, &c.src); !ok {
		return false
	}
	if _, ok := lineDistance(&c.src, &a.src); !ok {
		return false
	}
	ua, okA := planUnit(a.src.lineDir)
	uc, okC := planUnit(c.src.lineDir)
	if !okA || !okC {
		return false
	}
	floored := func(s, floor float64) float64 { return math.Hypot(s, floor) }
	cos := math.Min(1, math.Abs(ua[0]*uc[0]+ua[1]*uc[1]))
	if dAz := math.Acos(cos) * 180 / math.Pi; dAz > loneInLineK*math.Hypot(floored(a.src.azSigma, loneAzFloor), floored(c.src.azSigma, loneAzFloor)) {
		return false
	}
	dx := [2]float64{c.src.linePoint[0] - a.src.linePoint[0], c.src.linePoint[1] - a.src.linePoint[1]}
	across := math.Max(math.Abs(dx[0]*ua[1]-dx[1]*ua[0]), math.Abs(dx[0]*uc[1]-dx[1]*uc[0]))
	along := math.Max(math.Abs(dx[0]*ua[0]+dx[1]*ua[1]), math.Abs(dx[0]*uc[0]+dx[1]*uc[1]))
	turn := along * math.Sqrt(1-cos*cos) // along times the sine of the lines' angle
	sAz := math.Hypot(a.src.azSigma, c.src.azSigma) * math.Pi / 180
	sAcross := math.Hypot(math.Hypot(floored(a.offsetSigma, loneOffsetFloor), floored(c.offsetSigma, loneOffsetFloor)), along*sAz)
	if across > turn+loneInLineK*sAcross {
		return false
	}
	return math.Abs(c.src.lineDepth-a.src.lineDepth) <= loneInLineK*math.Hypot(floored(a.depthSigma, loneDepthFloor), floored(c.depthSigma, loneDepthFloor))
}

// loneNear tells whether lone line c lies near lone line a by the tracks'
// gate (lineDistance from a), as lone lines were judged in line before
// fix-fx22c: what brackets a run's shallow stretch and names the other
// fits that show the line (addLoneCover). Looser than loneInLine, which
// decides the merge: a fit that shows the line where it turns or slopes
// does show it. Both lines must be listed.
func loneNear(a, c *loneLine) bool {
	if !a.listed || !c.listed {
		return false
	}
	_, ok := lineDistance(&a.src, &c.src)
	return ok
}

// crossPairNote names the go-and-return pair that line j of fit f belongs
// to when it is a crossing line leadByContinuity moved from first place
// and the fit resolved its partner core (Fit.crossPairs): "" otherwise.
// In review a +15/-14.6 A feed pair crossing a pipe was reported as two
// unrelated further lines.
func crossPairNote(f *Fit, j int) string {
	for _, pq := range f.validCrossPairs() {
		q := &pq
		a, b := q.Lines[0], q.Lines[1]
		k := -1
		switch j {
		case a:
			k = b
		case b:
			k = a
		}
		if k < 0 {
			continue
		}
		o := &f.Result.Sources[k]
		return fmt.Sprintf(", with the line of %s A beside it, %s m apart, it is one of a go-and-return pair crossing the route, net current %s A",
			PlusMinus(o.Current, o.CurrentSigma), PlusMinus(q.Spacing, q.SpacingSigma), PlusMinus(q.NetCurrent, q.NetCurrentSigma))
	}
	return ""
}

// validCrossPairs are f's crossPairs that its Result still holds (the
// same currents at their indices; a refit may have replaced the Result).
func (f *Fit) validCrossPairs() []inverse.PairEstimate {
	var out []inverse.PairEstimate
	for _, c := range f.crossPairs {
		a, b := c.q.Lines[0], c.q.Lines[1]
		if f.Result == nil || a < 0 || b < 0 || a >= len(f.Result.Sources) || b >= len(f.Result.Sources) ||
			f.Result.Sources[a].Current != c.cur[0] || f.Result.Sources[b].Current != c.cur[1] {
			continue
		}
		out = append(out, c.q)
	}
	return out
}

// weakUntested reports whether source j of f's fit is a further line under
// weakShare of the strongest that checkLoneDipoles did not test for a
// magnetised object in its place (loneWeak, Fit.weakTested).
func weakUntested(f *Fit, j int) bool {
	res := f.Result
	if res == nil || j <= 0 || j >= len(res.Sources) {
		return false
	}
	strongest := 0.0
	for k := range res.Sources {
		strongest = math.Max(strongest, math.Abs(res.Sources[k].Current))
	}
	if !(math.Abs(res.Sources[j].Current) < weakShare*strongest) {
		return false
	}
	return f.weakTested != res || !loneWeak(res, j)
}
