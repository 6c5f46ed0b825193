package main

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/ingest"
)

// Traverses walked again in one log under the same name.
//
// Several logs' readings of one group value are another traverse where
// they cover the same ground again more than reusedApartS apart
// (loggroups.go). Within one log the group value pooled them: a traverse
// re-walked at the end of the day under its own name, the current 10%
// higher the second time (a rectifier re-tapped), was fitted as one
// traverse whose current neither walk saw, called poor, with no word of
// the repeat, while the same re-walk under another name drew the
// walks-differ caution (found in review). splitRewalkedGroups applies the
// several-logs rule within each log: a group's readings are cut at pauses
// longer than reusedApartS between its successive readings, and a run
// that covers the same ground again (sameGround, within reusedApartM) as
// an earlier walk of the group, at its station (on its line:
// rewalkstation.go), and lies together with none, is a walk of its own,
// renamed VALUE (walk N); one beside the line is another traverse under
// the same name, VALUE (line N). A traverse continued after a pause
// (end to end) stays one walk, and one walked out and back without a
// pause is never cut. The walks then lie at one chainage and are
// compared as repeats (walks-differ).

// rewalkMinReadings and rewalkMinLengthM: a run after a pause with fewer
// readings, or shorter along the ground, is no walk of its own (a few
// readings taken standing); it stays with the walk before it.
const (
	rewalkMinReadings = 5
	rewalkMinLengthM  = 1.0
)

// rewalkName names the walk n (from 1) of the group value v.
func rewalkName(v string, n int) string { return fmt.Sprintf("%s (walk %d)", v, n) }

// splitRewalkedGroups renames, in each log of all, the rows of a group
// value that walk its traverse again after a pause (see above), and
// returns a warning for each such group and, for each walk after the
// first, its number keyed by rewalkKey (the walk a station comes from,
// when several logs name the walks by log).
func splitRewalkedGroups(logs []string, all []*ingest.Samples) ([]string, map[string]int) {
	walkNo := map[string]int{}
	taken := map[string]bool{}
	for _, s := range all {
		for _, v := range s.Group {
			taken[v] = true
		}
	}
	var warns []string
	for k, s := range all {
		if s.Group == nil || s.NoTime || len(s.Time) != len(s.Group) {
			continue
		}
		rows := map[string][]int{}
		var order []string
		for i, v := range s.Group {
			if v == "" {
				continue
			}
			if rows[v] == nil {
				order = append(order, v)
			}
			rows[v] = append(rows[v], i)
		}
		// Each group's first walk: its rows before its first pause
		// (rewalkstation.go measures the spacing on these).
		first := map[string][]int{}
		for _, v := range order {
			first[v] = pauseRuns(rows[v], s.Time)[0]
		}
		// A set of runs shifted alike off their first walks: walks again
		// with a position offset (rewalkstation.go).
		offsetRun, offset := rewalkOffset(s, k, rows, order, first)
		var splits []rewalkSplit
		var mislabels []mislabel
		for _, v := range order {
			// Runs cut at pauses over reusedApartS.
			runs := pauseRuns(rows[v], s.Time)
			if len(runs) < 2 {
				continue
			}
			partOf := func(r []int) *logPart { return runPart(s, k, r) }
			type walk struct {
				at   *logPart
				name string
			}
			walks := []*walk{{at: partOf(runs[0]), name: v}}
			var lines []*walk // traverses beside the first walk given its name
			which := make([]*walk, len(runs))
			which[0] = walks[0]
			sp := rewalkSplit{value: v, names: []string{v}, times: []float64{s.Time[runs[0][0]]}, pause: math.Inf(1)}
			for j := 1; j < len(runs); j++ {
				p := partOf(runs[j])
				long := math.Hypot(p.span.maxX-p.span.minX, p.span.maxY-p.span.minY) >= rewalkMinLengthM
				var in *walk
				again, beside := false, -1.0
				spacing := 0.0
				for wi, w := range walks {
					if together(w.at, p) {
						in = w
						break
					}
					if d, _ := w.at.span.apart(p.span); d <= reusedApartM || alongside(w.at, p) {
						// The same ground again, after the pause: a walk
						// again at w's station, or another traverse
						// beside it (rewalkstation.go).
						if at, off, nearest := rewalkStation(w.at, p, s, first, v); at {
							again = true
						} else if r, ok := offsetRun[v]; ok && r == j && wi == 0 {
							// Shifted like the rest of its session.
							again = true
						} else if beside < 0 {
							beside, spacing = off, nearest
						}
					}
				}
				for _, w := range lines {
					if in != nil || again {
						break
					}
					if at, _, _ := rewalkStation(w.at, p, s, first, v); at || together(w.at, p) {
						in = w // the traverse beside, continued or walked again
					}
				}
				short := !long || len(runs[j]) < rewalkMinReadings
				if in == nil && !again && beside >= 0 && !short {
					name := rewalkLineName(v, len(lines)+2)
					for n := len(lines) + 3; taken[name]; n++ {
						name = rewalkLineName(v, n)
					}
					taken[name] = true
					in = &walk{at: &logPart{log: k, span: newReadingSpan()}, name: name}
					lines = append(lines, in)
					pause := s.Time[runs[j][0]] - s.Time[runs[j-1][len(runs[j-1])-1]]
					mislabels = append(mislabels, mislabel{v: v, name: name, off: beside, spacing: spacing, pause: pause, at: s.Time[runs[j][0]]})
				}
				if in == nil && (!again || short) {
					in = which[j-1] // elsewhere, or too short to be a walk: left as before
				}
				if in == nil {
					name := rewalkName(v, len(walks)+1)
					for n := len(walks) + 2; taken[name]; n++ {
						name = rewalkName(v, n)
					}
					taken[name] = true
					walkNo[rewalkKey(logs[k], name)] = len(walks) + 1
					in = &walk{at: &logPart{log: k, span: newReadingSpan()}, name: name}
					walks = append(walks, in)
					sp.names = append(sp.names, name)
					sp.times = append(sp.times, s.Time[runs[j][0]])
					sp.pause = math.Min(sp.pause, s.Time[runs[j][0]]-s.Time[runs[j-1][len(runs[j-1])-1]])
				}
				in.at.span.addSpan(p.span)
				in.at.xy = append(in.at.xy, p.xy...)
				which[j] = in
				if in.name != v {
					for _, i := range runs[j] {
						s.Group[i] = in.name
					}
				}
			}
			if len(walks) > 1 {
				splits = append(splits, sp)
			}
		}
		if w := mislabelWarning(logs[k], mislabels); w != "" {
			warns = append(warns, w)
		}
		if w := rewalkWarning(logs[k], splits, offset); w != "" {
			warns = append(warns, w)
		}
	}
	return warns, walkNo
}

