package route

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Placed is a station on the route.
type Placed struct {
	// whitened is set while the station's sigmas are taken back from the
	// fit's widening (Station.Widening) for the route's own analysis
	// (unwidenPoor), and fitSigma holds the fit's own current, depth and
	// phase sigmas, which rewidenPoor gives back before Build returns;
	// routeWhite is kept set on such a station after that (RouteSigma).
	whitened, routeWhite bool
	fitSigma             [3]float64
	// Station is the caller's station with Dir made a unit vector
	// pointing along increasing chainage; Current (or Phase for AC) is
	// adjusted when that flipped Dir.
	Station
	// Chainage is the distance along the route from its first station, m.
	Chainage float64
	// Index is the station's index in the slice given to Build.
	Index int
	// Flipped is true when Dir was reversed to follow the route.
	Flipped bool
	// strained is true when the station's misfit is many times what the
	// route's soundest fits show against their measured noise, and shift
	// is the shift of current its misfit beyond theirs can make, A, for a
	// strained station and one beside it; zero otherwise (strain.go).
	strained bool
	shift    float64
	// misfit is RMS over Noise, and misfitRef the route's reference for
	// it, when strained.
	misfit, misfitRef float64
	// endShare is the share of the line's field the station reads before
	// a named end, and endShareSigma its sigma; zero when it reads the
	// whole (endshare.go).
	endShare, endShareSigma float64
	// also names the repeats of the station combined into this copy of
	// it for the steps (repeats.go), and alsoKeys gives their keys (those
	// that have one); nil otherwise.
	also, alsoKeys []string
	// phaseOut leaves the station's phase out of its repeats' combined
	// phase (a later walk whose phases are not the first walk's plus one
	// offset: walkphase.go).
	phaseOut bool
	// FirstWalkCurrent and FirstWalkCurrentSigma are, when the route was
	// walked more than once at currents that differ by one ratio or one
	// change per walk (Route.FirstWalk), the station's current brought to
	// the first walk's level and its sigma, with the ratio's or change's
	// sigma carried, A, as the steps take it (walks.go scaleWalks); zero
	// when Route.FirstWalk is empty.
	FirstWalkCurrent, FirstWalkCurrentSigma float64
	// FirstWalkRouteSigma is FirstWalkCurrent's sigma as the route's
	// steps take it: from RouteSigma rather than the fit's own sigma,
	// which FirstWalkCurrentSigma carries (zero when Route.FirstWalk is
	// empty).
	FirstWalkRouteSigma float64
	// Bend is set when the station's fitted dip departs from the slope
	// of its neighbours' depths (bend.go): DipSigma, DepthSigma and
	// CurrentSigma are then widened, and Bend keeps the fit's own.
	Bend *BendDoubt
	// Model is set when the station's fit misses its readings by more
	// than ModelChi2 (modelerr.go), StepNear when a current step lies near
	// it: CurrentSigma and DepthSigma (and for Model DipSigma) are then
	// widened, and each keeps the sigmas before it.
	Model    *ModelDoubt
	StepNear *StepNear
}

// Route is the result of Build.
type Route struct {
	// Stations are in route order, chainage increasing.
	Stations []Placed
	// Length is the chainage of the last station, m.
	Length float64
	// Findings are sorted by chainage, the most pressing first at equal
	// chainage.
	Findings []Finding
	// ModelScatter is the between-station scatter of current beyond the
	// stations' own sigmas (A, one standard deviation; zero when there is
	// none or too few stations to tell): the error of the straight-line
	// model (bends, a second conductor the model lacks) that no single fit
	// sees. The step and anomaly tests add it to every station's sigma;
	// see scatter.go.
	ModelScatter float64
	// ScatterWidening is the factor by which ModelScatter was widened for
	// the uncertainty of its own estimate on a short route (fewer than 16
	// usable stations; see scatter.go), 1 when it was not.
	ScatterWidening float64
	// SmallestStep is, when ModelScatter is not zero, about the smallest
	// change of current between two successive stations that the step
	// test reports at that scatter (A; see smallestStep): a loss smaller
	// than that is not ruled out by a route that reports none. Zero when
	// ModelScatter is zero.
	SmallestStep float64
	// FirstWalk, when the route was walked more than once and the
	// walks' currents differ by one ratio (or one change) per walk, or
	// by one change per walk on one side of a point (a step whose size
	// changed between the walks; KindWalksDiffer), names the first walk
	// ("day1.csv", "the first walk"): the steps take every walk's
	// currents at its level (see Placed.FirstWalkCurrent). Empty
	// otherwise.
	FirstWalk string
}

