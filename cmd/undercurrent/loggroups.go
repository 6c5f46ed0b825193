package main

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"undercurrent/ingest"
	"undercurrent/report"
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
// next file (after a pause or not).

const (
	// reusedApartM is how far apart, m, the horizontal extents of one
	// group value's readings in two logs may lie and still be one group:
	// a cart's sensors lie a metre or two apart.
	reusedApartM = 5.0
	// reusedApartS is how far apart in time, s, they may lie where they
	// cover the same ground (sameGround): a cart's two loggers whose
	// clocks differ a little. A traverse walked again later is another
	// group; one continued end to end in the next file is one group
	// after any pause.
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

// addSpan widens r to take in o.
func (r *readingSpan) addSpan(o readingSpan) {
	if o.minX > o.maxX {
		return // no readings
	}
	r.add(o.minX, o.minY, o.t0)
	r.add(o.maxX, o.maxY, o.t1)
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

// logPart is the readings of one group value in one log: where and when
// they lie, and their horizontal positions (for the line they follow).
type logPart struct {
	log  int // index into the logs
	span readingSpan
	xy   [][2]float64
}

// calendarTime reports whether t is a calendar time: Unix times from 1973
// to 5138, as fmtBaseTime takes them (seconds from a logger's start are
// not).
func calendarTime(t float64) bool { return t > 1e8 && t < 1e11 }

// partsOf returns the readings of each group value of s, in order of
// first appearance.
func partsOf(k int, s *ingest.Samples) (map[string]*logPart, []string) {
	parts := map[string]*logPart{}
	var order []string
	if s.Group == nil {
		return parts, nil
	}
	for i, v := range s.Group {
		if v == "" {
			continue
		}
		p := parts[v]
		if p == nil {
			p = &logPart{log: k, span: newReadingSpan()}
			parts[v] = p
			order = append(order, v)
		}
		t := math.NaN()
		if !s.NoTime && i < len(s.Time) {
			t = s.Time[i]
		}
		p.span.add(s.X[i], s.Y[i], t)
		p.xy = append(p.xy, [2]float64{s.X[i], s.Y[i]})
	}
	return parts, order
}

// sameGround reports whether the parts a and b cover the same ground
// along the line they follow (the principal axis of their positions
// together): whether more than half of the shorter one's length along it
// lies within the other's. Two parts of one traverse, one continuing
// where the other stopped, meet end to end; a traverse walked again, or a
// second sensor beside the first, covers the ground again.
func sameGround(a, b *logPart) bool {
	var mx, my float64
	n := 0
	for _, p := range [2]*logPart{a, b} {
		for _, q := range p.xy {
			mx, my = mx+q[0], my+q[1]
			n++
		}
	}
	if n == 0 {
		return false
	}
	mx, my = mx/float64(n), my/float64(n)
	var sxx, syy, sxy float64
	for _, p := range [2]*logPart{a, b} {
		for _, q := range p.xy {
			dx, dy := q[0]-mx, q[1]-my
			sxx, syy, sxy = sxx+dx*dx, syy+dy*dy, sxy+dx*dy
		}
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	ux, uy := math.Cos(th), math.Sin(th)
	along := func(p *logPart) (lo, hi float64) {
		lo, hi = math.Inf(1), math.Inf(-1)
		for _, q := range p.xy {
			u := q[0]*ux + q[1]*uy
			lo, hi = math.Min(lo, u), math.Max(hi, u)
		}
		return lo, hi
	}
	a0, a1 := along(a)
	b0, b1 := along(b)
	overlap := math.Min(a1, b1) - math.Max(a0, b0)
	return overlap >= 0.5*math.Min(a1-a0, b1-b0)
}

// together reports whether the part p belongs to the group whose
// readings so far are g: within reusedApartM of them and, where it covers
// the same ground again, within reusedApartS of them in time (or either
// without times). A traverse continued in the next file is one group
// whatever the pause before it: a 90 s battery swap split one traverse
// into two groups, the 15 readings after it fitted alone and failed
// (found in review).
func together(g, p *logPart) bool {
	d, gap := g.span.apart(p.span)
	if d > reusedApartM {
		return false
	}
	return math.IsNaN(gap) || gap <= reusedApartS || !sameGround(g, p)
}

// reusedNames are the renamings of nameReusedGroups, keyed by rewalkKey:
// value gives, for each name given (LOG:T05) in a log, the log's own
// group value it replaced (T05); apart gives, for each group value of a
// log renamed as another traverse under the same name (not covering the
// first's ground again), the name given. A renamed group that covers the
// same ground again is the traverse walked again, under the shared name.
type reusedNames struct {
	value, apart map[string]string
}

// nameReusedGroups tells apart the traverses that several logs (logs,
// read as all) give the same group value. The parts of one value are
// taken in the order of their first readings' times (the order the logs
// were given in when their times are not calendar times): the first keeps
// the value, and each later part joins the first group it lies together
// with (together); one that lies together with none is another traverse,
// and its rows are renamed LOG:VALUE (logLabel) to be fitted as a group
// of its own. The name thus stays with the earliest log whatever the
// order on the command line (before, the first log given kept the bare
// names, and the names in every output changed with the order; found in
// review). A log with a part renamed so has its other group values, those
// no other log holds, renamed LOG:VALUE too. It returns a warning for each log whose groups were renamed,
// and the renamings, for the route to pair walks (traverseOf).
func nameReusedGroups(logs []string, all []*ingest.Samples) ([]string, reusedNames) {
	given := reusedNames{value: map[string]string{}, apart: map[string]string{}}
	if len(all) < 2 {
		return nil, given
	}
	parts := make([]map[string]*logPart, len(all))
	var values []string
	seen := map[string]bool{}
	taken := map[string]bool{} // every group value of every log
	for k, s := range all {
		var order []string
		parts[k], order = partsOf(k, s)
		for _, v := range order {
			taken[v] = true
			if !seen[v] {
				seen[v] = true
				values = append(values, v)
			}
		}
	}
	// A renamed part's distance from the first: across the first's line
	// where it covers the same ground again (again), else between their
	// extents.
	type renaming struct {
		value, name string
		dist, gap   float64
		again       bool
		along       float64 // again: how far its readings' middle lies along the line from the first's, m
	}
	renamed := make([][]renaming, len(all))
	holders := map[string][]int{} // the logs holding each renamed value, earliest first
	calendar := true
	for _, m := range parts {
		for _, p := range m {
			if !calendarTime(p.span.t0) {
				calendar = false
			}
		}
	}
	for _, v := range values {
		var ps []*logPart
		for k := range all {
			if p := parts[k][v]; p != nil {
				ps = append(ps, p)
			}
		}
		if len(ps) < 2 {
			continue
		}
		if calendar {
			sort.SliceStable(ps, func(a, b int) bool { return ps[a].span.t0 < ps[b].span.t0 })
		}
		type cluster struct {
			name string
			at   logPart // the readings so far
		}
		first := &cluster{name: v, at: *ps[0]}
		first.at.xy = append([][2]float64(nil), ps[0].xy...)
		clusters := []*cluster{first}
		apart := false
		for _, p := range ps[1:] {
			var in *cluster
			for _, c := range clusters {
				if together(&c.at, p) {
					in = c
					break
				}
			}
			if in == nil {
				q := logLabel(logs[p.log], logs) + ":" + v
				if taken[q] {
					in = first // the name is taken: left pooled rather than merged with another
				} else {
					taken[q] = true
					in = &cluster{name: q, at: logPart{log: p.log, span: newReadingSpan()}}
					clusters = append(clusters, in)
				}
			}
			if in != first {
				d, gap := first.at.span.apart(p.span)
				again := d <= reusedApartM && sameGround(&first.at, p)
				along := 0.0
				if again {
					l := runLineOf(first.at.xy)
					d, along = math.Abs(l.across(p.xy)), math.Abs(l.middle(p.xy)-l.middle(first.at.xy))
				}
				renamed[p.log] = append(renamed[p.log], renaming{value: v, name: in.name, dist: d, gap: gap, again: again, along: along})
				given.value[rewalkKey(logs[p.log], in.name)] = v
				if !again {
					given.apart[rewalkKey(logs[p.log], v)] = in.name
				}
				apart = true
			}
			in.at.span.addSpan(p.span)
			in.at.xy = append(in.at.xy, p.xy...)
		}
		if apart {
			for _, p := range ps {
				holders[v] = append(holders[v], p.log)
			}
		}
	}
	// A log some of whose groups were renamed has the rest of its groups,
	// those no other log holds, named after it too (LOG:VALUE): day 2's
	// T14, next to day2.csv:T13 and after day 1's T13, read as crew 1's
	// (found in review). Values that joined another log's group keep the
	// shared name.
	own := make([][]string, len(all))
	for k, rs := range renamed {
		if len(rs) == 0 {
			continue
		}
		_, order := partsOf(k, all[k])
		for _, v := range order {
			alone := true
			for j := range all {
				if j != k && parts[j][v] != nil {
					alone = false
					break
				}
			}
			q := logLabel(logs[k], logs) + ":" + v
			if !alone || taken[q] {
				continue
			}
			taken[q] = true
			own[k] = append(own[k], v)
			given.value[rewalkKey(logs[k], q)] = v
			given.apart[rewalkKey(logs[k], v)] = q
		}
	}
	var warns []string
	for k, rs := range renamed {
		if len(rs) == 0 {
			continue
		}
		to := map[string]string{}
		var names []string
		var from []string
		fromSeen := map[int]bool{k: true}
		// The distances and times of the parts elsewhere (else) and of
		// those over the same ground again (again).
		var elsewhere, again spread
		// Times that are not calendar times (restarting at 0 in each
		// log) say nothing of how far apart two logs' readings lie.
		timed := calendar
		for _, r := range rs {
			to[r.value] = r.name
			names = append(names, r.value)
			for _, h := range holders[r.value] {
				if !fromSeen[h] {
					fromSeen[h] = true
					from = append(from, logs[h])
				}
			}
			sp := &elsewhere
			if r.again {
				sp = &again
			}
			sp.add(r.value, r.dist, r.gap)
			if r.again {
				again.minA, again.maxA = math.Min(again.minA, r.along), math.Max(again.maxA, r.along)
			}
			if math.IsNaN(r.gap) {
				timed = false
			}
		}
		label := logLabel(logs[k], logs)
		for _, v := range own[k] {
			to[v] = label + ":" + v
		}
		s := all[k]
		for i, v := range s.Group {
			if q, ok := to[v]; ok {
				s.Group[i] = q
			}
		}
		var keepers []string
		keptSeen := map[int]bool{}
		for _, r := range rs {
			if h := holders[r.value][0]; !keptSeen[h] {
				keptSeen[h] = true
				keepers = append(keepers, logs[h])
			}
		}
		what := fmt.Sprintf("the group %s is", names[0])
		now := fmt.Sprintf("a group of its own, named %s", to[names[0]])
		if len(names) > 1 {
			what = fmt.Sprintf("the groups %s are", listNames(names))
			now = fmt.Sprintf("groups of their own, named %s (and so on)", to[names[0]])
		}
		keeps := "which keeps the names, its readings coming first"
		if len(keepers) > 1 {
			keeps = "which keep the names, their readings coming first"
		}
		if !calendar {
			keeps = "which keeps the names, given first (the logs' times are not calendar times)"
			if len(keepers) > 1 {
				keeps = "which keep the names, given first (the logs' times are not calendar times)"
			}
		}
		also := ""
		if len(own[k]) > 0 {
			if len(own[k]) == 1 {
				also = fmt.Sprintf(" Its other group %s is named %s too, so that every group of %s is told by its name", own[k][0], to[own[k][0]], label)
			} else {
				also = fmt.Sprintf(" Its other groups %s are named %s (and so on) too, so that every group of %s is told by its name", listNames(own[k]), to[own[k][0]], label)
			}
			also += "."
		}
		warns = append(warns, fmt.Sprintf("%s: %s also in %s, but %s, %s: taken for another traverse under the same name, and fitted as %s.%s One group value in several logs is one group where its readings lie within %g m of each other, unless they cover the same ground again more than %g s apart (a cart's two sensors, or a traverse continued in the next file after any pause, are one group; a traverse walked again later is another); to name the groups otherwise, rename them in one of the files",
			logs[k], what, joinAnd(from), reusedWhere(elsewhere, again, timed, joinAnd(keepers)), keeps, now, also, reusedApartM, reusedApartS))
	}
	return warns, given
}

// spread gathers the group values of renamed parts with the range of
// their distances, m, and times apart, s, and for parts over the same
// ground again the range of the distances along the line between the
// middles of their readings, m.
type spread struct {
	values                 []string
	minD, maxD, minG, maxG float64
	minA, maxA             float64
}

func (s *spread) add(v string, d, gap float64) {
	if len(s.values) == 0 {
		s.minD, s.maxD, s.minG, s.maxG = math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
		s.minA, s.maxA = math.Inf(1), math.Inf(-1)
	}
	s.values = append(s.values, v)
	s.minD, s.maxD = math.Min(s.minD, d), math.Max(s.maxD, d)
	if !math.IsNaN(gap) {
		s.minG, s.maxG = math.Min(s.minG, gap), math.Max(s.maxG, gap)
	}
}

// reusedWhere words where the renamed parts of a log lie from those of
// the logs keepers (times given when timed): the ones
// elsewhere by the distance between the extents of their readings, and
// the ones over the same ground again (again) by their distance across
// the earlier readings' line, to the centimetre, and, when it is 0.1 m
// or more, the distance between the middles of the two sets of readings
// along it (a position offset along the traverses, which moves the
// fitted conductor across itself). Two logs of the same traverses walked
// again 0.5 m along the conductor had been said to "lie 0 m apart", the
// distance between their overlapping extents (found in review).
func reusedWhere(elsewhere, again spread, timed bool, keepers string) string {
	cm := func(v float64) float64 { return math.Round(v*100) / 100 }
	var parts []string
	if len(elsewhere.values) > 0 {
		w := "lie " + rangeText(elsewhere.minD, elsewhere.maxD, "m")
		if timed {
			w += " and " + rangeText(elsewhere.minG, elsewhere.maxG, "s")
		}
		w += " apart from those of " + keepers
		parts = append(parts, w)
	}
	if len(again.values) > 0 {
		w := "cover the same ground again"
		if timed {
			w += " " + rangeText(again.minG, again.maxG, "s") + " later"
		}
		w += ", " + rangeText(cm(again.minD), cm(again.maxD), "m") + " across"
		if cm(again.maxA) >= 0.1 {
			w += " and " + rangeText(cm(again.minA), cm(again.maxA), "m") + " along (between their middles)"
		}
		w += " the lines of those of " + keepers
		parts = append(parts, w)
	}
	if len(parts) == 1 {
		return "the readings " + parts[0]
	}
	// Some elsewhere, some over the same ground: each set named.
	return fmt.Sprintf("the readings of %s %s, and those of %s %s", listNames1(elsewhere.values), parts[0], listNames1(again.values), parts[1])
}

// listNames1 is listNames for one name or more.
func listNames1(names []string) string {
	if len(names) == 1 {
		return names[0]
	}
	return listNames(names)
}

// joinAnd joins names as "a", "a and b", "a, b and c".
func joinAnd(names []string) string {
	if len(names) < 2 {
		return strings.Join(names, "")
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
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

// rangeText words a range of separations: "140 m", or "138-142 m"; a
// time, s, of two minutes or more in minutes, of two hours or more in
// hours and of two days or more in days (a day had read "1.44e+03 min").
func rangeText(lo, hi float64, unit string) string {
	f := func(v float64) string { return fmt.Sprintf("%.3g", v) }
	if unit == "s" && lo >= 120 {
		unit, lo, hi = "min", lo/60, hi/60
	}
	if unit == "min" && lo >= 120 {
		unit, lo, hi = "h", lo/60, hi/60
	}
	if unit == "h" && lo >= 48 {
		unit, lo, hi = "days", lo/24, hi/24
	}
	if f(lo) == f(hi) {
		return f(lo) + " " + unit
	}
	return f(lo) + "-" + f(hi) + " " + unit
}

// orderGroupsByTime puts the groups of a run in the order of their first
// readings' times (AC: windows), whatever the order the logs were given
// in or the order of the rows in a log: the route's chain is turned to
// follow the groups' order, so the order of the files on the command line
// set chainage 0, the route's direction and the sign of every DC current
// (the same survey in three files gave a fall at chainage 249 m in one
// order and 150 m in another; found in review). Several logs' groups are
// taken in time order when every group's first time is a calendar time,
// ties by name. Times that are not calendar times (seconds from a
// logger's start, which restart at 0 in each file, or none) do not order
// logs: then the order given is kept, and the returned warning says so.
// The warning names no group: the route is turned to agree with the order
// given as a whole, so chainage 0 need not be at the first log's first
// group (it named one in the middle of the route; found in review);
// routeStartNote adds the group the built route starts at.
//
// A single log's groups are taken in time order too when every group has
// a time (one log has one clock, calendar or not), ties in the log's
// order: before, they kept the order of their first rows, and the same
// rows with the traverses in another order (a database export, two daily
// files joined, read with --time-order per-group or any) gave a route
// starting at the other end with every DC current negated, while the same
// rows as two logs did not (found in review). A log already in time order
// keeps its order. A single log without times keeps its own order; one
// whose times are not calendar times, and whose groups were moved, is
// warned of (its clock may restart: two logs joined).
func orderGroupsByTime(sv *survey, logs []string) string {
	if len(sv.groups) < 2 {
		return ""
	}
	first := make(map[*group]float64, len(sv.groups))
	for _, g := range sv.groups {
		t := g.firstTime()
		if len(logs) < 2 {
			if math.IsNaN(t) {
				return "" // no times: the log's own order
			}
		} else if !calendarTime(t) {
			what := "has no times"
			if !math.IsNaN(t) {
				what = fmt.Sprintf("has times that are not calendar times (group %s starts at %s)", groupName(g.key), fmtBaseTime(t))
			}
			return fmt.Sprintf("%s %s, so the groups of the %d logs are taken in the order the logs were given in, and that order decides which end of the route is chainage 0 and the route's direction (and the sign of a DC current)%s; give the logs in the order walked, or logs with calendar times, whose groups are put in time order",
				g.from, what, len(logs), routeStartMark)
		}
		first[g] = t
	}
	was := append([]*group(nil), sv.groups...)
	sort.SliceStable(sv.groups, func(a, b int) bool {
		ga, gb := sv.groups[a], sv.groups[b]
		if first[ga] != first[gb] {
			return first[ga] < first[gb]
		}
		return len(logs) > 1 && ga.key < gb.key
	})
	if len(logs) > 1 {
		return ""
	}
	// One log whose times are not calendar times, its groups not in time
	// order in it: its clock may restart (files of a logger counting from
	// its start, joined), and time order then mixes them up.
	for i, g := range sv.groups {
		if g != was[i] && !calendarTime(first[g]) {
			return fmt.Sprintf("%s: the groups are not in time order in the log (group %s starts at %s, before group %s, which comes before it in the log), and were put in time order, which decides which end of the route is chainage 0 and the route's direction (and the sign of a DC current)%s; the times are not calendar times: if the log joins logs whose clocks each start at 0, give them as separate logs, in the order walked",
				g.from, groupName(g.key), fmtBaseTime(first[g]), groupName(was[i].key), routeStartMark)
		}
	}
	return ""
}

// routeStartMark marks where routeStartNote names the group the route
// starts at in orderGroupsByTime's warning; it is taken out when there is
// no route.
const routeStartMark = "\x00route-start\x00"

// routeStartNote puts into the warnings the group the built route starts
// at (chainage 0) where orderGroupsByTime's warning marks it, or takes
// the mark out when the document has no route.
func routeStartNote(doc *report.Document) {
	at := ""
	if doc.Route != nil && len(doc.Route.Stations) > 0 {
		at = fmt.Sprintf(": here chainage 0 is at %s, and chainage increases towards %s", doc.Route.Stations[0].Key, doc.Route.Stations[len(doc.Route.Stations)-1].Key)
	}
	for i, w := range doc.Warnings {
		doc.Warnings[i] = strings.Replace(w, routeStartMark, at, 1)
	}
}

// groupName quotes a group's key for messages ("" is the whole log).
func groupName(key string) string {
	if key == "" {
		return "the whole log"
	}
	return key
}
