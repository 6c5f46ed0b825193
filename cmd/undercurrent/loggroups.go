package main

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"undercurrent/ingest"
)

// Several survey logs in one run: how their groups are told apart and
// put in order.
//
// A crew that logs each stretch or each day in a file of its own usually
// numbers the traverses from T01 again in each file. Pooled by value, T01
// of one file and T01 of the next (140 m and minutes apart) were fitted as
// one "traverse": the pipe under them was reported as not there, and the
// shared-misfit warning blamed conductors too close together to part
// (found in review). The readings of one group value in several logs are
// still one group when they lie together: a cart's two sensors logging
// the same traverse at the same times, or a traverse continued in the
// next file.

const (
	// reusedApartM is how far apart, m, the horizontal extents of one
	// group value's readings in two logs may lie and still be one group:
	// a cart's sensors lie a metre or two apart.
	reusedApartM = 5.0
	// reusedApartS is how far apart in time, s, they may lie: a
	// traverse continued in the next file starts within a few samples
	// of its end in the one before.
	reusedApartS = 60.0
)

// readingSpan is where and when a set of readings lies: its horizontal
// extent and its time span (NaN when the readings have no time).
type readingSpan struct {
	minX, maxX, minY, maxY float64
	t0, t1                 float64
}

func newReadingSpan() readingSpan {
	return readingSpan{minX: math.Inf(1), maxX: math.Inf(-1), minY: math.Inf(1), maxY: math.Inf(-1), t0: math.NaN(), t1: math.NaN()}
}

func (r *readingSpan) add(x, y, t float64) {
	r.minX, r.maxX = math.Min(r.minX, x), math.Max(r.maxX, x)
	r.minY, r.maxY = math.Min(r.minY, y), math.Max(r.maxY, y)
	if !math.IsNaN(t) {
		if math.IsNaN(r.t0) || t < r.t0 {
			r.t0 = t
		}
		if math.IsNaN(r.t1) || t > r.t1 {
			r.t1 = t
		}
	}
}

// apart returns the horizontal distance between the extents of r and o,
// m, and the time between their spans, s (NaN when either has no time);
// 0 where they overlap.
func (r readingSpan) apart(o readingSpan) (dist, gap float64) {
	dx := math.Max(0, math.Max(r.minX-o.maxX, o.minX-r.maxX))
	dy := math.Max(0, math.Max(r.minY-o.maxY, o.minY-r.maxY))
	dist = math.Hypot(dx, dy)
	gap = math.NaN()
	if !math.IsNaN(r.t0) && !math.IsNaN(o.t0) {
		gap = math.Max(0, math.Max(r.t0-o.t1, o.t0-r.t1))
	}
	return dist, gap
}

// span is where and when the readings fitted in g lie.
func (g *group) span() readingSpan {
	r := newReadingSpan()
	times := g.stamps
	if g.times != nil {
		times = g.times // AC: the windows' centre times
	}
	for i, p := range g.points {
		t := math.NaN()
		if i < len(times) {
			t = times[i]
		}
		r.add(p[0], p[1], t)
	}
	return r
}

// firstTime is the time of the group's first reading (AC: window), NaN
// when none has a time.
func (g *group) firstTime() float64 {
	times := g.stamps
	if g.times != nil {
		times = g.times
	}
	t0 := math.NaN()
	for _, t := range times {
		if !math.IsNaN(t) && (math.IsNaN(t0) || t < t0) {
			t0 = t
		}
	}
	return t0
}

// logLabel is the name a log's groups are qualified with: its file name,
// or its path when another of the logs has the same file name.
func logLabel(path string, logs []string) string {
	base := filepath.Base(path)
	for _, l := range logs {
		if l != path && filepath.Base(l) == base {
			return path
		}
	}
	return base
}

