package report

import (
	"math"
	"sort"

	"undercurrent/inverse"
)

// Conductor 1 where a parallel cable becomes the stronger.
//
// A fault that leaves a conductor carrying less than a cable laid beside
// it (a 25 A feeder losing 13 A, an 18 A supply 3 m away the whole way)
// makes the cable the strongest line of every traverse past the fault.
// leadByContinuity keeps conductor 1 on its track only where the
// strongest line runs off the neighbours' direction or carries far more
// than they do, and where half the six nearest traverses lie past the
// fault their conductor 1 is the cable too: conductor 1 moved onto the
// cable there, the route kinked 3 m sideways, the loss was read as the
// feeder's current before it less the cable's after it (7 A for 13 A),
// and both the cable and the feeder were said to end at the fault (found
// in review; with the fault between the last two traverses, the last
// station was the cable and the step 8.0 ± 1.5 A).
//
// leadBySwap therefore follows one track. The groups' conductor 1 lines
// are joined into tracks (the lines agree within crossAngle in plan and
// one passes within continuityReach of the other carried on, allowing for
// the carried line's direction sigma: onTrackOf), nearest first, but not
// two groups whose lines show the lead exchanged (below), even under
// continuityReach apart, nor any join that would put two such groups on
// one track; the track with the most groups is the route's, on a tie the
// one carrying the larger current at some traverse (the conductor whose
// current changes; the cable beside it carries the same the whole way). A
// group on another track takes as conductor 1 its line on the route's
// track when the nearest group already on it (by the readings' centres),
// or failing that the nearest whose lines kept the two apart, shows the lead
// changed between two parallel lines that both run on: the two groups'
// conductor 1 lines are parallel (swapParallel), this group has a line
// parallel to the other's conductor 1 on its track (allowing for that
// line's direction sigma over the distance carried), with a current
// within a factor continuityLevel of it or of this group's own conductor
// 1 (a fault may take most of the current: 20 A of 25 A beside an 18 A
// cable) whichever way it flows, the other group has a line on this one's
// conductor 1 track likewise, over continuityReach aside from its own
// conductor 1, and the lines side by side at the two traverses match
// better with the lead exchanged than without (swapPick). A group whose
// conductor 1 lies on its neighbour's carried on, and is not exchanged,
// joins the route's track and guides the groups beyond it. A bend of the
// route is not a swap (its lines are not parallel), nor is a conductor
// that ends or a service that runs beside the route for a few traverses
// only (the other line is missing on one side). Where the fault lies in
// the first part of the route the cable is the stronger at most
// traverses and is conductor 1 throughout, the feeder a further conductor
// with its loss (its own current findings). Where the lines' directions
// are too loosely known to join most traverses' into tracks (a 2.5 A
// feeder beside a 1.8 A cable, traverses 60 m apart), the route's track
// is the longest of short ones, not the conductor that is the stronger at
// most traverses: conductor 1 then keeps to either, the whole way.
// Run after leadByContinuity and leadByPosition.

// swapParallel is the angle in plan, degrees, within which the lines of
// two traverses are taken as parallel, widened by three times their
// azimuths' combined sigma. A route bending by more between two traverses
// shifts its line sideways rather than swapping it for another; under it,
// the shift over the traverses' spacing stays under continuityReach up to
// about 38 m apart.
const swapParallel = 3.0

// swapLine is a usable line of a fit, as leadBySwap compares it.
type swapLine struct {
	ok      bool
	plan    [2]float64
	cur     float64
	azSigma float64
	// turnSigma is the one-sigma angle, radians, by which the line's
	// direction in space may be off (its azimuth and dip sigmas
	// combined): carried a distance L, it may pass L times that aside.
	turnSigma   float64
	point, dir3 [3]float64
}

func swapLineOf(s *inverse.SourceEstimate, ac bool) swapLine {
	if s.Kind == KindDipole || !sound(s) || NoCurrent(s, ac) || !s.Identifiable.Azimuth {
		return swapLine{}
	}
	v, ok := planUnit(s.Dir)
	if !ok {
		return swapLine{}
	}
	sa := s.AzimuthSigma
	if !finite(sa) || sa < 0 {
		sa = 0
	}
	sd := 0.0
	if s.Identifiable.Dip && finite(s.DipSigma) && s.DipSigma > 0 {
		sd = s.DipSigma
	}
	return swapLine{ok: true, plan: v, cur: math.Abs(s.Current), azSigma: sa,
		turnSigma: math.Hypot(sa, sd) * math.Pi / 180, point: s.Point, dir3: s.Dir}
}