// Build orders stations along the route they trace, measures chainage and
// reports steps in current, shallow cover, poor fits and dipole-like
// anomalies (see the package documentation for the rules). It returns an
// error, naming the station, when there are no stations or a value is not
// finite or a sigma is negative. A station whose current is used (OK and
// not Dipole) with a CurrentSigma of zero is read as exact, to one part in
// a billion (see Station). It also returns an error, naming the field, for
// a setting that is NaN or infinite, or negative where only zero or more
// has a meaning (Settings). The stations slice is not modified.
func Build(stations []Station, set *Settings) (*Route, error) {
	if len(stations) == 0 {
		return nil, errors.New("route: no stations")
	}
	if err := set.check(); err != nil {
		return nil, err
	}
	for i := range stations {
		if err := check(&stations[i], i); err != nil {
			return nil, err
		}
	}
	order := chain(stations)
	bendOrder(stations, order, set)
	r := &Route{Stations: make([]Placed, len(order))}
	for k, idx := range order {
		r.Stations[k] = Placed{Station: stations[idx], Index: idx}
		r.Stations[k].CurrentSigma = floorSigma(&stations[idx])
	}
	measure(r.Stations)
	// Repeats of a station (a route walked again) in the order of the
	// walks, so that chainage runs from the first walk's, and the
	// chainage measured through the sets of repeats, one point a set,
	// so that repeats add no length (repeats.go).
	walkOrder(r.Stations, repeatGap(r.Stations))
	gap := repeatGap(r.Stations)
	orient(r.Stations, gap)
	cornerChainage(r.Stations, set)
	// A set of repeats within a bend back at one chainage (repeats.go).
	alignRepeats(r.Stations, repeatGap(r.Stations))
	r.Length = r.Stations[len(r.Stations)-1].Chainage

	unwidenPoor(r.Stations, set)
	markStrained(r.Stations, set)
	ends := conductorEnds(r.Stations, set)
	// Repeats of a station (a route walked again) are one station for
	// the steps and the scatter (repeats.go), each walk's currents first
	// brought to the first walk's level when one ratio or one change per
	// walk accounts for their disagreement (walks.go).
	wf, sc := walksDiffer(r.Stations, repeatGap(r.Stations))
	pool := r.Stations
	if sc != nil {
		pool = scaleWalks(r.Stations, sc, false)
		r.FirstWalk = walkRef(sc.ref, sc.named)
		for k := range r.Stations {
			r.Stations[k].FirstWalkCurrent, r.Stations[k].FirstWalkCurrentSigma = pool[k].Current, pool[k].CurrentSigma
			r.Stations[k].FirstWalkRouteSigma = pool[k].CurrentSigma
		}
	}
	// AC: each later walk's phases referred to the first walk's by one
	// offset (walkphase.go).
	pf, pool := walkPhases(pool, repeatGap(r.Stations))
	r.Findings = append(r.Findings, pf...)
	one := combineRepeats(pool, repeatGap(r.Stations))
	// Stations before a named end read its share of the field (endshare.go).
	one = endCorrected(one)
	r.Findings = append(r.Findings, wf...)
	r.Findings = append(r.Findings, walksDepthDiffer(r.Stations, repeatGap(r.Stations))...)
	r.ModelScatter, r.ScatterWidening = modelScatter(outsideBends(one, set), set)
	st, notes := steps(one, set, r.ModelScatter, r.ScatterWidening)
	r.SmallestStep = smallestStep(one, set, r.ModelScatter)
	// AC: changes of phase sized as phasors (phasorstep.go).
	st = phasorSteps(one, st, set)
	addRepeats(st, one)
	if sc != nil && sc.split != nil {
		splitSteps(st, sc)
	}
	if sc != nil && sc.alike {
		ownLevelSteps(st, sc, r.Stations)
	}
	r.Findings = append(r.Findings, st...)
	r.Findings = append(r.Findings, ends...)
	// The steps and ends are sized: every station gives its fit's own
	// sigmas again, as the caller's fits give them, to the findings below
	// (cover, poor fits, stretches not searched) and in Stations.
	rewidenPoor(r.Stations)
	if sc != nil {
		pub := scaleWalks(r.Stations, sc, true)
		for k := range r.Stations {
			r.Stations[k].FirstWalkCurrentSigma = pub[k].CurrentSigma
		}
	}
	// A station whose fitted dip departs from the slope of its
	// neighbours' depths: a bend nearby tilts its line (bend.go).
	r.Findings = append(r.Findings, bendDoubt(r.Stations, set)...)
	r.Findings = append(r.Findings, cover(r.Stations, set)...)
	// The error a fit's misfit shows, and a step's field nearby, which
	// the fit's sigmas do not count (modelerr.go). After the cover check:
	// a poor fit's cover finding says its cover may be the misfit's, and
	// its shallow-cover verdict keeps the fit's own sigma (widened, a
	// 1.09 m cover over a conductor 1.3 m down, beside a stronger
	// crossing, read "may be less than the 0.90 m minimum").
	modelDoubt(r.Stations)
	stepDoubt(r.Stations, st)
	for _, f := range quality(r.Stations, set, st) {
		if f.Kind == KindPoorFit && len(f.Keys) == 1 && notes[f.Keys[0]] != "" {
			f.Message += notes[f.Keys[0]]
		}
		r.Findings = append(r.Findings, f)
	}
	r.Findings = append(r.Findings, weakSources(r.Stations, set)...)
	r.Findings = append(r.Findings, unsearched(r.Stations, r.Findings)...)
	r.Findings = mergeBends(r.Findings, r.Stations)
	sort.SliceStable(r.Findings, func(i, j int) bool {
		a, b := &r.Findings[i], &r.Findings[j]
		if a.From != b.From {
			return a.From < b.From
		}
		return a.Severity.rank() < b.Severity.rank()
	})
	return r, nil
}