// separateReusedGroups looks at the group values of the log s (read from
// path) that earlier logs of the run also have (index, the groups read so
// far). A value whose readings here lie more than reusedApartM from that
// group's readings, or more than reusedApartS before or after them, names
// another traverse: its rows in s are renamed LOG:VALUE (logLabel), so
// that it is fitted as a group of its own. It returns the warning saying
// so ("" when nothing was renamed).
func separateReusedGroups(index map[string]*group, path string, logs []string, s *ingest.Samples) string {
	if s.Group == nil || len(index) == 0 {
		return ""
	}
	spans := map[string]*readingSpan{}
	var order []string
	for i, v := range s.Group {
		if v == "" || index[v] == nil {
			continue
		}
		sp := spans[v]
		if sp == nil {
			r := newReadingSpan()
			sp = &r
			spans[v] = sp
			order = append(order, v)
		}
		t := math.NaN()
		if !s.NoTime && i < len(s.Time) {
			t = s.Time[i]
		}
		sp.add(s.X[i], s.Y[i], t)
	}
	label := logLabel(path, logs)
	renamed := map[string]string{}
	var names, from []string
	fromSeen := map[string]bool{}
	minD, maxD, minG, maxG := math.Inf(1), 0.0, math.Inf(1), 0.0
	timed := true
	for _, v := range order {
		g := index[v]
		d, gap := g.span().apart(*spans[v])
		timedHere := !math.IsNaN(gap)
		if d <= reusedApartM && (!timedHere || gap <= reusedApartS) {
			continue // one group: pooled as before
		}
		q := label + ":" + v
		if index[q] != nil {
			continue // the name is taken: left pooled rather than merged with another
		}
		renamed[v] = q
		names = append(names, v)
		if !fromSeen[g.from] {
			fromSeen[g.from] = true
			from = append(from, g.from)
		}
		minD, maxD = math.Min(minD, d), math.Max(maxD, d)
		if timedHere {
			minG, maxG = math.Min(minG, gap), math.Max(maxG, gap)
		} else {
			timed = false
		}
	}
	if len(renamed) == 0 {
		return ""
	}
	for i, v := range s.Group {
		if q, ok := renamed[v]; ok {
			s.Group[i] = q
		}
	}
	what := fmt.Sprintf("the group %s is", names[0])
	now := fmt.Sprintf("a group of its own, named %s", renamed[names[0]])
	if len(names) > 1 {
		what = fmt.Sprintf("the groups %s are", listNames(names))
		now = fmt.Sprintf("groups of their own, named %s (and so on)", renamed[names[0]])
	}
	where := fmt.Sprintf("%s apart", rangeText(minD, maxD, "m"))
	if timed {
		where = fmt.Sprintf("%s and %s apart", rangeText(minD, maxD, "m"), rangeText(minG, maxG, "s"))
	}
	return fmt.Sprintf("%s: %s also in %s, but the readings lie %s from those there: taken for another traverse under the same name, and fitted as %s. One group value in several logs is one group only where its readings lie within %g m and %g s of each other (a cart's two sensors, or a traverse continued in the next file); to name the groups otherwise, rename them in one of the files",
		path, what, strings.Join(from, " and "), where, now, reusedApartM, reusedApartS)
}

// listNames lists up to eight names, else six and how many more there
// are.
func listNames(names []string) string {
	const most = 6
	if len(names) <= most+2 {
		return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
	}
	return strings.Join(names[:most], ", ") + fmt.Sprintf(" and %d more", len(names)-most)
}

// rangeText words a range of separations: "140 m", or "138-142 m".
func rangeText(lo, hi float64, unit string) string {
	f := func(v float64) string { return fmt.Sprintf("%.3g", v) }
	if unit == "s" && lo >= 120 {
		unit, lo, hi = "min", lo/60, hi/60
	}
	if f(lo) == f(hi) {
		return f(lo) + " " + unit
	}
	return f(lo) + "-" + f(hi) + " " + unit
}

// orderGroupsByTime puts the groups of a run of several logs in the order
// of their first readings' times (ties by name), whatever the order the
// logs were given in: the route's chain is turned to follow the groups'
// order, so the order of the files on the command line set chainage 0,
// the route's direction and the sign of every DC current (the same survey
// in three files gave a fall at chainage 249 m in one order and 150 m in
// another; found in review). A single log keeps its own order. Times that
// are not calendar times (seconds from a logger's start, which restart at
// 0 in each file, or none) do not order logs: then the order given is
// kept, and the returned warning says so.
func orderGroupsByTime(sv *survey, logs []string) string {
	if len(logs) < 2 || len(sv.groups) < 2 {
		return ""
	}
	first := make(map[*group]float64, len(sv.groups))
	for _, g := range sv.groups {
		t := g.firstTime()
		// Unix times from 1973 to 5138, as fmtBaseTime takes them.
		if !(t > 1e8 && t < 1e11) {
			what := "has no times"
			if !math.IsNaN(t) {
				what = fmt.Sprintf("has times that are not calendar times (group %s starts at %s)", groupName(g.key), fmtBaseTime(t))
			}
			return fmt.Sprintf("%s %s, so the groups of the %d logs are taken in the order the logs were given in: the first log's first group (%s) sets chainage 0 and the route's direction (and the sign of a DC current); give the logs in the order walked, or logs with calendar times, whose groups are put in time order",
				g.from, what, len(logs), groupName(sv.groups[0].key))
		}
		first[g] = t
	}
	sort.SliceStable(sv.groups, func(a, b int) bool {
		ga, gb := sv.groups[a], sv.groups[b]
		if first[ga] != first[gb] {
			return first[ga] < first[gb]
		}
		return ga.key < gb.key
	})
	return ""
}

// groupName quotes a group's key for messages ("" is the whole log).
func groupName(key string) string {
	if key == "" {
		return "the whole log"
	}
	return key
}
