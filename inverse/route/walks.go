package route

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/gonum/stat/distuv"
)

// Walks that disagree.
//
// A route walked again puts repeats of its stations at one chainage
// (repeats.go). Repeats see the same conductor at the same place, so a
// loss along the route or the straight-line model's error there is the
// same in each; what differs is the reading noise, which the fits'
// sigmas carry, and the current itself if it changed between the walks
// (a load on an AC circuit, a cathodic-protection rectifier reset or
// re-tapped, a tracer turned up). Combined, such repeats only widened
// the combined station's sigma by their scatter: single-line walked at
// 25 A and at 24 A a day later gave no finding at all (found in review),
// where the crew needs to know that each walk's currents hold for its
// own time only, and that a step between stations of different walks
// may be the change of current with time rather than along the route.
//
// walksDiffer tests the repeats' currents against their sigmas: the
// chi-square of each set of repeats about its inverse-variance mean,
// summed over the sets (degrees of freedom: the stations less one per
// set; each station's sigma that of its current with the shift its
// misfit can make, strain.go, added in quadrature; for AC the RMS current
// only, not the phase). Above the chi-square distribution's 1-walkAlpha
// quantile it
// reports a caution with each walk's level over the repeated stations
// and each walk's change from the first walk, with its sigma. A walk is
// the log a station's readings come from (Station.Walk); with none
// given, the repeats of each set in the caller's order (time order)
// are the first walk, the second and so on. When one change of level
// per walk takes the chi-square back within its quantile the finding
// says the current changed between the walks; otherwise that the
// repeats disagree beyond their sigmas and not by one change between
// walks (the current varied during them, or a repeat's fit is off).
// When one change or one ratio per walk accounts for them, the steps take
// each later walk brought to the first walk's level by it (scaleWalks).
// When neither does but one change per walk on one side of a point
// between two sets of repeats does (the walks agree before a step and
// differ after it, or the other way: the step's size changed between
// the walks, splitChange), the finding is a warning giving each walk's
// step there, and the steps take each later walk's stations on that side
// less its change, so the first walk's step.

// walkAlpha is the chance that repeats of a steady current, their sigmas
// right, are reported as disagreeing: one run in ten thousand. At one in
// a thousand, one of 160 simulated steady re-walks was reported (chi-square
// 16.6 on 3 degrees of freedom, TestWalksDifferSteady), and a caution that
// sends a crew to ask about the current should not come from noise. A
// change between the walks is then found on half the runs at about
// sqrt(q - n) sigmas of the change, q the quantile on n degrees of
// freedom (3.8 for one station walked twice, 4.8 for seven, 5.7 for 21;
// the quantiles from gonum's distuv.ChiSquared); 25 A and 24 A on
// single-line is some 270 sigmas.
const walkAlpha = 1e-4

// walkTime is when a walk of a route began: its earliest station's
// Start (zero when not known) and the smallest Index of its stations.
type walkTime struct {
	start time.Time
	first int
}

// see takes station p of the walk into its start and first index.
func (w *walkTime) see(p *Placed) {
	w.first = min(w.first, p.Index)
	if !p.Start.IsZero() && (w.start.IsZero() || p.Start.Before(w.start)) {
		w.start = p.Start
	}
}

// before orders walks by their start times when both are known and
// differ, otherwise by their first stations' index.
func (w walkTime) before(o walkTime) bool {
	if !w.start.IsZero() && !o.start.IsZero() && !w.start.Equal(o.start) {
		return w.start.Before(o.start)
	}
	return w.first < o.first
}

// walkLevel is one walk's stations among the repeats.
type walkLevel struct {
	name string
	walkTime
	// level and sigma are the mean of its repeated stations' currents,
	// each set weighed alike for every walk (see walksDiffer), A; delta and deltaSigma its change from the
	// first walk over the sets both hold, A; sets counts those sets.
	level, sigma      float64
	delta, deltaSigma float64
	sets              int
	// ratio and ratioSigma are its currents' ratio to the first walk's
	// over the sets both hold (1 for the first walk).
	ratio, ratioSigma float64
}

// repeatSets returns the sets of repeats of ps (route order) as
// combineRepeats finds them: runs of successive stations less than gap
// apart along the route from the run's first, their usable stations,
// two or more.
func repeatSets(ps []Placed, gap float64) [][]*Placed {
	if gap <= 0 {
		return nil
	}
	var sets [][]*Placed
	repeatRuns(ps, gap, func(_, _ int, use []*Placed) {
		if len(use) >= 2 {
			sets = append(sets, use)
		}
	})
	return sets
}

