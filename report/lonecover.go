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
// route settings.
//
// A lone line seen in line (loneInLine) and shallow at successive usable
// stations is one finding for the run (route.LoneRunCover), as the
// route's own and the pair's shallow runs are: its stations named, the
// bracket once, the least cover with its station. Before, each station
// gave its own finding with the same run's bracket, and a crew read two
// or three rows of findings.csv for one place (found in review). Lines
// at stations that are not successive, or not in line by their own
// sigmas, stay separate findings.
func (d *Document) addLoneCover(fits []Fit, r *route.Route, rs *route.Settings, tracks []builtTrack) {
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
	// markAt is what station s's fit shows of the lines of (indices into
	// lones): MarkShort, with the shallow lines in line with one of them,
	// when any is; else MarkClear when one in line with them has enough
	// cover; else MarkUnseen, a fit that does not show them, which bounds
	// a run but says nothing of their cover there; MarkSkip for a station
	// the route's own check does not use.
	markAt := func(s int, of []int) (route.Mark, []int) {
		if q := &r.Stations[s]; !q.OK || q.Dipole {
			return route.MarkSkip, nil
		}
		m := route.MarkUnseen
		var short []int
		for b := range lones {
			if lones[b].station != s || !slices.ContainsFunc(of, func(a int) bool { return loneInLine(&lones[a], &lones[b]) }) {
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
	// next is the nearest station from s on by step (+1 or -1) that
	// bounds or continues a run whose end station is end and end lines
	// of, with its mark: stations the check skips are passed over, and so
	// is a repeat of end at its chainage that does not show the lines.
	// -1 when none.
	next := func(s, step, end int, of []int) (int, route.Mark, []int) {
		for ; s >= 0 && s < len(r.Stations); s += step {
			m, short := markAt(s, of)
			if m == route.MarkSkip || m == route.MarkUnseen && math.Abs(r.Stations[s].Chainage-r.Stations[end].Chainage) < tol {
				continue
			}
			return s, m, short
		}
		return -1, route.MarkSkip, nil
	}
	stop := func(i int, unseen bool) route.Stop {
		return route.Stop{Name: r.Stations[i].Key, Chainage: r.Stations[i].Chainage, Unseen: unseen}
	}
	done := make([]bool, len(lones))
	added := false
	for a := range lones {
		if done[a] || lones[a].mark != route.MarkShort {
			continue
		}
		// The run: lines at successive stations, each in line with one of
		// the station's before it, as far as a station that does not show
		// the line shallow.
		members := []int{a}
		done[a] = true
		run := route.CoverRun{Members: []int{lones[a].station}, Before: -1, After: -1}
		marks := make([]route.Mark, len(r.Stations))
		marks[lones[a].station] = route.MarkShort
		for cur := []int{a}; ; {
			end := lones[cur[0]].station
			s, m, short := next(end+1, 1, end, cur)
			if s < 0 {
				break
			}
			if m == route.MarkShort {
				var fresh []int
				for _, b := range short {
					if !done[b] {
						done[b] = true
						fresh = append(fresh, b)
					}
				}
				if len(fresh) > 0 {
					members = append(members, fresh...)
					run.Members = append(run.Members, s)
					marks[s] = m
					cur = fresh
					continue
				}
				m = route.MarkUnseen // taken by another run already
			}
			run.After, marks[s] = s, m
			break
		}
		first := lones[a].station
		if s, m, _ := next(first-1, -1, first, []int{a}); s >= 0 {
			if m == route.MarkShort {
				// Not met: an earlier run would have taken a. Bounds it,
				// as a fit that does not show this run's line.
				m = route.MarkUnseen
			}
			run.Before, marks[s] = s, m
		}
		// The other stations whose fits show the line.
		var others []string
		for b := range lones {
			k := r.Stations[lones[b].station].Key
			if slices.Contains(run.Members, lones[b].station) || len(others) > 0 && others[len(others)-1] == k {
				continue
			}
			if slices.ContainsFunc(members, func(m int) bool { return loneInLine(&lones[m], &lones[b]) }) {
				others = append(others, k)
			}
		}
		ps := make([]*route.Placed, len(members))
		ls := make([]route.Line, len(members))
		for i, b := range members {
			ps[i], ls[i] = &r.Stations[lones[b].station], lones[b].line
			ls[i].InLineWith = others
		}
		f, ok := route.LoneRunCover(ps, ls, rs, len(r.Stations) == 1)
		if !ok {
			continue
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
		// whose fits show the line in line with the run's end lines with
		// enough cover, or show none, which bounds the stretch but says
		// nothing of the line's cover there (the message tells which). A
		// repeat of an end station at its chainage that does not show the
		// line bounds nothing. Before fix-fx21g the range was the
		// station's alone while the route's own findings gave the
		// bracket, two meanings for one kind (found in review). None with
		// one station.
		if len(r.Stations) >= 2 {
			br := route.BracketOf(run, stop, marks, "the line")
			nf.Message += "; " + br.Reach()
			nf.ChainageFrom, nf.ChainageTo = br.Range()
		}
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
}

// loneInLineK is how many of their combined sigmas two lone lines' fitted
// azimuths, places and depths may differ by and still be one line
// (loneInLine).
const loneInLineK = 3.0

// loneInLine tells whether lone lines a and c, at two stations, are one
// line seen at both, judged by the lines' own sigmas as well as the
// tracks' gate. They must pass lineDistance each way (azimuths within
// max(10 degrees, 3 sigma); each point, with the depths' difference,
// within max(1 m, 1.5 times the shallower depth) of the other line,
// widened by the distance along it times the azimuth sigma) and then
// agree within loneInLineK of their combined sigmas: the azimuths by the
// azimuth sigmas, each point's distance across the other line by the
// offset sigmas with the distance along the line times the azimuth
// sigma, and the depths by the depth sigmas. The gate alone is a fixed
// distance: two services 0.7 m apart at different depths, each fitted to
// a few centimetres, are one line by it (TestLoneInLineBySigmas), and a
// merged finding would hide one of them; and merging is the side to be strict on, as two
// findings for one service only repeat a row. In trial variants of
// TestLoneCoverMergesInLineRun's scenario (services at 25 to 45 degrees
// to the route, 2 to 20 nT of noise) one service's lines at any two
// traverses differed by at most about 2.4 sigma in any of the three.
// Not in line when a line is not listed or a sigma is not a finite
// number.
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
	sAz := math.Hypot(a.src.azSigma, c.src.azSigma) // degrees
	if dAz := math.Acos(math.Min(1, math.Abs(ua[0]*uc[0]+ua[1]*uc[1]))) * 180 / math.Pi; dAz > loneInLineK*sAz {
		return false
	}
	dx := [2]float64{c.src.linePoint[0] - a.src.linePoint[0], c.src.linePoint[1] - a.src.linePoint[1]}
	across := math.Max(math.Abs(dx[0]*ua[1]-dx[1]*ua[0]), math.Abs(dx[0]*uc[1]-dx[1]*uc[0]))
	along := math.Max(math.Abs(dx[0]*ua[0]+dx[1]*ua[1]), math.Abs(dx[0]*uc[0]+dx[1]*uc[1]))
	sAcross := math.Hypot(math.Hypot(a.offsetSigma, c.offsetSigma), along*sAz*math.Pi/180)
	if across > loneInLineK*sAcross {
		return false
	}
	return math.Abs(c.src.lineDepth-a.src.lineDepth) <= loneInLineK*math.Hypot(a.depthSigma, c.depthSigma)
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