// swapTrackK is the number of sigmas of a line's direction allowed for
// when it is carried on to another group's line: to join the two into
// one track only where they meet even so (onTrackOf), to take a line as
// continuing it where they may (carries).
const swapTrackK = 3.0

// onTrackOf reports whether line m lies on line l's track: within
// continuityReach of l carried on to it, even were l's direction off by
// swapTrackK of its sigmas over the distance carried. Carried far, a
// line's direction does not tell one conductor from another beside it:
// with traverses 60 m apart, a feeder's line carried 540 m on passed
// 1.8 m from the cable 3 m beside it (its direction off by 0.13 degrees,
// twice its sigma), and the feeder's and the cable's groups were joined
// into one track (found in review). Lines of one conductor far apart are
// still joined through the groups between them.
func (m swapLine) onTrackOf(l swapLine) bool {
	return pointToLine(m.point, l.point, l.dir3)+m.drift(l) <= continuityReach
}

// drift is how far aside line l carried on to line m's point may pass
// were its direction off by swapTrackK of its sigmas.
func (m swapLine) drift(l swapLine) float64 {
	d := [3]float64{m.point[0] - l.point[0], m.point[1] - l.point[1], m.point[2] - l.point[2]}
	return swapTrackK * math.Abs(d[0]*l.dir3[0]+d[1]*l.dir3[1]+d[2]*l.dir3[2]) * l.turnSigma
}

// parallelTo reports whether a and b run within swapParallel degrees
// (plus three combined sigmas) of each other in plan, either sense.
func (a swapLine) parallelTo(b swapLine) bool {
	tol := swapParallel + 3*math.Hypot(a.azSigma, b.azSigma)
	if tol >= 90 {
		return true
	}
	return math.Abs(a.plan[0]*b.plan[0]+a.plan[1]*b.plan[1]) >= math.Cos(tol*math.Pi/180)
}

// carries reports whether line m continues line l: parallel to it, on its
// track (within continuityReach of it carried on, widened by the
// distance l may pass aside so carried: drift), with a current within
// a factor continuityLevel of l's or of o's (the conductor 1 of m's own
// group: a fault may take most of a conductor's current, but a line
// weaker than a quarter of either is no conductor of the two), whichever
// way its current flows: a line is followed by its place and depth. A DC
// current that changes sign between the two traverses (8 A one way, then
// 25 A the other, where 33 A joins) is still the one conductor; asked to
// flow the same way, the line was not followed there and conductor 1
// jumped to the cable beside it with a false 5 A step, both cables said
// to end (TestSwapCloseCablesOppositeSign).
func (m swapLine) carries(l, o swapLine) bool {
	if !m.ok || !l.ok || !m.parallelTo(l) || pointToLine(m.point, l.point, l.dir3) > continuityReach+m.drift(l) {
		return false
	}
	level := func(c float64) bool { return m.cur*continuityLevel >= c && m.cur <= continuityLevel*c }
	return level(l.cur) || o.ok && level(o.cur)
}

// aside is how far line m lies from line l of the same group across the
// plan direction u (unit), to its right: the side on which it lies, the
// same at every traverse for two parallel conductors whatever their
// lines' directions (they lie side by side at the one traverse).
func (m swapLine) aside(l swapLine, u [2]float64) float64 {
	return (m.point[0]-l.point[0])*u[1] - (m.point[1]-l.point[1])*u[0]
}

// swapFree reports whether f's lines may be reordered here: a usable fit
// whose first line is no pair's, split's or object's. A line beside the
// first carrying current the other way (Result.Opposed) keeps them in
// place only where it may be the first's partner core in a go-and-return
// pair (partnerCandidates: the route follows the pair there). Two cables
// 1.5-3 m apart at 1.0 and 1.3 m, one carrying current the other way,
// are no pair: refused for any opposite line, conductor 1 was never
// exchanged between them and jumped cables (a false 50 A step at 1.5 m,
// 45 A at 3 m) with both cables said to end, at 10 of 10 seeds
// (TestSwapCloseCablesOppositeSign). For AC only a line within
// polyphaseReturnDeg of anti-phase counts so (opposedReturn): the other
// cores of a three-phase circuit, 120 degrees off, are no return.
func swapFree(f *Fit, ac bool) bool {
	r := f.Result
	if r == nil || f.Dipole || f.object != nil || f.sumSplit || f.crossPairs != nil || len(r.Sources) < 2 ||
		!(r.Status.Converged() || r.Status == inverse.Stalled) || len(r.SameWay) > 0 {
		return false
	}
	if opposedReturn(r, ac) && len(partnerCandidates(f, ac)) > 0 {
		return false
	}
	for _, p := range r.Pairs {
		if p.Lines[0] == 0 || p.Lines[1] == 0 {
			return false
		}
	}
	return true
}