// walkScaling is how the walks' currents are brought to the first walk's
// level when one change, or one ratio, per walk accounts for their
// repeats (walksDiffer): the steps then take each station's current at
// that level (scaleWalks). Before, the repeats were combined as they
// read, their sigmas widened by their disagreement: a second day's walk
// at 10% more current turned a 0.301 +/- 0.005 A loss placed at 252.4 +/-
// 1.2 m into 0.31 +/- 0.11 A placed nowhere, with a false "both stations
// read part of the change", though the ratio had been measured to 0.05%
// (found in review).
type walkScaling struct {
	ref   *walkLevel
	named bool
	// proportional is true when each walk's currents are divided by its
	// ratio, false when its change is taken off.
	proportional bool
	// alike is true when an added change and a ratio per walk fit the
	// repeats alike (they read one level) and bring some station of a
	// later walk to currents further apart than its sigma: the change is
	// taken, and scaleWalks with spread adds the two's difference to the
	// sigma of each station it brings (modelSpread).
	alike bool
	walks map[string]*walkLevel
	// walkOf names the walk of each station of the sets of repeats by
	// its Index (the only stations whose walk is known when the walks are
	// not named).
	walkOf map[int]string
	// split, when not nil, is a change that starts at one chainage: only
	// the stations on its side of it are brought (scaleWalks).
	split *walkSplit
}

// walkSplit is a change between the walks that starts at one chainage
// (splitChange): the walks agree on one side of it and differ by one
// change per walk on the other.
type walkSplit struct {
	// k is the first set of repeats past the point (sets in route
	// order); at is the chainage halfway between set k-1 and set k.
	k  int
	at float64
	// after is true when the walks differ from set k on, false when they
	// differ before it.
	after bool
	// rest is the chi-square left with the changes taken out.
	rest float64
	// delta is each walk's change from the first walk on the side where
	// they differ, and its sigma, A.
	delta map[string][2]float64
	// levels are each walk's levels before and after the point and
	// their sigmas (before, sigma, after, sigma), A; sizes each walk's
	// fall across it (before less after) and its sigma, A.
	levels map[string][4]float64
	sizes  map[string][2]float64
}

// differs tells whether a station at chainage c is on the side where the
// walks differ.
func (s *walkSplit) differs(c float64) bool {
	if s.after {
		return c >= s.at
	}
	return c < s.at
}

// splitChange tries each point between two successive sets of repeats,
// with the walks differing after it or before it, each later walk by
// one change from the first walk there, and returns the one that leaves
// the least chi-square when that is within the 1-walkAlpha quantile of
// restDOF degrees of freedom (the same as one change per walk across the
// whole route), or nil. Each side needs two sets held by the first walk
// and another: one set alone past a point is as well one repeat's fit
// off (near a bend, the straight-line model's error differing between
// the walks), which the change of that one set would absorb, and a
// false warning would follow.
func splitChange(sets [][]*Placed, perSet []map[string]struct{ v, w float64 }, order []*walkLevel, ref *walkLevel, walkOf func(*Placed, int) string, sig func(*Placed) float64, restDOF int) *walkSplit {
	if len(sets) < 2 || restDOF <= 0 {
		return nil
	}
	var best *walkSplit
	for k := 1; k < len(sets); k++ {
		for _, after := range []bool{true, false} {
			differs := func(i int) bool { return (i >= k) == after }
			delta := map[string][2]float64{}
			ok := false
			for _, wl := range order[1:] {
				var dw, dwv float64
				for i, m := range perSet {
					if !differs(i) {
						continue
					}
					e, oke := m[wl.name]
					r, okr := m[ref.name]
					if !oke || !okr {
						continue
					}
					w := 1 / (1/e.w + 1/r.w)
					dw += w
					dwv += w * (e.v - r.v)
				}
				if dw > 0 {
					delta[wl.name] = [2]float64{dwv / dw, math.Sqrt(1 / dw)}
					ok = true
				}
			}
			if !ok || !bothSides(perSet, k, ref.name, order[1:]) {
				continue
			}
			var rest float64
			for i, s := range sets {
				d := func(p *Placed, j int) float64 {
					if !differs(i) {
						return 0
					}
					return delta[walkOf(p, j)][0]
				}
				var sw, swv float64
				for j, p := range s {
					w := 1 / (sig(p) * sig(p))
					sw += w
					swv += w * (p.Current - d(p, j))
				}
				m := swv / sw
				for j, p := range s {
					x := p.Current - d(p, j) - m
					rest += x * x / (sig(p) * sig(p))
				}
			}
			if best == nil || rest < best.rest {
				best = &walkSplit{k: k, at: (sets[k-1][0].Chainage + sets[k][0].Chainage) / 2, after: after, rest: rest, delta: delta}
			}
		}
	}
	if best == nil || best.rest > (distuv.ChiSquared{K: float64(restDOF)}).Quantile(1-walkAlpha) {
		return nil
	}
	// Each walk's levels either side, each set weighed alike for every
	// walk (as walksDiffer's levels), and its fall across the point.
	common := make([]float64, len(perSet))
	for i, m := range perSet {
		var v float64
		for _, e := range m {
			v += 1 / e.w
		}
		common[i] = 1 / v
	}
	best.levels = map[string][4]float64{}
	best.sizes = map[string][2]float64{}
	for _, wl := range order {
		var lv [4]float64
		okSide := [2]bool{}
		for side := 0; side < 2; side++ {
			var sc, scv, scc float64
			for i, m := range perSet {
				if (i >= best.k) != (side == 1) {
					continue
				}
				e, ok := m[wl.name]
				if !ok {
					continue
				}
				sc += common[i]
				scv += common[i] * e.v
				scc += common[i] * common[i] / e.w
			}
			if sc > 0 {
				lv[2*side], lv[2*side+1] = scv/sc, math.Sqrt(scc)/sc
				okSide[side] = true
			}
		}
		best.levels[wl.name] = lv
		if okSide[0] && okSide[1] {
			best.sizes[wl.name] = [2]float64{lv[0] - lv[2], math.Hypot(lv[1], lv[3])}
		}
	}
	return best
}

