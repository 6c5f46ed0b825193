package route

import (
	"math"
	"sort"
	"strings"
)

// Stations walked again.
//
// A route walked twice (two logs, a day apart, the traverses named alike
// and kept apart as groups of their own) puts two stations at each
// chainage of the walk repeated, a few millimetres apart. Chained as
// neighbours they broke the route: a station's direction was turned to
// agree with the tangent between its neighbours, at the route's end the
// two crossings of the last traverse, so the sign of its current was
// decided by noise (25 A read as -25 A beside +25 A: a false "current
// falls by 49.99 A" between two stations 0 m apart), and the step search,
// fed intervals of no length, lost a real 0.3 A loss that either walk
// alone finds (found in review).
//
// Stations closer along the route than repeatFrac of its station spacing
// are repeats of one station: they take no part in each other's tangent
// (orient), and the steps and the between-station scatter are found on
// the route with each set of repeats combined into one station
// (combineRepeats): the inverse-variance mean of their currents (and
// depths), its sigma widened by the repeats' own scatter where they
// disagree by more than their sigmas say (after each later walk is
// brought to the first walk's level, when one change or one ratio per
// walk accounts for their disagreement: walks.go scaleWalks). A repeat
// walk over part of the route so narrows the stations it repeats, and
// confirms a loss it covers rather than hiding it. The stations themselves are kept, each
// with its own fit, for the profile, cover and the per-station findings.

// repeatFrac is the fraction of the route's station spacing (repeatSpacing)
// within which stations are repeats of one station. Two walks of one
// traverse cross the conductor within centimetres of each other; an
// infill traverse put between two others to pin a change lies half a
// spacing from each, and a fifth of one is already closer than any
// step's position can be told from the fits of traverses a depth or
// more long.
const repeatFrac = 0.1

// repeatSpacing is the route's station spacing for telling repeats: the
// median of the intervals between successive usable stations of ps
// (route order), measured along the conductor (alongApart), that are
// longer than a tenth of their mean, so that the intervals of no length
// between repeats (half of them on a route walked twice) do not set it;
// zero with fewer than two usable stations.
func repeatSpacing(ps []Placed) float64 {
	var d []float64
	prev := -1
	for k := range ps {
		if !ps[k].usable() {
			continue
		}
		// A walk again of the station before it (by the caller's word)
		// is no interval of the spacing (see walkedAgain).
		if prev >= 0 && sameTraverse(&ps[prev], &ps[k]) {
			continue
		}
		if prev >= 0 {
			d = append(d, alongApart(&ps[prev], &ps[k]))
		}
		prev = k
	}
	return spacingOfIntervals(d)
}

// Repeats beside each other.
//
// A later walk whose positions are off the first's along the traverses
// (across the conductor: an uncorrected GNSS offset between days) puts
// each station's repeat that far across the route from it, its fitted
// line moved across itself by the offset. Chained point to point, the
// 0.6 m between a station and its repeat on single-line.toml walked again
// 0.6 m along its traverses were half the chainage intervals, so their
// median was read as the spacing, no stations were repeats, and the
// route's end station took its direction from the tangent to its repeat,
// across the conductor: T07 read -25 A beside +25 A, a false "current
// falls by 52.2 A" (found in review). Two crossings of one conductor at
// one station differ along the route by no more than the walks' stations
// do, whatever the offset across it: stations are now told apart by
// their distance along their fitted direction (alongApart), when the two
// directions agree within repeatTurnDeg and the stations lie within
// repeatAcrossM across it; otherwise by their chainage, as before.
const (
	// repeatTurnDeg: the most, degrees, two stations' directions may
	// differ and their distance be taken along them (two walks of one
	// traverse fit one direction within a degree or so; the legs either
	// side of a bend or a branch at a tee differ more).
	repeatTurnDeg = 10.0
	// repeatAcrossM: the most, m, two stations may lie across their
	// direction and their distance be taken along it (an uncorrected GNSS
	// offset between days is commonly 0.5-2 m; from memory of field
	// practice).
	repeatAcrossM = 2.5
)