// alongside reports whether the run p lies beside the walk w, whatever
// its distance across w's line: whether more than half of the shorter
// one's length along that line lies within the other's extent along it.
// Within reusedApartM a run after a pause was weighed as a walk again or
// a mislabel (rewalkStation); further off it stayed with the walk before
// it, so the next traverse walked under T04's name on a route of 20 m
// spacing (a run 20 m across T04's line) was fitted with T04 as one
// traverse, a station where nobody walked, at the mean of the two and
// with a blend of their currents and depths, where the same mislabel at
// 4 m spacing was split off (found in review). A run beside the first
// walk at any distance across its line is now weighed alike, and
// rewalkStation's share of the spacing tells the two apart.
func alongside(w, p *logPart) bool {
	l := runLineOf(w.xy)
	extent := func(xy [][2]float64) (lo, hi float64) {
		lo, hi = math.Inf(1), math.Inf(-1)
		for _, q := range xy {
			u := (q[0]-l.cx)*l.ux + (q[1]-l.cy)*l.uy
			lo, hi = math.Min(lo, u), math.Max(hi, u)
		}
		return lo, hi
	}
	if len(w.xy) == 0 || len(p.xy) == 0 {
		return false
	}
	a0, a1 := extent(w.xy)
	b0, b1 := extent(p.xy)
	return math.Min(a1, b1)-math.Max(a0, b0) >= 0.5*math.Min(a1-a0, b1-b0)
}

// rewalkSplit is a group value of one log whose traverse was walked
// again: the value, its walks' names (the first the value itself), each
// walk's first reading's time and the shortest pause before a new walk, s.
type rewalkSplit struct {
	value string
	names []string
	times []float64
	pause float64
}