// bothSides tells whether, on each side of set k, two sets of repeats or
// more hold the first walk (ref) and another.
func bothSides(perSet []map[string]struct{ v, w float64 }, k int, ref string, others []*walkLevel) bool {
	var before, after int
	for i, m := range perSet {
		if _, ok := m[ref]; !ok {
			continue
		}
		held := false
		for _, wl := range others {
			if _, ok := m[wl.name]; ok {
				held = true
			}
		}
		if !held {
			continue
		}
		if i < k {
			before++
		} else {
			after++
		}
	}
	return before >= 2 && after >= 2
}

// message is the walks-differ finding's text for a change that starts
// at one chainage.
func (s *walkSplit) message(sets [][]*Placed, order []*walkLevel, ref *walkLevel, named bool, what, test string) string {
	a, b := sets[s.k-1][0], sets[s.k][0]
	var sizes, levels, changes []string
	for _, wl := range order {
		if sz, ok := s.sizes[wl.name]; ok {
			sizes = append(sizes, fmt.Sprintf("%s A in %s", PlusMinus(sz[0], sz[1]), walkName(wl, named)))
		}
		lv := s.levels[wl.name]
		levels = append(levels, fmt.Sprintf("%s A and %s A in %s", PlusMinus(lv[0], lv[1]), PlusMinus(lv[2], lv[3]), walkRef(wl, named)))
	}
	for _, wl := range order[1:] {
		if d, ok := s.delta[wl.name]; ok {
			changes = append(changes, fmt.Sprintf("%s A from %s to %s", PlusMinus(d[0], d[1]), walkRef(ref, named), walkRef(wl, named)))
		}
	}
	side := fmt.Sprintf("agree to their sigmas up to %s (chainage %.1f m) and differ from %s (%.1f m) on", label(a), a.Chainage, label(b), b.Chainage)
	where := "from " + label(b) + " on"
	if !s.after {
		side = fmt.Sprintf("differ up to %s (chainage %.1f m) and agree to their sigmas from %s (%.1f m) on", label(a), a.Chainage, label(b), b.Chainage)
		where = "up to " + label(a)
	}
	return fmt.Sprintf("the change of current between %s and %s differs between the walks: the current falls there by %s (each walk's levels either side over %s: %s), where their sigmas allow no difference (%s; %.3g left with the change taken out %s): the walks %s, by %s; a loss (or a source) there that changed between the walks, not one change of the current along the whole route: each walk's step holds for its own time only; the steps take the first walk's (the currents of the other walks %s less their change, at the level of %s)",
		label(a), label(b), joinAnd(sizes), what, joinAnd(levels), test, s.rest, where, side, joinAnd(changes), where, walkRef(ref, named))
}