// alongApart returns the distance, m, between the stations a and b of a
// route along the conductor: the component along their mean horizontal
// direction of the chord between their points, when both are sound (OK),
// their directions agree within repeatTurnDeg and they lie within
// repeatAcrossM across it; otherwise the difference of their chainages.
func alongApart(a, b *Placed) float64 {
	ch := math.Abs(b.Chainage - a.Chainage)
	if !a.OK || !b.OK {
		return ch
	}
	ua, okA := horizUnit(a.Dir)
	ub, okB := horizUnit(b.Dir)
	if !okA || !okB {
		return ch
	}
	dot := ua[0]*ub[0] + ua[1]*ub[1]
	if dot < 0 {
		ub, dot = [2]float64{-ub[0], -ub[1]}, -dot
	}
	if dot < math.Cos(repeatTurnDeg*math.Pi/180) {
		return ch
	}
	u := [2]float64{ua[0] + ub[0], ua[1] + ub[1]}
	n := math.Hypot(u[0], u[1])
	u = [2]float64{u[0] / n, u[1] / n}
	dx, dy := b.Point[0]-a.Point[0], b.Point[1]-a.Point[1]
	if math.Abs(-dx*u[1]+dy*u[0]) > repeatAcrossM {
		return ch
	}
	return math.Abs(dx*u[0] + dy*u[1])
}

// Repeats told by the traverse's name.
//
// Told by chainage alone, a station's repeat had to lie within
// repeatFrac of the spacing along the route, and the spacing was the
// median of the intervals: on a route walked twice with a position
// offset between the walks along the route (an uncorrected GNSS offset
// between days), half the intervals are the offset, so 0.3 m on
// traverses 4 m apart was read as the spacing and no station had a
// repeat; 1.2 m was more than a tenth of even the true spacing. Every
// station then stood on its own, a walk's 10% more current read as a
// rise and fall at every traverse: the 3 A loss went unreported, no
// walks-differ, each repeat its own chainage (found in review). Where the
// caller names the traverse each station walks (Station.Traverse, the
// name the walks share), two successive stations of one traverse less
// than half the spacing apart along the route are repeats (walkedAgain),
// and the intervals between them are not the spacing (repeatSpacing):
// an offset well below the spacing pairs the walks, whatever the
// spacing. Half a spacing keeps the walks of two traverses apart, as an
// infill traverse between two others stays apart by the chainage rule.

// sameTraverse reports whether the stations a and b walk one traverse by
// the caller's word (the same non-empty Traverse).
func sameTraverse(a, b *Placed) bool { return a.Traverse != "" && a.Traverse == b.Traverse }

// walkedAgain reports whether the station b, after a in route order, is a
// walk again of a's traverse (sameTraverse) less than half the route's
// spacing (gap over repeatFrac) after it along the route.
func walkedAgain(a, b *Placed, gap float64) bool {
	return gap > 0 && sameTraverse(a, b) && b.Chainage-a.Chainage < 0.5*gap/repeatFrac
}

// RepeatGapAlong is the chainage within which stations are repeats of one
// station (repeatGap), m, for the chainages c, m, of a route's usable
// stations in route order (a report's route, whose stations no longer
// carry their fits); zero when there are none to tell.
func RepeatGapAlong(c []float64) float64 { return repeatFrac * spacingOf(c) }

// spacingOf is repeatSpacing for the chainages c of the usable stations
// in route order.
func spacingOf(c []float64) float64 {
	var d []float64
	for k := 1; k < len(c); k++ {
		d = append(d, c[k]-c[k-1])
	}
	return spacingOfIntervals(d)
}

// spacingOfIntervals is the median of the intervals d, m, longer than a
// tenth of their mean; zero without any.
func spacingOfIntervals(d []float64) float64 {
	if len(d) == 0 {
		return 0
	}
	var mean float64
	for _, v := range d {
		mean += v
	}
	mean /= float64(len(d))
	var long []float64
	for _, v := range d {
		if v > 0.1*mean {
			long = append(long, v)
		}
	}
	if len(long) == 0 {
		return 0
	}
	return medianOf(long)
}

// RepeatGap is the chainage within which the route's stations are
// repeats of one station (a route walked again; see repeatGap), m; zero
// when there are none to tell.
func (r *Route) RepeatGap() float64 { return repeatGap(r.Stations) }

// repeatGap is the chainage within which stations of ps are repeats of one
// station (repeatFrac of repeatSpacing), m.
func repeatGap(ps []Placed) float64 { return repeatFrac * repeatSpacing(ps) }

