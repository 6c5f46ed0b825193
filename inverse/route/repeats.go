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
// median of the chainage intervals between successive usable stations of
// ps (route order) that are longer than a tenth of their mean, so that
// the intervals of no length between repeats (half of them on a route
// walked twice) do not set it; zero with fewer than two usable stations.
func repeatSpacing(ps []Placed) float64 {
	var c []float64
	for k := range ps {
		if ps[k].usable() {
			c = append(c, ps[k].Chainage)
		}
	}
	return spacingOf(c)
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
// repeats, ps[r[0]:r[1]] for r in runs, taken as one point: the mean of
// its sound (OK) stations' points (of all its stations when none is
// sound), chained as measure chains stations; every station of a run
// takes its run's chainage. Chained station by station in walk order,
// a later walk whose positions sit behind the first's (a GNSS offset
// between days: 0.5 m on a 20 m spacing) went back and forth at every
// station, adding twice the offset each time: Kestrel Moor walked again
// was 420 m long rather than 400 m and its defect placed 14 m past where
// it is (found in review). A later walk beside the first's (across the
// route) likewise zigzagged. Repeats now add no length, and chainage 0
// is still at the first walk's traverse, listed first. A route with no
// repeats has one station a run and is measured as before.
func measureRuns(ps []Placed, runs [][2]int) {
	nodes := make([]Placed, len(runs))
	for n, r := range runs {
		ok := false
		for k := r[0]; k < r[1]; k++ {
			ok = ok || ps[k].OK
		}
		var pt [3]float64
		cnt := 0
		for k := r[0]; k < r[1]; k++ {
			if ps[k].OK == ok {
				for a := range pt {
					pt[a] += ps[k].Point[a]
				}
				cnt++
			}
		}
		for a := range pt {
			nodes[n].Point[a] = pt[a] / float64(cnt)
		}
		nodes[n].OK = ok
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
		var ph float64
		ph, c.PhaseSigma, chi2 = mean(func(p *Placed) float64 { return ref + wrapDeg(p.Phase-ref) }, func(p *Placed) float64 { return p.PhaseSigma })
		c.Phase = wrapDeg(ph)
		c.PhaseSigma = widen(c.PhaseSigma, chi2)
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
// order) less than gap apart along the route from the run's first, ps[i:j],
// with its usable stations: the repeats of one station when there are two
// or more (combineRepeats, repeatSets).
func repeatRuns(ps []Placed, gap float64, visit func(i, j int, use []*Placed)) {
	for i := 0; i < len(ps); {
		j := i + 1
		for j < len(ps) && ps[j].Chainage-ps[i].Chainage < gap {
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