// walksDiffer returns the finding on repeats that disagree (see above),
// or nil, and how to bring the walks to the first walk's level when one
// change or one ratio per walk accounts for them (nil otherwise).
func walksDiffer(ps []Placed, gap float64) ([]Finding, *walkScaling) {
	sets := repeatSets(ps, gap)
	if len(sets) == 0 {
		return nil, nil
	}
	sig := func(p *Placed) float64 { return math.Hypot(p.CurrentSigma, p.shift) }
	named := true
	for _, s := range sets {
		for _, p := range s {
			if !(sig(p) > 0) {
				return nil, nil
			}
			if p.Walk == "" {
				named = false
			}
		}
	}
	// walkOf names the walk of the station at rank k of its set (by
	// Index).
	walkOf := func(p *Placed, k int) string {
		if named {
			return p.Walk
		}
		return ordinalWalk(k)
	}
	// Each set's stations by walk: the inverse-variance mean of a walk's
	// stations in the set (two of one walk in one set are one), and the
	// chi-square of the set about its mean.
	type entry = struct{ v, w float64 }
	perSet := make([]map[string]entry, len(sets))
	walks := map[string]*walkLevel{}
	var chi2 float64
	dof := 0
	worst, worstChi2 := -1, 0.0 // the set that adds most to chi2
	for i, s := range sets {
		sort.SliceStable(s, func(a, b int) bool { return s[a].Index < s[b].Index })
		var sw, swv float64
		for _, p := range s {
			w := 1 / (sig(p) * sig(p))
			sw += w
			swv += w * p.Current
		}
		m := swv / sw
		var c float64
		for _, p := range s {
			c += (p.Current - m) * (p.Current - m) / (sig(p) * sig(p))
		}
		chi2 += c
		if c > worstChi2 {
			worst, worstChi2 = i, c
		}
		dof += len(s) - 1
		perSet[i] = map[string]entry{}
		for k, p := range s {
			name := walkOf(p, k)
			e := perSet[i][name]
			w := 1 / (sig(p) * sig(p))
			e.v = (e.v*e.w + p.Current*w) / (e.w + w)
			e.w += w
			perSet[i][name] = e
			wl := walks[name]
			if wl == nil {
				wl = &walkLevel{name: name, walkTime: walkTime{first: p.Index}}
				walks[name] = wl
			}
			wl.see(p)
		}
	}
	if dof == 0 || chi2 <= (distuv.ChiSquared{K: float64(dof)}).Quantile(1-walkAlpha) {
		return nil, nil
	}
	order := make([]*walkLevel, 0, len(walks))
	for _, wl := range walks {
		order = append(order, wl)
	}
	sort.Slice(order, func(a, b int) bool { return order[a].before(order[b].walkTime) })
	ref := order[0]
	// Each walk's level over the sets it holds, and its change from the
	// first walk over the sets both hold. The levels weigh each set alike
	// for every walk, by one over the sum of its walks' variances: the
	// change weighs a set by one over the sum of the two walks', so where
	// two walks hold every set the levels printed differ by the change
	// printed. Each walk's own inverse-variance mean weighed the sets
	// otherwise for each walk, and "24.7621 A in d1.csv and 27.2886 A in
	// d2.csv, a change of 2.4907 ± 0.0066 A" did not add up (27.2886 -
	// 24.7621 = 2.5265 A, 5.5 sigma off; found in review).
	common := make([]float64, len(perSet))
	for i, m := range perSet {
		var v float64
		for _, e := range m {
			v += 1 / e.w
		}
		common[i] = 1 / v
	}
	for _, wl := range order {
		var sc, scv, scc, dw, dwv float64
		for i, m := range perSet {
			e, ok := m[wl.name]
			if !ok {
				continue
			}
			c := common[i]
			sc += c
			scv += c * e.v
			scc += c * c / e.w
			if wl == ref {
				continue
			}
			r, ok := m[ref.name]
			if !ok {
				continue
			}
			w := 1 / (1/e.w + 1/r.w)
			dw += w
			dwv += w * (e.v - r.v)
			wl.sets++
		}
		wl.level, wl.sigma = scv/sc, math.Sqrt(scc)/sc
		if dw > 0 {
			wl.delta, wl.deltaSigma = dwv/dw, math.Sqrt(1/dw)
		}
	}
	// The chi-square left with each walk's change taken out: about each
	// set's mean of its walks' currents less their changes.
	var rest float64
	fitted := 0
	for _, wl := range order[1:] {
		if wl.sets > 0 {
			fitted++
		}
	}
	for _, s := range sets {
		var sw, swv float64
		for k, p := range s {
			w := 1 / (sig(p) * sig(p))
			sw += w
			swv += w * (p.Current - walks[walkOf(p, k)].delta)
		}
		m := swv / sw
		for k, p := range s {
			d := p.Current - walks[walkOf(p, k)].delta - m
			rest += d * d / (sig(p) * sig(p))
		}
	}
	restDOF := dof - fitted
	steady := fitted > 0 && (restDOF <= 0 || rest <= (distuv.ChiSquared{K: float64(restDOF)}).Quantile(1-walkAlpha))
	// Else one change in proportion per walk: a rectifier re-tapped or a
	// tracer turned up scales every current along the route, losses
	// included, so stations of different currents change by different
	// amounts (3.0 to 3.3 A at one re-walked station, 2.2 to 2.42 A at
	// another, reported as repeats that disagree and not by one change;
	// found in review).
	//
	// Where one change fits, the ratio is fitted too: repeats that all
	// lie at one level of current (no step between them, the usual case
	// where two crews' walks meet) fit an added change and a ratio alike,
	// and the two bring a later walk's stations away from that level to
	// different currents. Both days of a 2 A main losing 0.35 A at 185 m,
	// the second at 0.8 of the first's supply and meeting it upstream of
	// the loss, gave the far end as 1.7244 +/- 0.0057 A at the first
	// day's level (the change's), where the ratio's 1.65 A is the truth,
	// 13 sigma away (found in review).
	proportional, alike := false, false
	if fitted > 0 {
		restQ := fitRatios(sets, perSet, order, ref, walks, walkOf, sig)
		fits := restDOF <= 0 || restQ <= (distuv.ChiSquared{K: float64(restDOF)}).Quantile(1-walkAlpha)
		if steady {
			alike = fits
		} else {
			proportional = fits
		}
	}
	// Where the two fit alike, the stations of a later walk (named: every
	// station of it is brought) whose currents the two bring apart by
	// more than their own sigma: spread gives the largest, at far.
	var spread float64
	var far *Placed
	if alike && named {
		for i := range ps {
			p := &ps[i]
			wl := walks[p.Walk]
			if !p.usable() || wl == nil || wl == ref || wl.sets == 0 {
				continue
			}
			d := modelSpread(p.Current, wl)
			if d > math.Hypot(p.CurrentSigma, wl.deltaSigma) && d > spread {
				spread, far = d, p
			}
		}
	}
	alike = far != nil

	// Else a change that starts at one chainage: the walks agree on one
	// side of a point and differ by one change per walk on the other, the
	// signature of a step along the route (a loss) whose size changed
	// between the walks. A loss of 0.4 A one day and 1.0 A the next was
	// reported as one step of 0.65 +/- 0.15 A, a size neither walk had,
	// and the disagreement as information blaming the straight-line
	// model's error (found in review).
	var split *walkSplit
	if !steady && !proportional && fitted > 0 {
		split = splitChange(sets, perSet, order, ref, walkOf, sig, restDOF)
	}
	if split != nil {
		// Each walk's change is then its change where the walks differ.
		for _, wl := range order[1:] {
			wl.delta, wl.deltaSigma = split.delta[wl.name][0], split.delta[wl.name][1]
		}
	}

	// The finding: over the repeated stations, at the set nearest the
	// middle of their span.
	var keys []string
	for _, s := range sets {
		for _, p := range s {
			keys = append(keys, p.Key)
		}
	}
	from, to := sets[0][0].Chainage, sets[len(sets)-1][0].Chainage
	mid := sets[0][0]
	for _, s := range sets {
		if math.Abs(s[0].Chainage-(from+to)/2) < math.Abs(mid.Chainage-(from+to)/2) {
			mid = s[0]
		}
	}
	f := Finding{Kind: KindWalksDiffer, Severity: SeverityCaution, From: from, To: to, Position: mid.Point, Keys: keys}
	var levels, changes []string
	for _, wl := range order {
		levels = append(levels, fmt.Sprintf("%s A in %s", PlusMinus(wl.level, wl.sigma), walkName(wl, named)))
		f.Values = append(f.Values, Value{Name: "level " + wl.name, Value: wl.level, Sigma: wl.sigma, Unit: "A"})
	}
	for _, wl := range order[1:] {
		if wl.sets == 0 {
			continue
		}
		c := fmt.Sprintf("%s A from %s to %s", PlusMinus(wl.delta, wl.deltaSigma), walkRef(ref, named), walkRef(wl, named))
		if ref.level != 0 {
			c += fmt.Sprintf(" (%+.3g%%)", 100*wl.delta/math.Abs(ref.level))
		}
		if wl.sets < len(sets) {
			c += fmt.Sprintf(" over the %d %s both walked", wl.sets, plural(wl.sets, "station", "stations"))
		}
		changes = append(changes, c)
		f.Values = append(f.Values, Value{Name: "change " + wl.name, Value: wl.delta, Sigma: wl.deltaSigma, Unit: "A"})
	}
	f.Values = append(f.Values, Value{Name: "chi-square", Value: chi2}, Value{Name: "degrees of freedom", Value: float64(dof)})
	what := fmt.Sprintf("the %d %s walked more than once", len(sets), plural(len(sets), "station", "stations"))
	test := fmt.Sprintf("chi-square %.3g on %d %s", chi2, dof, plural(dof, "degree of freedom", "degrees of freedom"))
	change := "a change of " + strings.Join(changes, ", ")
	if len(changes) == 0 {
		change = "no walk repeating another's stations"
	}
	if steady {
		f.Message = fmt.Sprintf("the current changed between the walks: %s read %s, %s, where their sigmas allow no difference (%s): each walk's currents hold for its own time only; for the steps %s (its sigma carried), before the repeats are combined",
			what, joinAnd(levels), change, test, broughtText(order, ref, named, false))
		if alike {
			var factors []string
			for _, wl := range order[1:] {
				if wl.sets == 0 {
					continue
				}
				factors = append(factors, fmt.Sprintf("%s from %s to %s", PlusMinus(wl.ratio, wl.ratioSigma), walkRef(ref, named), walkRef(wl, named)))
				f.Values = append(f.Values, Value{Name: "ratio " + wl.name, Value: wl.ratio, Sigma: wl.ratioSigma})
			}
			fw := walks[far.Walk]
			f.Message += fmt.Sprintf("; but the repeats read one level of current within their sigmas (no step between them), where an added change and a ratio (%s) fit them alike, and the two bring the currents of %s away from that level to different currents at the level of %s, by up to %.2g A (at %s: %.4g A less its change, %.4g A divided by its ratio): the currents brought across carry that difference in their sigmas, the summary's among them, and a step between stations of one later walk is also given at that walk's own level and as a share of the current there, on which the two agree",
				joinAnd(factors), walkRef(fw, named), walkRef(ref, named), spread, label(far), far.Current-fw.delta, far.Current/fw.ratio)
			f.Values = append(f.Values, Value{Name: "change or ratio spread", Value: spread, Unit: "A"})
		}
	} else if proportional {
		var factors []string
		for _, wl := range order[1:] {
			if wl.sets == 0 {
				continue
			}
			factors = append(factors, fmt.Sprintf("%s from %s to %s (%+.3g%%)", PlusMinus(wl.ratio, wl.ratioSigma), walkRef(ref, named), walkRef(wl, named), 100*(wl.ratio-1)))
			f.Values = append(f.Values, Value{Name: "ratio " + wl.name, Value: wl.ratio, Sigma: wl.ratioSigma})
		}
		f.Message = fmt.Sprintf("the current changed between the walks, in proportion along the route (a source turned up or down: every current scaled, a loss's too): %s read %s, %s, the currents scaled by %s, where their sigmas allow no difference (%s): each walk's currents hold for its own time only; for the steps %s (its sigma carried), before the repeats are combined",
			what, joinAnd(levels), change, joinAnd(factors), test, broughtText(order, ref, named, true))
	} else if split != nil {
		f.Message = split.message(sets, order, ref, named, what, test)
		f.Severity = SeverityWarning
		f.From, f.To = sets[split.k-1][0].Chainage, sets[split.k][0].Chainage
		f.Position = sets[split.k][0].Point
		for _, wl := range order {
			sz := split.sizes[wl.name]
			f.Values = append(f.Values, Value{Name: "step " + wl.name, Value: sz[0], Sigma: sz[1], Unit: "A"})
		}
	} else {
		// Not one change per walk: most often the straight-line model's
		// error differing between the walks near a bend or a change of
		// depth (bend.toml and wrenbeck-dive.toml walked twice: 176 of a
		// chi-square of 185 from one station 8 m before the bend, 20.13
		// A against 19.97 A, for a steady 20 A; found in regression
		// review), so information naming the station that disagrees
		// most, not a caution about the current.
		f.Severity = SeverityInfo
		var reads []string
		for _, p := range sets[worst] {
			reads = append(reads, fmt.Sprintf("%s %s A", label(p), PlusMinus(p.Current, sig(p))))
		}
		f.Message = fmt.Sprintf("repeats disagree beyond their sigmas, and not by one change of current between the walks (%s; %.3g left with each walk's change taken out): %s read %s, most apart at %s (chainage %.1f m; %.3g of the chi-square), which read %s; the straight-line model's error there may differ between the walks (a bend or a change of depth nearby), a repeat's fit may be off, or the current varied during the walks (a load that comes and goes, a rectifier cycling); the repeats are combined for the steps with their sigmas widened by their disagreement",
			test, rest, what, joinAnd(levels), label(sets[worst][0]), sets[worst][0].Chainage, worstChi2, joinAnd(reads))
	}
	if !steady && !proportional && split == nil {
		return []Finding{f}, nil
	}
	sc := &walkScaling{ref: ref, named: named, proportional: proportional, alike: alike, walks: walks, walkOf: map[int]string{}}
	sc.split = split
	for _, s := range sets {
		for k, p := range s {
			sc.walkOf[p.Index] = walkOf(p, k)
		}
	}
	return []Finding{f}, sc
}