// walkOrder puts the stations of each run of repeats of ps (route order;
// runs of stations less than gap apart along the route, see repeatRuns)
// in the caller's order (Index), the order of the walks when the caller
// puts groups in time order, as it does for several logs and for a
// traverse walked again in one log, and measures the chainage again
// through the runs (measureRuns). The chaining put a run's stations in
// whatever order made the shortest path, so a later walk's station, a
// millimetre nearer the route's end, could come first: chainage 0 was
// named at the later walk's traverse, against what the README says
// (found in review). It reports whether any run had two stations or more
// (the chainage was measured again).
func walkOrder(ps []Placed, gap float64) bool {
	if gap <= 0 {
		return false
	}
	var runs [][2]int
	multi := false
	repeatRuns(ps, gap, func(i, j int, _ []*Placed) {
		runs = append(runs, [2]int{i, j})
		if j-i > 1 {
			multi = true
		}
	})
	if !multi {
		return false
	}
	for _, r := range runs {
		run := ps[r[0]:r[1]]
		sort.SliceStable(run, func(a, b int) bool { return run[a].Index < run[b].Index })
	}
	measureRuns(ps, runs)
	return true
}

// measureRuns sets the chainage of ps (route order) with each run of
// repeats, ps[r[0]:r[1]] for r in runs (each in walk order), taken as
// one point: its first sound (OK) station's, the earliest walk's (the
// mean of all its stations' points when none is sound), chained as
// measure chains stations; every station of a run takes its run's
// chainage. Chained station by station in walk order,
// a later walk whose positions sit behind the first's (a GNSS offset
// between days: 0.5 m on a 20 m spacing) went back and forth at every
// station, adding twice the offset each time: Kestrel Moor walked again
// was 420 m long rather than 400 m and its defect placed 14 m past where
// it is (found in review). A later walk beside the first's (across the
// route) likewise zigzagged. Repeats now add no length, and chainage 0
// is still at the first walk's traverse, listed first. The mean of a
// run's sound points had stood for the run, which jogged across the
// route where a walk beside the first (a GNSS offset between days)
// began or ended: 0.12 m more per jog with the later walk 2 m across on a
// 4 m spacing. A run's first walk's point keeps the chords on one walk
// wherever it is sound. A route with no repeats has one station a run
// and is measured as before.
func measureRuns(ps []Placed, runs [][2]int) {
	nodes := make([]Placed, len(runs))
	for n, r := range runs {
		first := -1
		for k := r[0]; k < r[1] && first < 0; k++ {
			if ps[k].OK {
				first = k
			}
		}
		if first >= 0 {
			nodes[n].Point, nodes[n].OK = ps[first].Point, true
			continue
		}
		var pt [3]float64
		for k := r[0]; k < r[1]; k++ {
			for a := range pt {
				pt[a] += ps[k].Point[a]
			}
		}
		for a := range pt {
			nodes[n].Point[a] = pt[a] / float64(r[1]-r[0])
		}
	}
	measure(nodes)
	for n, r := range runs {
		for k := r[0]; k < r[1]; k++ {
			ps[k].Chainage = nodes[n].Chainage
		}
	}
}

// combineRepeats returns ps (route order) with each set of repeats (runs
// of successive stations less than gap apart along the route from the
// run's first, two or more of them usable) combined into one usable
// station; a set's stations that are not usable are left out of it (they
// are reported on their own by quality). The combined station is a copy
// of the set's first station in the caller's order (the earliest walk's,
// when the caller puts groups in time order), so it keeps that station's
// key and fit quality, with the inverse-variance means of the set's
// currents (phases for AC, relative to its own) and depths, their sigmas
// widened by sqrt(chi-square per degree of freedom) of the set's currents
// about their mean when over 1 (repeats that disagree by more than their
// sigmas: the current changed between walks, or a fit is off), its
// chainage and point the set's mean, and the others' keys in also, for
// the messages (label). With no repeats it returns ps itself.
func combineRepeats(ps []Placed, gap float64) []Placed {
	if gap <= 0 || len(ps) < 2 {
		return ps
	}
	var out []Placed
	merged := false
	repeatRuns(ps, gap, func(i, j int, use []*Placed) {
		if len(use) < 2 {
			out = append(out, ps[i:j]...)
			return
		}
		merged = true
		out = append(out, combine(use))
	})
	if !merged {
		return ps
	}
	return out
}