// splitPartner is the other line of f's same-way split of its conductor 1
// (sameWayOf) where the split alone keeps f's lines from being reordered
// (swapFree); -1 for none. Between two cables 1.5 m apart, where the
// current of one changes, the fit of the traverse 5 m from the change
// took the two as a split, 18.5 ± 3.1 and 16.3 ± 3.5 A: the neighbours
// either side resolve them, and the exchange makes the other share
// conductor 1 (withLead drops the split).
func splitPartner(f *Fit, ac bool) int {
	r := f.Result
	sw := sameWayOf(r)
	if sw == nil || len(r.SameWay) != 1 {
		return -1
	}
	c, rc := *f, *r
	rc.SameWay = nil
	c.Result = &rc
	if !swapFree(&c, ac) {
		return -1
	}
	return sw.Lines[1]
}

// indexedLine is a further line of a fit and its index there.
type indexedLine struct {
	j int
	swapLine
}

// further is the usable further lines of f (no pair's), in f's order.
func further(f *Fit, ac bool) []indexedLine {
	r := f.Result
	inPair := map[int]bool{}
	for _, p := range r.Pairs {
		inPair[p.Lines[0]], inPair[p.Lines[1]] = true, true
	}
	var out []indexedLine
	for j := 1; j < len(r.Sources); j++ {
		if m := swapLineOf(&r.Sources[j], ac); m.ok && !inPair[j] {
			out = append(out, indexedLine{j, m})
		}
	}
	return out
}

// swapPick is the further line of g to become its conductor 1, that of a
// (its nearest group on the route's track) continuing it; -1 for none.
// The lead changed between two parallel lines where g has a further line
// m on a's conductor 1 track (carries), a a further line n on g's
// conductor 1 track likewise, and the two traverses' cross-sections agree
// better so: each group's lines parallel to a's conductor 1 are placed
// across it (aside) and by height, g's moved across to put its conductor
// 1 at n's place, and each of g's lines is matched with the nearest of
// a's not yet taken, at most continuityReach counted for a line matched
// with none; the sum is smaller moved than not (m, over continuityReach
// from g's conductor 1, lies within it of the mirror place of n). Side by
// side at one traverse, lines' places are known to millimetres, where
// carried from one traverse to another 60 m on, a line 1.8 A strong at
// 1.3 m depth (azimuth and dip sigmas about 0.6 and 0.45 degrees) may
// pass 1 m aside: taken by the carried distance alone, conductor 1 moved
// onto the cable midway at seed 7 of the Sallow Holt survey at a tenth of
// its currents (a false rise of 0.63 A). The whole cross-section, not the
// one line m, decides where a third line runs beside the two (a service
// 3 m on the far side of the feeder, where m may lie where the service
// did at a; the heights part them).
func swapPick(g, a *Fit, lg, la swapLine, ac bool) int {
	return swapPickOf(lg, la, further(g, ac), further(a, ac), ac)
}

// swapPickOf is swapPick given the further lines mg of g and na of a.
func swapPickOf(lg, la swapLine, mg, na []indexedLine, ac bool) int {
	if len(mg) == 0 || len(na) == 0 {
		return -1
	}
	u := la.plan
	type place struct{ x, z float64 }
	var pa, pg []place
	// places sets pa and pg, once a pair of lines is to be compared
	// (most pairs of groups have none).
	places := func() {
		if pa != nil {
			return
		}
		pa, pg = []place{{0, la.point[2]}}, []place{{0, lg.point[2]}}
		for _, n := range na {
			if n.parallelTo(la) {
				pa = append(pa, place{n.aside(la, u), n.point[2]})
			}
		}
		for _, m := range mg {
			if m.parallelTo(la) {
				pg = append(pg, place{m.aside(lg, u), m.point[2]})
			}
		}
	}
	// misfit sums the distances of g's lines, g's conductor 1 put at s
	// across a's, from the nearest of a's lines not yet taken.
	misfit := func(s float64) float64 {
		taken := make([]bool, len(pa))
		sum := 0.0
		for _, p := range pg {
			bi, bd := -1, continuityReach
			for i, q := range pa {
				if d := math.Hypot(p.x+s-q.x, p.z-q.z); !taken[i] && d < bd {
					bi, bd = i, d
				}
			}
			if bi >= 0 {
				taken[bi] = true
			}
			sum += bd
		}
		return sum
	}
	pick, least := -1, math.NaN()
	for _, m := range mg {
		if !m.carries(la, lg) {
			continue
		}
		xm := m.aside(lg, u)
		for _, n := range na {
			if !n.carries(lg, la) {
				continue
			}
			xn := n.aside(la, u)
			if math.Abs(xm+xn) > continuityReach {
				continue
			}
			// n within continuityReach of a's conductor 1 in the
			// cross-section (across and in height, as misfit measures)
			// is on its track as well: lg continues n, not la, only
			// where the exchanged places match within half the two
			// lines' spacing d at a (lg moved onto n's place lies
			// within d/2 of it, so beyond d/2 of la's, and m within
			// d/2 of la's). Two cables 1.5 m apart across and 0.3 m
			// in depth, each the stronger along half the route, were
			// never exchanged while n had to lie beyond the reach:
			// conductor 1 jumped cables with a false 9.6 A rise and
			// both cables were said to end (found in review).
			if d := math.Hypot(xn, n.point[2]-la.point[2]); d <= continuityReach &&
				!(math.Abs(lg.point[2]-n.point[2]) < d/2 && math.Hypot(xm+xn, m.point[2]-la.point[2]) < d/2) {
				continue
			}
			if pa == nil {
				places()
				least = misfit(0)
			}
			if f := misfit(xn); f < least {
				pick, least = m.j, f
			}
		}
	}
	return pick
}