// fitRatios fits each later walk of order its ratio to ref's currents
// over the sets both hold (ref's ratio 1), and returns the chi-square of
// the repeats left with each walk's currents divided by its ratio.
func fitRatios(sets [][]*Placed, perSet []map[string]struct{ v, w float64 }, order []*walkLevel, ref *walkLevel, walks map[string]*walkLevel, walkOf func(*Placed, int) string, sig func(*Placed) float64) float64 {
	ref.ratio = 1
	for _, wl := range order[1:] {
		var sw, swq float64
		for _, m := range perSet {
			e, ok := m[wl.name]
			r, okr := m[ref.name]
			if !ok || !okr || r.v == 0 {
				continue
			}
			q := e.v / r.v
			v := (1/e.w + q*q/r.w) / (r.v * r.v)
			sw += 1 / v
			swq += q / v
		}
		wl.ratio = 1
		if sw > 0 {
			wl.ratio, wl.ratioSigma = swq/sw, math.Sqrt(1/sw)
		}
	}
	var restQ float64
	for _, s := range sets {
		var sw, swv float64
		for k, p := range s {
			q := walks[walkOf(p, k)].ratio
			w := q * q / (sig(p) * sig(p))
			sw += w
			swv += w * p.Current / q
		}
		m := swv / sw
		for k, p := range s {
			q := walks[walkOf(p, k)].ratio
			d := (p.Current/q - m) * q / sig(p)
			restQ += d * d
		}
	}
	return restQ
}