// combine returns the one station of the repeats use (usable, two or
// more; see combineRepeats).
func combine(use []*Placed) Placed {
	sort.SliceStable(use, func(a, b int) bool { return use[a].Index < use[b].Index })
	c := *use[0]
	c.also, c.alsoKeys = nil, nil
	// The combined sigmas are the repeats' pooled, whose misfits may
	// differ: they are not taken back to the noise by the first's
	// (Station.SigmaFromResiduals).
	c.SigmaFromResiduals = false
	for _, p := range use[1:] {
		c.also = append(c.also, label(p))
		if p.Key != "" {
			c.alsoKeys = append(c.alsoKeys, p.Key)
		}
	}
	ref := use[0].Phase
	// mean returns the inverse-variance mean of v over use, its sigma
	// and the chi-square of v about it; sigmas of zero count as equal
	// weights.
	mean := func(v func(*Placed) float64, s func(*Placed) float64) (m, sigma, chi2 float64) {
		var sw, swv float64
		zero := false
		for _, p := range use {
			if s(p) <= 0 {
				zero = true
			}
		}
		w := func(p *Placed) float64 {
			if zero {
				return 1
			}
			return 1 / (s(p) * s(p))
		}
		for _, p := range use {
			sw += w(p)
			swv += w(p) * v(p)
		}
		m = swv / sw
		if zero {
			return m, 0, 0
		}
		for _, p := range use {
			chi2 += w(p) * (v(p) - m) * (v(p) - m)
		}
		return m, math.Sqrt(1 / sw), chi2
	}
	widen := func(sigma, chi2 float64) float64 {
		if r := chi2 / float64(len(use)-1); r > 1 {
			return sigma * math.Sqrt(r)
		}
		return sigma
	}
	var chi2 float64
	c.Current, c.CurrentSigma, chi2 = mean(func(p *Placed) float64 { return p.Current }, func(p *Placed) float64 { return p.CurrentSigma })
	c.CurrentSigma = widen(c.CurrentSigma, chi2)
	c.Depth, c.DepthSigma, chi2 = mean(func(p *Placed) float64 { return p.Depth }, func(p *Placed) float64 { return p.DepthSigma })
	c.DepthSigma = widen(c.DepthSigma, chi2)
	if c.AC {
		// The phases of walks left out of the combined phase (phaseOut:
		// a later walk's not the first's plus one offset, walkphase.go)
		// are not averaged in; the others' are already referred to the
		// first walk's.
		all := use
		var in []*Placed
		for _, p := range use {
			if !p.phaseOut {
				in = append(in, p)
			}
		}
		if len(in) > 0 {
			use = in
		}
		var ph float64
		ph, c.PhaseSigma, chi2 = mean(func(p *Placed) float64 { return ref + wrapDeg(p.Phase-ref) }, func(p *Placed) float64 { return p.PhaseSigma })
		c.Phase = wrapDeg(ph)
		c.PhaseSigma = widen(c.PhaseSigma, chi2)
		use = all
	}
	var ch float64
	var pt [3]float64
	for _, p := range use {
		ch += p.Chainage
		for a := range pt {
			pt[a] += p.Point[a]
		}
		c.strained = c.strained && p.strained
		c.shift = math.Max(c.shift, p.shift)
	}
	c.Chainage = ch / float64(len(use))
	for a := range pt {
		c.Point[a] = pt[a] / float64(len(use))
	}
	return c
}

// alsoText is the text label adds for a combined station's repeats:
// "T13 with day2.csv:T13".
func alsoText(also []string) string {
	if len(also) == 0 {
		return ""
	}
	return " with " + strings.Join(also, ", ")
}

// repeatRuns calls visit for each run of successive stations of ps (route
// order) less than gap apart along the route (alongApart) from the run's
// first, or walks again of its traverse (walkedAgain), ps[i:j],
// with its usable stations: the repeats of one station when there are two
// or more (combineRepeats, repeatSets).
func repeatRuns(ps []Placed, gap float64, visit func(i, j int, use []*Placed)) {
	for i := 0; i < len(ps); {
		j := i + 1
		for j < len(ps) && (alongApart(&ps[i], &ps[j]) < gap || walkedAgain(&ps[i], &ps[j], gap)) {
			j++
		}
		var use []*Placed
		for k := i; k < j; k++ {
			if ps[k].usable() {
				use = append(use, &ps[k])
			}
		}
		visit(i, j, use)
		i = j
	}
}

// alignRepeats gives every station of each run of repeats of ps (route
// order, each run in walk order: walkOrder) the chainage of the run's
// first, the earliest walk's. cornerChainage places each station within a
// bend by its own point, so the walks of a traverse at the bend, which
// walkOrder had put at one chainage, lay their position offset apart
// again: T13 and T13 (walk 2) 0.9 m apart on bend.toml walked again 1.2 m
// along its first leg, where the report (RepeatGapAlong, by chainage
// alone) no longer took them for one station (found while fixing review
// rv16a finding 6).
func alignRepeats(ps []Placed, gap float64) {
	repeatRuns(ps, gap, func(i, j int, _ []*Placed) {
		for k := i + 1; k < j; k++ {
			ps[k].Chainage = ps[i].Chainage
		}
	})
}
