package report

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// addLoneCover checks the cover of every further line source of the
// usable groups of r that no track follows (route.LoneCover: a service
// crossing the route, seen at one traverse) and adds the findings, marked
// Lone and sorted with SortFindings. tracks are the kept tracks; rs the
// route settings.
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
	// The lone lines, to tell which lie along one another (lineDistance,
	// taken between the lines themselves whatever their angle to the
	// route): the same conductor seen at too few groups to follow.
	type lone struct {
		station int
		src     trackSource
	}
	var lones []lone
	for k := range r.Stations {
		p := &r.Stations[k]
		if p.Dipole || p.Index < 0 || p.Index >= len(fits) || fits[p.Index].Result == nil {
			continue
		}
		for j, s := range fits[p.Index].Result.Sources {
			if j == 0 || s.Kind == KindDipole || !sound(&s) || tracked[key{p.Index, j}] || share(p.Index, j) || !s.Identifiable.Azimuth || lineAboveGround(fits[p.Index].Result, j, rs.SensorHeight) {
				continue
			}
			lones = append(lones, lone{k, trackSource{fit: p.Index, source: j, steep: true, linePoint: s.Point, lineDir: s.Dir, lineDepth: sensorsLevel(&fits[p.Index]) - s.Point[2], azSigma: s.AzimuthSigma}})
		}
	}
	inLine := func(k, fit, j int) []string {
		var out []string
		for a := range lones {
			if lones[a].src.fit != fit || lones[a].src.source != j {
				continue
			}
			for b := range lones {
				if lones[b].station == k {
					continue
				}
				if _, ok := lineDistance(&lones[a].src, &lones[b].src); ok {
					if key := r.Stations[lones[b].station].Key; len(out) == 0 || out[len(out)-1] != key {
						out = append(out, key)
					}
				}
			}
		}
		return out
	}
	lineOf := func(fit, j int) route.Line {
		s := &fits[fit].Result.Sources[j]
		return route.Line{Point: s.Point, Dir: s.Dir, Current: s.Current, CurrentSigma: s.CurrentSigma, Depth: s.Depth, DepthSigma: s.DepthSigma, AzimuthSigma: s.AzimuthSigma}
	}
	// bracket is the chainage range of the lone line j of fit at station
	// k, as the route brackets its own shallow runs (route.CoverRuns): to
	// the nearest usable stations either side whose fits show a lone line
	// in line with it (lineDistance) with enough cover, or show none,
	// which bounds the stretch but says nothing of the line's cover there
	// (the message tells which); stations whose fits show it shallow too
	// join the run. A repeat of station k at its chainage that does not
	// show the line bounds nothing. Before, the range was station k's
	// alone while the route's own findings gave the bracket, two meanings
	// for one kind (found in review). Nil with one station.
	bracket := func(k, fit, j int) *route.Bracket {
		if len(r.Stations) < 2 {
			return nil
		}
		a := -1
		for i := range lones {
			if lones[i].station == k && lones[i].src.fit == fit && lones[i].src.source == j {
				a = i
			}
		}
		const tol = 1e-6 // m: a repeat lies at its station's own chainage
		marks := make([]route.Mark, len(r.Stations))
		for s := range r.Stations {
			q := &r.Stations[s]
			switch {
			case s == k:
				marks[s] = route.MarkShort
				continue
			case !q.OK || q.Dipole:
				continue // route.MarkSkip, as the route's own check
			}
			m := route.MarkUnseen
			for b := range lones {
				if a < 0 || lones[b].station != s {
					continue
				}
				if _, ok := lineDistance(&lones[a].src, &lones[b].src); !ok {
					continue
				}
				// The shallowest verdict of the lines in line with it.
				if lm := route.LoneMark(q, lineOf(lones[b].src.fit, lones[b].src.source), rs); m == route.MarkUnseen || lm == route.MarkShort {
					m = lm
				}
			}
			if m == route.MarkUnseen && math.Abs(q.Chainage-r.Stations[k].Chainage) < tol {
				m = route.MarkSkip
			}
			marks[s] = m
		}
		stop := func(i int, unseen bool) route.Stop {
			return route.Stop{Name: r.Stations[i].Key, Chainage: r.Stations[i].Chainage, Unseen: unseen}
		}
		for _, run := range route.CoverRuns(marks) {
			for _, i := range run.Members {
				if i == k {
					b := route.BracketOf(run, stop, marks, "the line")
					return &b
				}
			}
		}
		return nil
	}
	added := false
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
			l := lineOf(p.Index, j)
			l.InLineWith = inLine(k, p.Index, j)
			if f, ok := route.LoneCover(p, l, rs, len(r.Stations) == 1); ok {
				nf := findingOf(f)
				nf.Lone = true
				if note := crossPairNote(&fits[p.Index], j); note != "" {
					// Before the cover, which is the line's own.
					if at := strings.Index(nf.Message, "; its cover"); at >= 0 {
						nf.Message = nf.Message[:at] + note + nf.Message[at:]
					} else {
						nf.Message += note
					}
				}
				if br := bracket(k, p.Index, j); br != nil {
					nf.Message += "; " + br.Reach()
					nf.ChainageFrom, nf.ChainageTo = br.Range()
				}
				d.Findings = append(d.Findings, nf)
				added = true
			}
		}
	}
	if added {
		SortFindings(d.Findings)
	}
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