// modelSpread is how far apart walk wl's current c is brought to the
// first walk's level by its change (c less it) and by its ratio (c
// divided by it): zero at the repeats' own level when both fit them,
// and growing with c's distance from it. Zero when the ratio is not a
// positive number.
func modelSpread(c float64, wl *walkLevel) float64 {
	if !(wl.ratio > 0) {
		return 0
	}
	return math.Abs(c - wl.delta - c/wl.ratio)
}

// broughtText says how the walks other than ref are brought to its level
// for the steps: "the currents of day2.csv are taken divided by its
// ratio, at the level of day1.csv".
func broughtText(order []*walkLevel, ref *walkLevel, named, proportional bool) string {
	var others []string
	for _, wl := range order[1:] {
		if wl.sets > 0 {
			others = append(others, walkRef(wl, named))
		}
	}
	how := "less its change"
	if proportional {
		how = "divided by its ratio"
	}
	if len(others) > 1 {
		how = "each " + how
	}
	return fmt.Sprintf("the currents of %s are taken %s, at the level of %s", joinAnd(others), how, walkRef(ref, named))
}

// scaleWalks returns a copy of ps with each station of a walk other than
// the first brought to the first walk's level (sc): its current divided
// by the walk's ratio, or less its change, and its sigma (and strain
// shift) widened by the ratio's or change's sigma, in quadrature. With
// walks named every station of the walk is brought (a step between a
// station of one walk and one of another is then a change along the
// route, not between the walks); without, only the repeats, whose walk
// is known by their rank. A walk that repeats none of the first walk's
// stations (its ratio unknown) is left as it reads. The ratio's error is
// common to a walk's stations and is added to each as its own, which
// overstates a step's sigma between two stations of one walk by a little
// (0.05% of the current for a ratio measured on 21 stations).
//
// With spread, where a change and a ratio fit the repeats alike
// (sc.alike), each station brought by the change has the two's
// difference (modelSpread) added to its sigma as well: the currents
// published at the first walk's level (Station.FirstWalkCurrentSigma,
// the summary's end currents). The steps take them without it (spread
// false): the difference is common to a walk's stations, as the ratio's
// error is, and added to each as its own it would shrink as their levels
// pool the stations; a step between stations of one later walk is given
// at that walk's own level instead (ownLevelSteps).
func scaleWalks(ps []Placed, sc *walkScaling, spread bool) []Placed {
	out := append([]Placed(nil), ps...)
	for i := range out {
		p := &out[i]
		name, ok := sc.walkOf[p.Index]
		if !ok && sc.named {
			name, ok = p.Walk, p.Walk != ""
		}
		wl := sc.walks[name]
		if !ok || wl == nil || wl == sc.ref || wl.sets == 0 {
			continue
		}
		if sc.proportional {
			q := wl.ratio
			if !(q > 0) {
				continue
			}
			rel := wl.ratioSigma / q
			p.Current /= q
			p.CurrentSigma = math.Hypot(p.CurrentSigma/q, p.Current*rel)
			p.shift /= q
		} else {
			if sc.split != nil && !sc.split.differs(p.Chainage) {
				continue
			}
			if spread && sc.alike {
				p.CurrentSigma = math.Hypot(p.CurrentSigma, modelSpread(p.Current, wl))
			}
			p.Current -= wl.delta
			p.CurrentSigma = math.Hypot(p.CurrentSigma, wl.deltaSigma)
		}
	}
	return out
}

