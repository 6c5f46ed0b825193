package live

import (
	"fmt"
	"math"

	"undercurrent/inverse"
)

// minPairDeltaChi2 is the fall in chi-square, against the commissioning
// readings' noise, that freeing the spacing of a go-and-return pair held
// at its points' spacing must give for the fitted spacing to be kept
// (three more parameters: the likelihood-ratio test, Wilks 1938; 25 is
// beyond the 99.998th percentile of chi-square with 3 degrees of
// freedom). Below it the readings do not determine the spacing and the
// site file's is kept.
const minPairDeltaChi2 = 25

// commissionFromPoints fits every stated conductor's line to the
// readings of p from where the site file puts it: each line from its
// point, along its direction (else the first direction given, else
// start, the free fit's, else north). Two conductors each the other's
// nearest across their direction are a possible go-and-return pair: they
// are fitted at the spacing of their points (refitGroups), and their
// spacing is fitted too only when that lowers chi-square by more than
// minPairDeltaChi2. The lines come back in the order of stated, under
// their names, turned as commissionLines turns them.
func commissionFromPoints(p *inverse.Problem, stated []ConductorConfig, start [3]float64) ([]ConductorConfig, error) {
	n := len(stated)
	var ref [3]float64
	for _, s := range stated {
		if s.dirSet {
			ref = unit(s.Direction)
			break
		}
	}
	if ref == ([3]float64{}) {
		switch {
		case norm(start) > 0:
			ref = northward(unit(start))
		case n == 2:
			ref = cross([3]float64{0, 0, 1}, sub(stated[0].Point, stated[1].Point))
			if norm(ref) < 1e-9 {
				ref = [3]float64{0, 1, 0}
			}
			ref = northward(unit(ref))
		default:
			ref = [3]float64{0, 1, 0}
		}
	}
	dirs := make([][3]float64, n)
	for j, s := range stated {
		dirs[j] = ref
		if s.dirSet {
			dirs[j] = unit(s.Direction)
		}
	}
	across := func(j, k int) float64 { return norm(perp(sub(stated[k].Point, stated[j].Point), dirs[j])) }
	nearest := func(j int) int {
		best, bk := math.Inf(1), -1
		for k := range n {
			if k != j {
				if d := across(j, k); d < best {
					best, bk = d, k
				}
			}
		}
		return bk
	}
	// The groups: pairs (members[i] = {j, k}) and single lines ({j, -1}).
	var members [][2]int
	var held []fitGroup
	inPair := make([]bool, n)
	for j := range n {
		if k := nearest(j); k > j && nearest(k) == j {
			d := dirs[j]
			u := perp(sub(stated[j].Point, stated[k].Point), d)
			sp := norm(u)
			if sp < 1e-3 {
				return nil, fmt.Errorf("conductors %q and %q: points %.2g m apart across the conductors", stated[j].Name, stated[k].Name, sp)
			}
			members = append(members, [2]int{j, k})
			held = append(held, fitGroup{c: scale(add(stated[j].Point, stated[k].Point), 0.5), d: d, u: unit(u), sp: sp})
			inPair[j], inPair[k] = true, true
		}
	}
	for j := range n {
		if !inPair[j] {
			members = append(members, [2]int{j, -1})
			held = append(held, fitGroup{c: stated[j].Point, d: dirs[j]})
		}
	}
	// The unknowns: each group's geometry, each line's current and the
	// background, real and imaginary parts for AC; a fit with as many as
	// there are readings fits anything.
	unknowns := 3 + n
	for _, g := range held {
		unknowns += g.nparam()
	}
	if p.Phasors != nil {
		unknowns += 3 + n
	}
	if m := len(p.Points) * readingsPerSensor(p); m <= unknowns {
		// The readings' count does not grow with more windows: stop
		// until the site file is mended, as the free fit does (fit).
		return nil, &needsSiteError{fmt.Errorf("%d sensors give %d readings, too few for the %d unknowns of %d lines fitted from their points: "+
			"add sensors, or hold the conductors where they run with model = \"fixed\" (kind = \"segment\" for finite bars)", len(p.Points), m, unknowns, n)}
	}
	// split returns groups with pair i (of groups) as two single lines.
	split := func(groups []fitGroup, i int) []fitGroup {
		g := groups[i]
		out := append([]fitGroup(nil), groups[:i]...)
		out = append(out, fitGroup{c: add(g.c, scale(g.u, g.sp/2)), d: g.d}, fitGroup{c: add(g.c, scale(g.u, -g.sp/2)), d: g.d})
		return append(out, groups[i+1:]...)
	}
	fitHeld, rssHeld, err := refitGroups(p, held, nil)
	if err != nil {
		return nil, err
	}
	final := fitHeld
	splitPair := make([]bool, len(held))
	sigma2 := p.Sigma * p.Sigma
	for i, g := range held {
		if g.sp == 0 {
			continue
		}
		fs, rss, err := refitGroups(p, split(held, i), nil)
		if err != nil {
			continue
		}
		s2 := sigma2
		if !(s2 > 0) {
			// The noise from the split fit's residuals.
			m := len(p.Points) * 3
			if p.Phasors != nil {
				m *= 2
			}
			if dof := m - 4*len(fs); dof > 0 {
				s2 = rss / float64(dof)
			}
		}
		if s2 > 0 && (rssHeld-rss)/s2 > minPairDeltaChi2 {
			splitPair[i] = true
		}
	}
	groups := held
	for i := len(held) - 1; i >= 0; i-- {
		if splitPair[i] {
			groups = split(groups, i)
		}
	}
	if len(groups) != len(held) {
		if final, _, err = refitGroups(p, groups, nil); err != nil {
			return nil, err
		}
	}
	// Back to the stated conductors.
	out := make([]ConductorConfig, n)
	gi := 0
	for i, m := range members {
		j, k := m[0], m[1]
		g := final[gi]
		switch {
		case k < 0:
			out[j] = ConductorConfig{Point: g.c, Direction: g.d}
		case splitPair[i]:
			out[j] = ConductorConfig{Point: g.c, Direction: g.d}
			gi++
			g = final[gi]
			out[k] = ConductorConfig{Point: g.c, Direction: g.d}
		default:
			out[j] = ConductorConfig{Point: add(g.c, scale(g.u, g.sp/2)), Direction: g.d, heldPair: i + 1}
			out[k] = ConductorConfig{Point: add(g.c, scale(g.u, -g.sp/2)), Direction: g.d, heldPair: i + 1}
		}
		gi++
	}
	// Names: lines started from the points can cross on the way (two
	// cores' lines swapped fit as well, their currents swapped), so each
	// takes the name of the point nearest it, by the least total squared
	// distance as in commissionLines.
	cost := make([][]float64, n)
	for k := range out {
		for j := range stated {
			v := perp(sub(stated[j].Point, out[k].Point), unit(out[k].Direction))
			cost[k] = append(cost[k], dot(v, v))
		}
	}
	named := make([]ConductorConfig, n)
	for k, j := range leastCostAssignment(cost) {
		named[j] = out[k]
	}
	out = named
	// Directions: the stated one, else the first stated, else the first
	// line's turned north.
	want := ref
	if !anyDir(stated) {
		want = northward(out[0].Direction)
	}
	for j := range out {
		out[j].Name, out[j].Kind = stated[j].Name, "line"
		w := want
		if stated[j].dirSet {
			w = stated[j].Direction
		}
		if dot(out[j].Direction, w) < 0 {
			out[j].Direction = scale(out[j].Direction, -1)
		}
	}
	return out, nil
}

func anyDir(stated []ConductorConfig) bool {
	for _, s := range stated {
		if s.dirSet {
			return true
		}
	}
	return false
}

// farFromPoints lists the commissioned conductors lying more than limit
// (m) across their line from the point the site file gives them, as
// "name d m".
func farFromPoints(conds, stated []ConductorConfig, limit float64) []string {
	var out []string
	for _, s := range stated {
		if !s.pointSet {
			continue
		}
		for _, c := range conds {
			if c.Name != s.Name || c.Kind == "segment" {
				continue
			}
			if d := norm(perp(sub(s.Point, c.Point), unit(c.Direction))); d > limit {
				out = append(out, fmt.Sprintf("%s %.2f m", c.Name, d))
			}
		}
	}
	return out
}