// rewalkWarning is the one warning for the groups of the log path walked
// again (splits, in the log's order of groups): for one group, its pause
// and when each walk began; for several, the groups (the first six and
// how many more past eight), the range of the pauses, the names of the
// later walks and when the first, second, ... walks began (each the
// earliest over the groups). A day walked again in one log had drawn one
// such warning per traverse, 21 alike, where the same survey in two logs
// draws one (nameReusedGroups; found in review). offset, m, when not
// zero, is the common shift of a session's later walks off their first
// walks' lines (rewalkOffset), named once. Empty without splits.
func rewalkWarning(path string, splits []rewalkSplit, offset float64) string {
	rule := "A group's readings that cover the same ground again more than %g s after the ones before are another walk, as in several logs (a traverse continued after a pause, or walked out and back without one, is one walk)"
	if offset > 0 {
		rule = fmt.Sprintf("The later walks lie %.2g m across their first walks' lines, every one shifted alike (a position offset between the walks, such as an uncorrected GNSS offset between days gives, not traverses given another's name), so taken for walks again. ", offset) + rule
	}
	switch len(splits) {
	case 0:
		return ""
	case 1:
		sp := splits[0]
		var when []string
		for j, t := range sp.times {
			w := sp.names[j]
			if calendarTime(t) {
				w += " from " + fmtBaseTime(t)
			}
			when = append(when, w)
		}
		return fmt.Sprintf("%s: the group %s covers the same ground again after a pause of %s: taken for the traverse walked again, and fitted walk by walk (%s); the walks lie at one station and their currents are compared (walks-differ). "+rule,
			path, sp.value, rangeText(sp.pause, sp.pause, "s"), joinAnd(when), reusedApartS)
	}
	var values []string
	lo, hi := math.Inf(1), math.Inf(-1)
	var first []float64 // each walk's earliest first reading over the groups
	timed := true
	for _, sp := range splits {
		values = append(values, sp.value)
		lo, hi = math.Min(lo, sp.pause), math.Max(hi, sp.pause)
		for j, t := range sp.times {
			if !calendarTime(t) {
				timed = false
			}
			if j >= len(first) {
				first = append(first, t)
			} else {
				first[j] = math.Min(first[j], t)
			}
		}
	}
	named := fmt.Sprintf("named %s (and so on)", splits[0].names[1])
	began := ""
	if timed {
		var when []string
		for j, t := range first {
			when = append(when, fmt.Sprintf("the %s from %s", walksOrdinal(j), fmtBaseTime(t)))
		}
		began = fmt.Sprintf(" (%s: each the earliest over the groups)", joinAnd(when))
	}
	return fmt.Sprintf("%s: the groups %s cover the same ground again after pauses of %s: taken for the traverses walked again%s, and each walk fitted as a group of its own, %s; the walks of each traverse lie at one station and their currents are compared (walks-differ). "+rule,
		path, listNames(values), rangeText(lo, hi, "s"), began, named, reusedApartS)
}

// walksOrdinal names the walks k (from 0) of the traverses: "first
// walks".
func walksOrdinal(k int) string {
	names := []string{"first walks", "second walks", "third walks", "fourth walks", "fifth walks"}
	if k < len(names) {
		return names[k]
	}
	return fmt.Sprintf("walks %d", k+1)
}

// traverseOf names the traverse the group key of the log from walks, for
// the route to pair its walks (route.Station.Traverse): the key less the
// log's label that several logs give a value used again (LOG:T04,
// nameReusedGroups; reused as it returns them) where it covers the first
// log's ground again, and less the walk's number of a traverse walked
// again in one log (T04 (walk 2), splitRewalkedGroups; rewalks as it
// returns them). A group renamed as another traverse under the same name
// keeps its own name (LOG:T04), and so do its later walks: infill
// traverses 8 m past the first day's on 20 m spacing, numbered from T01
// again, had shared the first day's names and been paired with them as
// repeats (moved 8 m, and a false walks-differ; found in review), though
// the run's own warning called them other traverses. A value used again
// far along the route shares no name either way: the route pairs only
// walks less than half its spacing apart along it.
func traverseOf(key, from string, rewalks map[string]int, reused reusedNames) string {
	t := key
	if v, ok := reused.value[rewalkKey(from, key)]; ok {
		t = v
	}
	if n := rewalks[rewalkKey(from, t)]; n > 1 {
		if i := strings.LastIndex(t, " (walk "); i > 0 {
			t = t[:i]
		}
	}
	if own, ok := reused.apart[rewalkKey(from, t)]; ok {
		return own
	}
	return t
}

// rewalkKey keys a renamed walk by its log and name.
func rewalkKey(log, name string) string { return log + "\x00" + name }