// walkName names a walk for the message: the log and when it started
// ("day2.csv (from 2026-02-03 14:00 UTC)"), or "the second walk".
func walkName(wl *walkLevel, named bool) string {
	s := walkRef(wl, named)
	if !wl.start.IsZero() {
		s += " (from " + wl.start.UTC().Format("2006-01-02 15:04 UTC") + ")"
	}
	return s
}

// walkRef names a walk without its time: "day2.csv", "the second walk".
func walkRef(wl *walkLevel, named bool) string {
	if named {
		return wl.name
	}
	return "the " + wl.name
}

// ordinalWalk names the walk of rank k (from 0) within a set of repeats
// when the stations do not say which walk they come from.
func ordinalWalk(k int) string {
	names := []string{"first walk", "second walk", "third walk", "fourth walk", "fifth walk"}
	if k < len(names) {
		return names[k]
	}
	return fmt.Sprintf("walk %d", k+1)
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// joinAnd joins names as "a", "a and b", "a, b and c".
func joinAnd(names []string) string {
	if len(names) < 2 {
		return strings.Join(names, "")
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
}

// Repeats that disagree in depth.
//
// A conductor lies at one depth however often it is walked, and a
// station's repeats see it at the same place, so their depths below the
// depth reference differ only by their sigmas. Two crews whose sensors
// stand at different heights over the ground (a 0.25 m staff one day, a
// 0.30 m staff the next), given one sensor height for both, read the
// second day's cover 5 cm too deep: 1.3517 +/- 0.0053 m against
// 1.2967 +/- 0.0018 m at one station, 10 sigma apart, and nothing was
// said, where the currents of the same repeats were tested (found in
// review). walksDepthDiffer compares each later walk's depths with the
// first walk's over the stations both walked: the inverse-variance mean
// of the differences, beyond depthAlpha sigmas of it, is a caution
// naming the walks, the difference and the stations.

// depthSigmas is how many sigmas of the mean difference of depth between
// two walks' repeats make a caution: one walk pair in 370 of steady
// re-walks with right sigmas is reported.
const depthSigmas = 3

// walksDepthDiffer returns the finding on repeats whose depths differ
// between the walks (see above), or nil.
func walksDepthDiffer(ps []Placed, gap float64) []Finding {
	sets := repeatSets(ps, gap)
	if len(sets) == 0 {
		return nil
	}
	named := true
	for _, s := range sets {
		for _, p := range s {
			if p.Walk == "" {
				named = false
			}
		}
	}
	type entry struct {
		v, w float64
		ps   []*Placed
	}
	perSet := make([]map[string]*entry, len(sets))
	walks := map[string]*walkLevel{}
	for i, s := range sets {
		s = append([]*Placed(nil), s...)
		sort.SliceStable(s, func(a, b int) bool { return s[a].Index < s[b].Index })
		perSet[i] = map[string]*entry{}
		for k, p := range s {
			if !(p.DepthSigma > 0) {
				continue
			}
			name := ordinalWalk(k)
			if named {
				name = p.Walk
			}
			e := perSet[i][name]
			if e == nil {
				e = &entry{}
				perSet[i][name] = e
			}
			w := 1 / (p.DepthSigma * p.DepthSigma)
			e.v = (e.v*e.w + p.Depth*w) / (e.w + w)
			e.w += w
			e.ps = append(e.ps, p)
			wl := walks[name]
			if wl == nil {
				wl = &walkLevel{name: name, walkTime: walkTime{first: p.Index}}
				walks[name] = wl
			}
			wl.see(p)
		}
	}
	order := make([]*walkLevel, 0, len(walks))
	for _, wl := range walks {
		order = append(order, wl)
	}
	if len(order) < 2 {
		return nil
	}
	sort.Slice(order, func(a, b int) bool { return order[a].before(order[b].walkTime) })
	ref := order[0]
	var out []Finding
	for _, wl := range order[1:] {
		var dw, dwv float64
		var keys, pairs []string
		from, to := math.Inf(1), math.Inf(-1)
		n := 0
		for i, m := range perSet {
			e, r := m[wl.name], m[ref.name]
			if e == nil || r == nil {
				continue
			}
			w := 1 / (1/e.w + 1/r.w)
			dw += w
			dwv += w * (e.v - r.v)
			n++
			from, to = math.Min(from, sets[i][0].Chainage), math.Max(to, sets[i][0].Chainage)
			for _, p := range append(append([]*Placed(nil), r.ps...), e.ps...) {
				keys = append(keys, p.Key)
			}
			if len(pairs) < 3 {
				pairs = append(pairs, fmt.Sprintf("%s %s m and %s %s m at chainage %.1f m", label(r.ps[0]), PlusMinus(r.v, math.Sqrt(1/r.w)), label(e.ps[0]), PlusMinus(e.v, math.Sqrt(1/e.w)), sets[i][0].Chainage))
			}
		}
		if n == 0 {
			continue
		}
		d, sd := dwv/dw, math.Sqrt(1/dw)
		if math.Abs(d) <= depthSigmas*sd {
			continue
		}
		if n > len(pairs) {
			pairs = append(pairs, fmt.Sprintf("%d more", n-len(pairs)))
		}
		deeper := "deeper"
		if d < 0 {
			deeper = "shallower"
		}
		mid := sets[0][0]
		for _, s := range sets {
			if math.Abs(s[0].Chainage-(from+to)/2) < math.Abs(mid.Chainage-(from+to)/2) {
				mid = s[0]
			}
		}
		out = append(out, Finding{
			Kind: KindWalksDepthDiffer, Severity: SeverityCaution, From: from, To: to, Position: mid.Point, Keys: keys,
			Message: fmt.Sprintf("the depths of the stations walked more than once differ between the walks: %s reads the conductor %s m %s than %s over the %d %s both walked (%s), beyond %d sigmas; a conductor lies at one depth however often it is walked, so one walk's depths (and cover) are off: most often the sensors stood at another height over the ground on one walk (another staff, pole or cart) than the height given for both, which moves that walk's depths by the difference; a depth reference of one ground level for every walk, or each walk's own sensor height, puts them on one footing; or the ground was built up or dug between the walks. Until then take the shallower walk's cover, and confirm the depth before digging",
				walkRef(wl, named), PlusMinus(math.Abs(d), sd), deeper, walkRef(ref, named), n, plural(n, "station", "stations"), strings.Join(pairs, "; "), depthSigmas),
			Values: []Value{{Name: "depth change " + wl.name, Value: d, Sigma: sd, Unit: "m"}},
		})
	}
	return out
}