// check rejects values that would make the route meaningless.
func check(s *Station, i int) error {
	name := fmt.Sprintf("station %d", i)
	if s.Key != "" {
		name = fmt.Sprintf("station %d (%q)", i, s.Key)
	}
	for a, v := range s.Point {
		if !finite(v) {
			return fmt.Errorf("route: %s: point[%d] is %v", name, a, v)
		}
	}
	for a, v := range s.Dir {
		if !finite(v) {
			return fmt.Errorf("route: %s: dir[%d] is %v", name, a, v)
		}
	}
	if !s.OK {
		return nil
	}
	vals := []struct {
		n     string
		v     float64
		sigma bool
	}{
		{"current", s.Current, false}, {"current sigma", s.CurrentSigma, true},
		{"depth", s.Depth, false}, {"depth sigma", s.DepthSigma, true},
		{"phase", s.Phase, false}, {"phase sigma", s.PhaseSigma, true},
		{"noise", s.Noise, true}, {"sigmas per misfit", s.SigmasPerMisfit, true},
		{"widening", s.Widening, true},
	}
	for _, q := range vals {
		if !finite(q.v) {
			return fmt.Errorf("route: %s: %s is %v", name, q.n, q.v)
		}
		if q.sigma && q.v < 0 {
			return fmt.Errorf("route: %s: %s is negative (%g)", name, q.n, q.v)
		}
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// horiz is the horizontal (east, north) distance between a and b.
func horiz(a, b [3]float64) float64 { return math.Hypot(b[0]-a[0], b[1]-a[1]) }

// chain returns the station indices in route order: nearest-neighbour
// chaining from the station farthest from the centroid, improved by 2-opt,
// in the direction that best agrees with the input order.
//
// Only the stations whose fit succeeded (OK) are chained when there are two
// or more of them: a failed station's point is the centroid of its
// readings, which may lie far from the conductor (a traverse past which the
// cable has drifted, 25 m from it), and chained with the others it started
// the route, put chainage 0 on the failed traverse and, through orient,
// turned the next station's current (15 A read as -15 A beside +15 A: a
// false "current rises by 28 A"; found in review). The failed stations are
// then put in (see insertFailed).
func chain(st []Station) []int {
	var good, failed []int
	for i := range st {
		if st[i].OK {
			good = append(good, i)
		} else {
			failed = append(failed, i)
		}
	}
	if len(failed) == 0 || len(good) < 2 {
		all := make([]int, len(st))
		for i := range all {
			all[i] = i
		}
		return chainOf(st, all)
	}
	return insertFailed(st, chainOf(st, good), failed)
}

// chainOf returns the indices idx (into st, in increasing order) in route
// order (see chain).
func chainOf(st []Station, idx []int) []int {
	n := len(idx)
	order := make([]int, n)
	if n <= 2 {
		copy(order, idx)
		return order
	}
	var ce, cn float64
	for _, i := range idx {
		ce += st[i].Point[0]
		cn += st[i].Point[1]
	}
	ce /= float64(n)
	cn /= float64(n)
	start, far := idx[0], -1.0
	for _, i := range idx {
		if d := math.Hypot(st[i].Point[0]-ce, st[i].Point[1]-cn); d > far {
			start, far = i, d
		}
	}
	used := make(map[int]bool, n)
	order[0], used[start] = start, true
	for k := 1; k < n; k++ {
		last := st[order[k-1]].Point
		best, bd := -1, math.Inf(1)
		for _, i := range idx {
			if used[i] {
				continue
			}
			if d := horiz(last, st[i].Point); d < bd {
				best, bd = i, d
			}
		}
		order[k], used[best] = best, true
	}
	twoOpt(st, order)

	// Orient the chain to agree with the caller's order.
	var corr, im float64
	for _, i := range idx {
		im += float64(i)
	}
	im /= float64(n)
	mid := float64(n-1) / 2
	for k, i := range order {
		corr += (float64(k) - mid) * (float64(i) - im)
	}
	if corr < 0 {
		for i, j := 0, n-1; i < j; i, j = i+1, j-1 {
			order[i], order[j] = order[j], order[i]
		}
	}
	return order
}

// insertFailed puts the failed stations (indices into st) into order, the
// chained sound ones. When the chain follows the caller's order (its
// indices increase), each goes where its index falls, so a failed last
// traverse stays last; otherwise each goes where it lengthens the path
// least.
func insertFailed(st []Station, order, failed []int) []int {
	if sort.IntsAreSorted(order) {
		all := append(append([]int(nil), order...), failed...)
		sort.Ints(all)
		return all
	}
	out := append([]int(nil), order...)
	for _, f := range failed {
		p := st[f].Point
		best, cost := 0, horiz(p, st[out[0]].Point)
		if c := horiz(st[out[len(out)-1]].Point, p); c < cost {
			best, cost = len(out), c
		}
		for k := 1; k < len(out); k++ {
			a, b := st[out[k-1]].Point, st[out[k]].Point
			if c := horiz(a, p) + horiz(p, b) - horiz(a, b); c < cost {
				best, cost = k, c
			}
		}
		out = append(out, 0)
		copy(out[best+1:], out[best:])
		out[best] = f
	}
	return out
}

// measure sets the chainage of ps (in route order): the distance along the
// chords between successive sound (OK) stations' points, from the first
// station. A failed station's point is the centroid of its readings, off
// the conductor by as much as the conductor is off the traverse's middle,
// so it takes no part in the chords: it takes the chainage of its point
// projected on the chord between the sound stations either side of it, or
// on the first or last chord produced beyond the route's ends. With fewer
// than two sound stations all are chained point to point.
func measure(ps []Placed) {
	var g []int
	for k := range ps {
		if ps[k].OK {
			g = append(g, k)
		}
	}
	if len(g) < 2 || len(g) == len(ps) {
		ps[0].Chainage = 0
		for k := 1; k < len(ps); k++ {
			ps[k].Chainage = ps[k-1].Chainage + horiz(ps[k-1].Point, ps[k].Point)
		}
		return
	}
	ps[g[0]].Chainage = 0
	for j := 1; j < len(g); j++ {
		ps[g[j]].Chainage = ps[g[j-1]].Chainage + horiz(ps[g[j-1]].Point, ps[g[j]].Point)
	}
	// along is the distance of p along the chord from a to b, measured
	// from a.
	along := func(a, b *Placed, p [3]float64) float64 {
		l := horiz(a.Point, b.Point)
		if l == 0 {
			return 0
		}
		return ((p[0]-a.Point[0])*(b.Point[0]-a.Point[0]) + (p[1]-a.Point[1])*(b.Point[1]-a.Point[1])) / l
	}
	// Before the first sound station, backwards so each is at or before
	// the next.
	a, b := &ps[g[0]], &ps[g[1]]
	for k := g[0] - 1; k >= 0; k-- {
		ps[k].Chainage = math.Min(math.Min(along(a, b, ps[k].Point), 0), ps[k+1].Chainage)
	}
	// Between sound stations and past the last one.
	for j := 0; j < len(g); j++ {
		a := &ps[g[j]]
		end := len(ps)
		if j+1 < len(g) {
			end = g[j+1]
		}
		for k := g[j] + 1; k < end; k++ {
			var c float64
			if j+1 < len(g) {
				b := &ps[g[j+1]]
				c = a.Chainage + math.Min(math.Max(along(a, b, ps[k].Point), 0), b.Chainage-a.Chainage)
			} else {
				z := &ps[g[j-1]]
				c = a.Chainage + math.Max(along(z, a, ps[k].Point)-horiz(z.Point, a.Point), 0)
			}
			ps[k].Chainage = math.Max(c, ps[k-1].Chainage)
		}
	}
	for k := len(ps) - 1; k >= 0; k-- {
		ps[k].Chainage -= ps[0].Chainage
	}
}

// twoOpt improves an open path in place by reversing runs of stations while
// that shortens it.
func twoOpt(st []Station, order []int) {
	n := len(order)
	d := func(a, b int) float64 {
		if a < 0 || b >= n {
			return 0 // open path: no edge beyond the ends
		}
		return horiz(st[order[a]].Point, st[order[b]].Point)
	}
	const eps = 1e-12
	for pass := 0; pass < 4*n; pass++ {
		improved := false
		for i := 0; i < n-1; i++ {
			for j := i + 1; j < n; j++ {
				before := d(i-1, i) + d(j, j+1)
				after := d(i-1, j) + d(i, j+1)
				if i == 0 && j == n-1 {
					continue // reversing the whole path changes nothing
				}
				if after < before-eps*(1+before) {
					for a, b := i, j; a < b; a, b = a+1, b-1 {
						order[a], order[b] = order[b], order[a]
					}
					improved = true
				}
			}
		}
		if !improved {
			return
		}
	}
}

// orient makes every station's Dir a unit vector along increasing chainage,
// adjusting the sign of the current (or the phase for AC) to match.
// The direction of the route at a station is taken from the stations
// either side of it whose fits succeeded (see neighbours), passing over
// its repeats, the stations less than gap from it along the route
// (repeats.go).
func orient(ps []Placed, gap float64) {
	n := len(ps)
	for k := range ps {
		var t [2]float64
		if n > 1 {
			a, b := neighbours(ps, k, gap)
			t = [2]float64{ps[b].Point[0] - ps[a].Point[0], ps[b].Point[1] - ps[a].Point[1]}
		}
		d := ps[k].Dir
		norm := math.Sqrt(d[0]*d[0] + d[1]*d[1] + d[2]*d[2])
		if norm == 0 {
			tn := math.Hypot(t[0], t[1])
			if tn == 0 {
				continue
			}
			ps[k].Dir = [3]float64{t[0] / tn, t[1] / tn, 0}
			continue
		}
		d = [3]float64{d[0] / norm, d[1] / norm, d[2] / norm}
		if d[0]*t[0]+d[1]*t[1] < 0 {
			d = [3]float64{-d[0], -d[1], -d[2]}
			ps[k].Flipped = true
			if ps[k].AC {
				ps[k].Phase = wrapDeg(ps[k].Phase + 180)
			} else {
				ps[k].Current = -ps[k].Current
			}
		}
		ps[k].Dir = d
	}
}

// neighbours returns the stations of ps (in route order) whose points give
// the route's direction at station k: the sound (OK) stations nearest it
// either side, k itself at an end of the route when it is sound, and the
// first or last two sound stations for a failed station beyond them. A
// failed station's point is the centroid of its readings and says nothing
// of where the conductor runs (see chain). With fewer than two sound
// stations they are k's immediate neighbours. Stations less than gap
// from k along the route (alongApart: its repeats, a walk of the same
// traverse again, however far across the route within repeatAcrossM)
// are passed over: their points lie millimetres from k's, and the tangent
// to them is noise (see repeats.go); a route of repeats alone keeps them.
func neighbours(ps []Placed, k int, gap float64) (a, b int) {
	n := len(ps)
	var g []int
	for i := range ps {
		if ps[i].OK && (i == k || alongApart(&ps[i], &ps[k]) >= gap) {
			g = append(g, i)
		}
	}
	if gap > 0 && len(g) < 2 {
		return neighbours(ps, k, 0)
	}
	if len(g) < 2 {
		return max(k-1, 0), min(k+1, n-1)
	}
	a, b = -1, -1
	for _, i := range g {
		if i < k {
			a = i
		}
		if i > k && b < 0 {
			b = i
		}
	}
	if ps[k].OK {
		if a < 0 {
			a = k
		}
		if b < 0 {
			b = k
		}
		return a, b
	}
	switch {
	case a < 0:
		return g[0], g[1]
	case b < 0:
		return g[len(g)-2], g[len(g)-1]
	}
	return a, b
}

// wrapDeg wraps an angle into (-180, 180].
func wrapDeg(a float64) float64 {
	a = math.Mod(a, 360)
	if a <= -180 {
		a += 360
	} else if a > 180 {
		a -= 360
	}
	return a
}

// label names a station for messages: its key, or its input index.
func label(p *Placed) string {
	if p.Key != "" {
		return p.Key + alsoText(p.also)
	}
	return fmt.Sprintf("#%d", p.Index) + alsoText(p.also)
}

// at names a station with its chainage, or by name alone when it is the
// only station (a chainage of zero would say nothing).
func at(p *Placed, single bool) string {
	if single {
		return label(p)
	}
	return fmt.Sprintf("%s (chainage %.1f m)", label(p), p.Chainage)
}

// addRepeats records in each finding of fs, found on the stations one
// (repeats combined, combineRepeats), the repeats combined into the
// stations it names (Finding.Repeats): a step "between T11 with
// d2.csv:T11 and T12 with d2.csv:T12" listed only T11 and T12 as its
// groups, leaving out the repeats whose currents it used (found in
// review).
func addRepeats(fs []Finding, one []Placed) {
	also := map[string][]string{}
	for i := range one {
		if p := &one[i]; p.Key != "" && len(p.alsoKeys) > 0 {
			also[p.Key] = p.alsoKeys
		}
	}
	if len(also) == 0 {
		return
	}
	for i := range fs {
		f := &fs[i]
		for _, k := range f.Keys {
			if a := also[k]; a != nil {
				if f.Repeats == nil {
					f.Repeats = map[string][]string{}
				}
				f.Repeats[k] = append([]string(nil), a...)
			}
		}
	}
}

// splitSteps adds to each current step across the point where the walks
// start to differ (walkSplit) each later walk's own step there: the steps
// take the first walk's level, the later walk's currents on the side
// where they differ less its change, so its own levels are the step's
// with the change put back, and its size's sigma the step's and the
// change's in quadrature.
func splitSteps(st []Finding, sc *walkScaling) {
	for i := range st {
		f := &st[i]
		if f.Kind != KindCurrentStep || !(f.From < sc.split.at && sc.split.at < f.To) {
			continue
		}
		size, before, after, ok := stepValues(f)
		if !ok {
			continue
		}
		var own []string
		for _, wl := range sc.walks {
			d, ok := sc.split.delta[wl.name]
			if wl == sc.ref || !ok {
				continue
			}
			b, a := before.Value, after.Value
			if sc.split.after {
				a += d[0]
			} else {
				b += d[0]
			}
			verb := "a fall"
			if math.Abs(a) > math.Abs(b) {
				verb = "a rise"
			}
			own = append(own, fmt.Sprintf("in %s from %.4g A to %.4g A, %s of %s A", walkRef(wl, sc.named), b, a, verb, PlusMinus(math.Abs(math.Abs(b)-math.Abs(a)), math.Hypot(size.Sigma, d[1]))))
			f.Values = append(f.Values, Value{Name: "step " + wl.name, Value: math.Abs(b) - math.Abs(a), Sigma: math.Hypot(size.Sigma, d[1]), Unit: "A"})
		}
		sort.Strings(own)
		if len(own) > 0 {
			f.Message += fmt.Sprintf("; this is the step at the level of %s, the walks differing on one side of it (walks-differ): %s", walkRef(sc.ref, sc.named), joinAnd(own))
		}
	}
}

// ownLevelSteps adds to each current step between stations of one later
// walk, where an added change and a ratio fit the repeats alike
// (walkScaling.alike), its size at that walk's own level and as a share
// of its current there, on which the two agree, and the two sizes it
// has at the first walk's level. The steps take the walk's currents less
// its change, so its own levels are the step's with the change put back;
// divided by the ratio instead, the step would be its own size over the
// ratio. Both days of a 2 A main losing 0.35 A (17.5%) at 185 m, the
// second at 0.8 of the first's supply, gave "levels either side 1.997 A
// and 1.721 A" (13.9%) and no share at all (found in review).
func ownLevelSteps(st []Finding, sc *walkScaling, ps []Placed) {
	walkOf := map[string]string{}
	for i := range ps {
		walkOf[ps[i].Key] = ps[i].Walk
	}
	for i := range st {
		f := &st[i]
		if f.Kind != KindCurrentStep || len(f.Keys) < 2 {
			continue
		}
		name, one := walkOf[f.Keys[0]], true
		for _, k := range f.Keys {
			if walkOf[k] != name {
				one = false
			}
		}
		wl := sc.walks[name]
		if !one || name == "" || wl == nil || wl == sc.ref || wl.sets == 0 || !(wl.ratio > 0) {
			continue
		}
		size, before, after, ok := stepValues(f)
		if !ok {
			continue
		}
		b, a := before.Value+wl.delta, after.Value+wl.delta
		if !(math.Abs(b) > 0) {
			continue
		}
		own := math.Abs(a) - math.Abs(b)
		share := 100 * own / math.Abs(b)
		shareSigma := 100 * math.Hypot(size.Sigma/b, own*math.Hypot(before.Sigma, wl.deltaSigma)/(b*b))
		verb := "a fall"
		if own > 0 {
			verb = "a rise"
		}
		f.Message += fmt.Sprintf("; in %s's own currents, at its own time, from %.4g A to %.4g A, %s of %s A, %s%% of its current before it (the repeats of the walks read one level, where an added change and a ratio fit them alike: walks-differ; at the level of %s the step is %.3g A taken as a change, %.3g A as a ratio)",
			walkRef(wl, sc.named), b, a, verb, PlusMinus(math.Abs(own), size.Sigma), PlusMinus(math.Abs(share), math.Abs(shareSigma)), walkRef(sc.ref, sc.named), math.Abs(size.Value), math.Abs(own)/wl.ratio)
		f.Values = append(f.Values,
			Value{Name: "step " + wl.name, Value: own, Sigma: size.Sigma, Unit: "A"},
			Value{Name: "share " + wl.name, Value: share, Sigma: math.Abs(shareSigma), Unit: "%"})
	}
}

// findingValue returns f's value of that name.
// stepValues gives a current-step finding's step and its currents before
// and after; ok is false when any of the three is missing.
func stepValues(f *Finding) (size, before, after Value, ok bool) {
	size, okS := findingValue(f, "step")
	before, okB := findingValue(f, "current before")
	after, okA := findingValue(f, "current after")
	return size, before, after, okS && okB && okA
}

func findingValue(f *Finding, name string) (Value, bool) {
	for _, v := range f.Values {
		if v.Name == name {
			return v, true
		}
	}
	return Value{}, false
}