// leadBySwap keeps conductor 1 on one of two parallel lines where the
// other becomes the stronger (see above), replacing such a fit's Result
// by a copy with the chosen line first. fits is changed in place: the
// caller passes its own copy.
func leadBySwap(fits []Fit, ac bool) {
	n := len(fits)
	if n < 3 {
		return
	}
	leads := make([]swapLine, n)
	cent := make([][3]float64, n)
	var used []int
	for i := range fits {
		f := &fits[i]
		r := f.Result
		if r == nil || len(r.Sources) == 0 || f.Dipole || f.Problem == nil || len(f.Problem.Points) == 0 ||
			!(r.Status.Converged() || r.Status == inverse.Stalled) {
			continue
		}
		if leads[i] = swapLineOf(&r.Sources[0], ac); leads[i].ok {
			cent[i] = centroid(f.Problem.Points)
			used = append(used, i)
		}
	}
	if len(used) < 3 {
		return
	}
	// A split conductor 1 is exchanged with its other share only where
	// most groups resolve the two lines: cables 0.7-0.9 m apart are a
	// split at every traverse but the one at the change, and there the
	// split's sum, with the change on it, is the lead (the exchange put
	// each cable's pieces on further conductors said to end, and lost
	// the change: regression review rg17b).
	splits := 0
	for _, i := range used {
		if splitPartner(&fits[i], ac) >= 0 {
			splits++
		}
	}
	splitsResolved := 2*splits < len(used)
	// The tracks: conductor 1 lines joined where they agree in plan and
	// one lies on the other carried on (onTrackOf).
	root := make([]int, n)
	for i := range root {
		root[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for root[i] != i {
			root[i] = root[root[i]]
			i = root[i]
		}
		return i
	}
	// Not where the lead changed between two lines side by side that
	// both run on (swapPick either way): the two groups are kept apart,
	// and the pairs joined nearest first, none that would put two groups
	// kept apart on one track. Lines of cables under continuityReach apart
	// lie on each other's track: joined, all groups made one track and
	// none was exchanged (two cables 1.5 m apart, found in review), and a
	// group between them (a fit taking the two as one line, 0.5 m from
	// each, where the current of one changes) joined both tracks.
	type pairing struct {
		a, b int
		d    float64
	}
	var joins []pairing
	apart := map[int][]int{}
	more := make([][]indexedLine, n)
	for _, i := range used {
		more[i] = further(&fits[i], ac)
	}
	for x, a := range used {
		for _, b := range used[x+1:] {
			la, lb := leads[a], leads[b]
			if !planAgree(la.plan, lb.plan) || !lb.onTrackOf(la) && !la.onTrackOf(lb) {
				continue
			}
			if swapPickOf(lb, la, more[b], more[a], ac) >= 0 || swapPickOf(la, lb, more[a], more[b], ac) >= 0 {
				apart[a], apart[b] = append(apart[a], b), append(apart[b], a)
				continue
			}
			d := math.Min(pointToLine(lb.point, la.point, la.dir3)+lb.drift(la), pointToLine(la.point, lb.point, lb.dir3)+la.drift(lb))
			joins = append(joins, pairing{a, b, d})
		}
	}
	if len(apart) > 0 {
		sort.SliceStable(joins, func(x, y int) bool { return joins[x].d < joins[y].d })
	}
	// kept lists each track's groups kept apart from some other, by root.
	kept := map[int][]int{}
	for g := range apart {
		kept[g] = []int{g}
	}
	for _, j := range joins {
		ra, rb := find(j.a), find(j.b)
		if ra == rb {
			continue
		}
		clash := false
		for _, g := range kept[ra] {
			for _, h := range apart[g] {
				if find(h) == rb {
					clash = true
				}
			}
		}
		if clash {
			continue
		}
		root[ra] = rb
		if len(kept[ra]) > 0 {
			kept[rb] = append(kept[rb], kept[ra]...)
			delete(kept, ra)
		}
	}
	type track struct {
		groups int
		peak   float64
		first  int
	}
	tracks := map[int]*track{}
	for _, i := range used {
		k := find(i)
		t := tracks[k]
		if t == nil {
			t = &track{first: i}
			tracks[k] = t
		}
		t.groups++
		t.peak = math.Max(t.peak, leads[i].cur)
	}
	if len(tracks) < 2 {
		return
	}
	keys := make([]int, 0, len(tracks))
	for k := range tracks {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(x, y int) bool {
		a, b := tracks[keys[x]], tracks[keys[y]]
		if a.groups != b.groups {
			return a.groups > b.groups
		}
		if a.peak != b.peak {
			return a.peak > b.peak
		}
		return a.first < b.first
	})
	main := keys[0]
	planDist := func(a, b int) float64 {
		return math.Hypot(cent[a][0]-cent[b][0], cent[a][1]-cent[b][1])
	}
	// apartFromMain reports whether group i's track holds a group kept
	// apart from one on the route's track.
	apartFromMain := func(i int) bool {
		for _, g := range kept[find(i)] {
			for _, h := range apart[g] {
				if find(h) == main {
					return true
				}
			}
		}
		return false
	}
	// Each open group's nearest group on the route's track, kept up to
	// date as groups join it.
	onMain := make([]bool, n)
	open := map[int]bool{}
	near := make([]int, n)
	nearD := make([]float64, n)
	for _, i := range used {
		if find(i) == main {
			onMain[i] = true
		} else {
			open[i] = true
			near[i], nearD[i] = -1, math.Inf(1)
		}
	}
	join := func(m int) {
		for _, g := range used {
			if open[g] {
				if d := planDist(g, m); d < nearD[g] || d == nearD[g] && m < near[g] {
					near[g], nearD[g] = m, d
				}
			}
		}
	}
	for _, i := range used {
		if onMain[i] {
			join(i)
		}
	}
	for len(open) > 0 {
		// The open group nearest one on the route's track, and that one.
		gi, best := -1, math.Inf(1)
		for _, g := range used {
			if open[g] && nearD[g] < best {
				gi, best = g, nearD[g]
			}
		}
		if gi < 0 {
			return
		}
		ai := near[gi]
		delete(open, gi)
		g, a := &fits[gi], &fits[ai]
		lg, la := leads[gi], leads[ai]
		if !lg.parallelTo(la) {
			continue
		}
		// The exchange, where g's lines may be reordered, or its
		// conductor 1 is split with the line the exchange takes (the
		// split's two shares are the two lines: splitPartner).
		swap := swapPick(g, a, lg, la, ac)
		if swap < 0 {
			// The nearest may not show it (a fit taking the two cables
			// as one line, where the current of one changes): the
			// nearest of those on the route's track whose exchange
			// with g kept their tracks apart.
			var by []int
			for _, h := range apart[gi] {
				if find(h) == main {
					by = append(by, h)
				}
			}
			sort.SliceStable(by, func(x, y int) bool { return planDist(gi, by[x]) < planDist(gi, by[y]) })
			for _, h := range by {
				if swap = swapPick(g, &fits[h], lg, leads[h], ac); swap >= 0 {
					break
				}
			}
		}
		pick := -1
		if swapFree(g, ac) || splitsResolved && swap > 0 && swap == splitPartner(g, ac) {
			pick = swap
		}
		if pick < 0 {
			// On the route's track where its neighbour carries it on,
			// though not joined to it at first (its own line, or the
			// neighbour's, too loosely fixed in direction to carry
			// far): it guides the groups beyond it. Not where its lead
			// changed and stays (its lines not to be reordered), nor
			// where its track was kept apart from the route's.
			if swap < 0 && !apartFromMain(gi) && pointToLine(lg.point, la.point, la.dir3) <= continuityReach {
				onMain[gi] = true
				join(gi)
			}
			continue
		}
		g.Result = withLead(g.Result, pick)
		leads[gi] = swapLineOf(&g.Result.Sources[0], ac)
		onMain[gi] = true
		join(gi)
	}
}
