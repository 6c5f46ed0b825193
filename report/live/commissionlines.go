package live

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"

	"undercurrent/inverse"
)

// commissionLines turns the lines fitted to the commissioning readings
// into the asset's conductors.
//
// Names. When the site file gives the conductors' points (roughly where
// each runs), each fitted line takes the name of the conductor whose point
// lies nearest it (the assignment with the least total squared distance,
// which a common offset of the points does not change). Without
// points the lines are named in the order the site file lists the
// conductors, from left to right looking along their common direction
// (west to east for conductors running north), shallower first where two
// lie one above the other; with none listed they are c1, c2, ... in that
// order.
//
// Directions. A line whose conductor gives a direction is turned to point
// along it; every other line is turned to point along the first
// conductor's direction (or, with no direction given at all, the first
// line's direction turned to point north, or east for a line running due
// east-west), so that currents of a go and its return are compared along
// one direction: a balanced pair reads I and -I, not I and I.
//
// Go-and-return pairs. Two opposite currents close together, against
// their distance from the sensors, give the field of a line dipole,
// B = mu0 I d / (2 pi r^2) (Biot-Savart for the two lines, expanded in
// d/r): the readings determine the pair's centre, direction, the axis
// through its two cores and the product I d, but not I and d apart
// (inverse.PairEstimate). The fitted lines of such a pair sit at an
// arbitrary spacing with currents to match, so they are not kept: the two
// cores are placed on the fitted axis either side of the fitted centre at
// the spacing of the site file's points, each on the side where the site
// file puts it. Their currents are then as right as that spacing (10% off
// in the spacing is 10% off in both currents), while their sum, the
// current that does not return through the pair, does not depend on it to
// first order. Without points such a pair is refused: neither core's
// current would mean anything.
func commissionLines(p *inverse.Problem, res *inverse.Result, stated []ConductorConfig) ([]ConductorConfig, error) {
	type line struct {
		point, dir [3]float64
		pair       int // index in res.Pairs, -1 for a resolved line
	}
	var lines []line
	for _, s := range res.Sources {
		if s.Kind == "line" {
			lines = append(lines, line{point: s.Point, dir: unit(s.Dir), pair: -1})
		}
	}
	if len(lines) == 0 {
		return nil, fmt.Errorf("the fit found no conductor")
	}
	for pi, pr := range res.Pairs {
		for _, l := range pr.Lines {
			if l >= 0 && l < len(lines) {
				lines[l].pair = pi
			}
		}
	}
	named := len(stated) == len(lines)
	withPoints := named && stated[0].pointSet
	if !withPoints {
		for _, pr := range res.Pairs {
			return nil, &needsSiteError{fmt.Errorf("the readings show a go-and-return pair (centre %.2f m east, %.2f m north, %.2f m up; current times spacing %.3g A m) "+
				"whose current and spacing they do not separate, so neither core's current can be found: give each [[asset.conductor]] its point "+
				"(where it runs, roughly) in the site file, from which the pair's spacing is taken", pr.Point[0], pr.Point[1], pr.Point[2], pr.Moment)}
		}
		if err := looseLines(p, res, len(lines)); err != nil {
			return nil, err
		}
	}

	// owner[k] is the stated conductor of line k.
	owner := make([]int, len(lines))
	for k := range owner {
		owner[k] = k
	}
	if withPoints {
		// The fitted line (a pair's line: the pair's centre line) each
		// conductor's point lies nearest, by the least total squared
		// distance: for lines of one direction that is the assignment
		// that best matches the points moved by any common offset (the
		// sum of squares differs between assignments only by the sum of
		// the points' dot products with their lines), so points drawn a
		// few spacings to one side keep their names; the least total
		// distance ties for any offset of a spacing or more.
		axis := func(k int) ([3]float64, [3]float64) {
			if pi := lines[k].pair; pi >= 0 {
				return res.Pairs[pi].Point, unit(res.Pairs[pi].Dir)
			}
			return lines[k].point, lines[k].dir
		}
		cost := make([][]float64, len(lines))
		for k := range lines {
			pt, d := axis(k)
			for j := range stated {
				v := perp(sub(stated[j].Point, pt), d)
				cost[k] = append(cost[k], dot(v, v))
			}
		}
		owner = leastCostAssignment(cost)
		// Place each unresolved pair's cores at the stated spacing.
		for pi, pr := range res.Pairs {
			a, b := pr.Lines[0], pr.Lines[1]
			d := unit(pr.Dir)
			sv := perp(sub(stated[owner[a]].Point, stated[owner[b]].Point), d)
			sp := norm(sv)
			if sp < 1e-3 {
				return nil, &needsSiteError{fmt.Errorf("conductors %q and %q are a go-and-return pair whose spacing the readings do not give, and their points in the site file are %.2g m apart across the pair: give each core's point (where it runs, roughly), the two at their spacing",
					stated[owner[a]].Name, stated[owner[b]].Name, sp)}
			}
			// The axis through the two cores is determined (it is the
			// direction of the line dipole's moment); the fitted lines
			// give it. Fall back on the site file's when they coincide.
			u := perp(sub(lines[a].point, lines[b].point), d)
			if norm(u) < 1e-9 {
				u = sv
			}
			u = unit(u)
			if dot(u, sv) < 0 {
				u = scale(u, -1)
			}
			// The fitted centre and axis went with the fitted spacing: the
			// field's next terms beyond the dipole's (relative size
			// (d/r)^2) were absorbed by moving them. Fit them again with
			// the spacing held, the other lines held where fitted.
			var others []inverse.Source
			for k, l := range lines {
				if k != a && k != b {
					others = append(others, inverse.Line{Point: l.point, Dir: l.dir})
				}
			}
			c, d, u, err := refitPair(p, others, pr.Point, d, u, sp)
			if err != nil {
				return nil, fmt.Errorf("conductors %q and %q (a go-and-return pair at the site file's spacing, %.3g m): %w", stated[owner[a]].Name, stated[owner[b]].Name, sp, err)
			}
			lines[a] = line{point: add(c, scale(u, sp/2)), dir: d, pair: pi}
			lines[b] = line{point: add(c, scale(u, -sp/2)), dir: d, pair: pi}
		}
	}

	// Directions: the stated one, or the first conductor's.
	byOwner := make([]int, len(lines)) // line of each stated conductor
	for k, j := range owner {
		byOwner[j] = k
	}
	var ref [3]float64
	for j := range stated {
		if j < len(byOwner) && stated[j].dirSet {
			ref = unit(stated[j].Direction)
			break
		}
	}
	if ref == ([3]float64{}) {
		ref = northward(lines[byOwner[0]].dir)
	}
	for k := range lines {
		want := ref
		if named && stated[owner[k]].dirSet {
			want = stated[owner[k]].Direction
		}
		if dot(lines[k].dir, want) < 0 {
			lines[k].dir = scale(lines[k].dir, -1)
		}
	}

	if !withPoints {
		// Left to right along ref, about the sensors' centroid.
		var c [3]float64
		for _, pt := range p.Points {
			c = add(c, scale(pt, 1/float64(len(p.Points))))
		}
		right := [3]float64{ref[1], -ref[0], 0}
		if norm(right) < 1e-9 {
			right = [3]float64{1, 0, 0}
		}
		right = unit(right)
		order := make([]int, len(lines))
		for k := range order {
			order[k] = k
		}
		sort.SliceStable(order, func(x, y int) bool {
			ox, oy := dot(sub(lines[order[x]].point, c), right), dot(sub(lines[order[y]].point, c), right)
			if math.Abs(ox-oy) > 1e-6 {
				return ox < oy
			}
			return lines[order[x]].point[2] > lines[order[y]].point[2]
		})
		for j, k := range order {
			owner[k] = j
		}
	}

	out := make([]ConductorConfig, len(lines))
	for k, l := range lines {
		name := fmt.Sprintf("c%d", owner[k]+1)
		if named {
			name = stated[owner[k]].Name
		}
		out[owner[k]] = ConductorConfig{Name: name, Kind: "line", Point: l.point, Direction: l.dir}
		if withPoints && l.pair >= 0 {
			out[owner[k]].heldPair = l.pair + 1
		}
	}
	return out, nil
}

// looseLines refuses, for good, two of the first n fitted lines of res
// lying closer together than to the nearest sensor whose spacing the
// readings do not fix: held at half or at twice their fitted spacing
// (centre, direction, axis and every other line fitted again,
// refitGroups), the fit's chi-square rises by less than
// minPairDeltaChi2. Such lines are a go-and-return pair (with a third
// conductor, say) that the fit did not report as one: the field of a line
// dipole depends on current times spacing only, so the fit's spacing,
// and its currents with it, are of its own choosing.
func looseLines(p *inverse.Problem, res *inverse.Result, n int) error {
	for k := 0; k < n; k++ {
		for l := k + 1; l < n; l++ {
			a, b := res.Sources[k], res.Sources[l]
			d := unit(a.Dir)
			mid := scale(add(a.Point, b.Point), 0.5)
			near := math.Inf(1)
			for _, pt := range p.Points {
				near = math.Min(near, norm(perp(sub(pt, mid), d)))
			}
			u := perp(sub(a.Point, b.Point), d)
			sp := norm(u)
			if sp >= near || sp < 1e-6 {
				continue
			}
			rss := func(f float64) (float64, int, bool) {
				groups := []fitGroup{{c: mid, d: d, u: unit(u), sp: f * sp}}
				np := 5
				for j := 0; j < n; j++ {
					if j != k && j != l {
						groups = append(groups, fitGroup{c: res.Sources[j].Point, d: unit(res.Sources[j].Dir)})
						np += 4
					}
				}
				_, r, err := refitGroups(p, groups, nil)
				return r, np, err == nil
			}
			r1, np, ok := rss(1)
			if !ok {
				continue
			}
			s2 := p.Sigma * p.Sigma
			if !(s2 > 0) {
				m := len(p.Points) * 3
				if p.Phasors != nil {
					m *= 2
				}
				if dof := m - np; dof > 0 {
					s2 = r1 / float64(dof)
				}
			}
			if !(s2 > 0) {
				continue
			}
			loose := false
			for _, f := range []float64{0.5, 2} {
				if r, _, ok := rss(f); ok && (r-r1)/s2 < minPairDeltaChi2 {
					loose = true
				}
			}
			if loose {
				return &needsSiteError{fmt.Errorf("the fitted lines at %.2f m east, %.2f m up and %.2f m east, %.2f m up (%.3g A and %.3g A), %.2f m apart against %.2f m from the sensors, "+
					"fit the readings as well at half or twice that spacing: they are a go-and-return pair whose current and spacing the readings do not separate, so neither core's current can be found: "+
					"give each [[asset.conductor]] its point (where it runs, roughly) in the site file, from which the pair's spacing is taken",
					a.Point[0], a.Point[2], b.Point[0], b.Point[2], a.Current, b.Current, sp, near)}
			}
		}
	}
	return nil
}

// refitPair fits the centre c, direction d and core axis u of a pair of
// lines spaced sp (m) to the readings of p, with the sources others held
// and every current (and the uniform background) fitted linearly by
// inverse.FitStrengths; see refitGroups. u is returned perpendicular to
// d, on the side of the given u.
func refitPair(p *inverse.Problem, others []inverse.Source, c, d, u [3]float64, sp float64) ([3]float64, [3]float64, [3]float64, error) {
	g, _, err := refitGroups(p, []fitGroup{{c: c, d: d, u: u, sp: sp}}, others)
	if err != nil {
		return c, d, u, err
	}
	return g[0].c, g[0].d, g[0].u, nil
}

// fitGroup is one line through c along d (sp 0), or a go-and-return pair
// of lines along d held at spacing sp, at c + u sp/2 and c - u sp/2.
type fitGroup struct {
	c, d, u [3]float64
	sp      float64
}

// nparam is the number of geometry parameters of g: the shift of c
// across d (2) and the tilt of d (2), and for a pair the turn of u about
// d.
func (g fitGroup) nparam() int {
	if g.sp > 0 {
		return 5
	}
	return 4
}

// at is g moved by the parameters x (nparam of them).
func (g fitGroup) at(x []float64) fitGroup {
	d := unit(g.d)
	var e1 [3]float64
	if g.sp > 0 {
		e1 = unit(perp(g.u, d))
	} else if e1 = cross([3]float64{0, 0, 1}, d); norm(e1) < 1e-9 {
		e1 = [3]float64{1, 0, 0}
	}
	e1 = unit(perp(e1, d))
	e2 := cross(d, e1)
	out := fitGroup{sp: g.sp}
	out.d = unit(add(d, add(scale(e1, x[2]), scale(e2, x[3]))))
	out.c = add(g.c, add(scale(e1, x[0]), scale(e2, x[1])))
	if g.sp > 0 {
		out.u = unit(perp(add(scale(e1, math.Cos(x[4])), scale(e2, math.Sin(x[4]))), out.d))
	}
	return out
}

// lines are g's one or two lines.
func (g fitGroup) lines() []inverse.Source {
	if g.sp > 0 {
		return []inverse.Source{inverse.Line{Point: add(g.c, scale(g.u, g.sp/2)), Dir: g.d}, inverse.Line{Point: add(g.c, scale(g.u, -g.sp/2)), Dir: g.d}}
	}
	return []inverse.Source{inverse.Line{Point: g.c, Dir: g.d}}
}

// refitGroups fits the geometry of the groups to the readings of p, with
// the sources fixed held and every current (and the uniform background)
// fitted linearly by inverse.FitStrengths: Levenberg-Marquardt (More
// 1978) on the groups' parameters (fitGroup.nparam) with a
// forward-difference Jacobian, from the given values. It returns the
// fitted groups and their residual sum of squares (nT^2).
func refitGroups(p *inverse.Problem, groups []fitGroup, fixed []inverse.Source) ([]fitGroup, float64, error) {
	np := 0
	for _, g := range groups {
		np += g.nparam()
	}
	geom := func(x []float64) []fitGroup {
		out := make([]fitGroup, len(groups))
		o := 0
		for i, g := range groups {
			out[i] = g.at(x[o : o+g.nparam()])
			o += g.nparam()
		}
		return out
	}
	resid := func(x []float64) ([]float64, error) {
		var src []inverse.Source
		for _, g := range geom(x) {
			src = append(src, g.lines()...)
		}
		src = append(src, fixed...)
		r, err := inverse.FitStrengths(p, src, nil)
		if err != nil {
			return nil, err
		}
		var v []float64
		for _, z := range r.ResidualPhasors {
			for _, c := range z {
				v = append(v, real(c), imag(c))
			}
		}
		for _, f := range r.Residuals {
			v = append(v, f[:]...)
		}
		return v, nil
	}
	x := make([]float64, np)
	r, err := resid(x)
	if err != nil {
		return groups, 0, err
	}
	rss := dot2(r)
	lambda := 1e-3
	for iter := 0; iter < 100 && rss > 0; iter++ {
		// Forward-difference Jacobian; steps of 1e-7 m and rad.
		J := mat.NewDense(len(r), np, nil)
		for j := range np {
			xh := append([]float64(nil), x...)
			xh[j] += 1e-7
			rh, err := resid(xh)
			if err != nil {
				return groups, 0, err
			}
			for i := range r {
				J.Set(i, j, (rh[i]-r[i])/1e-7)
			}
		}
		var jtj mat.Dense
		jtj.Mul(J.T(), J)
		g := mat.NewVecDense(np, nil)
		g.MulVec(J.T(), mat.NewVecDense(len(r), r))
		improved := false
		for range 20 {
			A := mat.DenseCopyOf(&jtj)
			for j := range np {
				A.Set(j, j, jtj.At(j, j)*(1+lambda))
			}
			var step mat.VecDense
			if err := step.SolveVec(A, g); err != nil {
				lambda *= 10
				continue
			}
			xn := append([]float64(nil), x...)
			for j := range np {
				xn[j] -= step.AtVec(j)
			}
			rn, err := resid(xn)
			if err != nil {
				// A step onto a singular geometry (two lines on one
				// another): a shorter one.
				lambda *= 10
				continue
			}
			if s := dot2(rn); s < rss {
				done := rss-s <= 1e-12*rss
				x, r, rss, improved = xn, rn, s, true
				lambda = math.Max(lambda/10, 1e-12)
				if done {
					iter = 100
				}
				break
			}
			lambda *= 10
		}
		if !improved {
			break
		}
	}
	return geom(x), rss, nil
}

func dot2(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x * x
	}
	return s
}

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// maxCommissionChi2 is the largest reduced chi-square, against one
// window's noise, that the commissioned lines' misfit of the mean
// readings alone may give (the default of alarms.max_chi2, above which a
// window's fit is degraded): lines that miss their own commissioning
// readings by more would make every window degraded and its currents
// wrong, so they are not stored.
const maxCommissionChi2 = 25

// commissionMisfit refuses conductors that miss the mean readings of p by
// more than sqrt(maxCommissionChi2) times windowSigma RMS (nothing is
// refused when windowSigma is 0: with noise = 0 meanReadings gives it
// from the windows' own scatter, 0 only when that is not known).
func commissionMisfit(p *inverse.Problem, windowSigma float64, conds []ConductorConfig) error {
	if !(windowSigma > 0) {
		return nil
	}
	var src []inverse.Source
	for _, c := range conds {
		src = append(src, inverse.Line{Point: c.Point, Dir: c.Direction})
	}
	r, err := inverse.FitStrengths(p, src, nil)
	if err != nil {
		return err
	}
	if limit := math.Sqrt(maxCommissionChi2) * windowSigma; r.RMS > limit {
		return &misfitError{err: fmt.Errorf("the %d fitted lines miss the commissioning readings by %.3g nT RMS, %.3g times one window's noise: the readings are not those of thin straight lines where the fit put them%s",
			len(conds), r.RMS, r.RMS/windowSigma, misfitAt(p, src, r.RMS, limit)), rms: r.RMS}
	}
	return nil
}

// misfitAt says where the lines src miss the readings of p by rms nT
// RMS: at one sensor, when leaving it out (the currents and background
// fitted again) takes away nine tenths of the residual sum of squares or
// more and brings the misfit within limit nT RMS (the one that leaves the
// least, when several do; its position or orientation in the site file is
// then likely wrong, or it was moved); else at all of them (an extended
// conductor, a bend, another source, or the lines misplaced). A sensor
// whose leaving out does not bring the lines within limit is not named:
// the lines fitted with a turned sensor lean towards it, and the sensor
// whose leaving out helps most is then often a healthy neighbour.
func misfitAt(p *inverse.Problem, src []inverse.Source, rms, limit float64) string {
	m := readingsPerSensor(p)
	all := rms * rms * float64(m*len(p.Points))
	best, bestRMS := -1, math.Inf(1)
	for k := range p.Points {
		q := p.Subset(func(i int) bool { return i != k })
		r, err := inverse.FitStrengths(q, src, nil)
		if err != nil || r.DOF <= 0 {
			continue
		}
		if rest := r.RMS * r.RMS * float64(m*len(q.Points)); rest <= 0.1*all && r.RMS <= limit && r.RMS < bestRMS {
			best, bestRMS = k, r.RMS
		}
	}
	if best >= 0 {
		pt := p.Points[best]
		return fmt.Sprintf(" ("+misfitAtSensor+" [%g, %g, %g]: without it they miss by %.3g nT RMS; its position or orientation in the site file is likely wrong, or it was moved)", pt[0], pt[1], pt[2], bestRMS)
	}
	return " (an extended conductor such as a flat bar close to the sensors, a bend, another source near the sensors, a conductor level with or above the sensors the fit did not reach (give its point, roughly where it runs), or a conducting enclosure or screen (AC); or a sensor's position or orientation in the site file wrong)"
}

// misfitAtSensor begins misfitAt's naming of one sensor.
const misfitAtSensor = "the misfit is at the sensor at"

// misfitError is commissionMisfit's refusal.
type misfitError struct {
	err error
	rms float64 // how far the lines miss the readings, nT RMS
}

func (e *misfitError) Error() string { return e.err.Error() }
func (e *misfitError) Unwrap() error { return e.err }

// needsSiteError is a commissioning failure that more readings would not
// mend: the site file must say more.
type needsSiteError struct{ err error }

func (e *needsSiteError) Error() string { return e.err.Error() }
func (e *needsSiteError) Unwrap() error { return e.err }

// leastCostAssignment returns, for each row k of the square matrix cost,
// the column it is assigned to, minimising the sum of the costs over the
// permutations (at most 8 lines: 40320 permutations, at once).
func leastCostAssignment(cost [][]float64) []int {
	n := len(cost)
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	best := append([]int(nil), perm...)
	bestCost := math.Inf(1)
	var rec func(i int, sum float64)
	rec = func(i int, sum float64) {
		if sum >= bestCost {
			return
		}
		if i == n {
			bestCost = sum
			copy(best, perm)
			return
		}
		for j := i; j < n; j++ {
			perm[i], perm[j] = perm[j], perm[i]
			rec(i+1, sum+cost[i][perm[i]])
			perm[i], perm[j] = perm[j], perm[i]
		}
	}
	rec(0, 0)
	return best
}

// northward turns d to point north (east for a line running due east-west,
// up for a vertical one).
func northward(d [3]float64) [3]float64 {
	switch {
	case d[1] < 0, d[1] == 0 && d[0] < 0, d[1] == 0 && d[0] == 0 && d[2] < 0:
		return scale(d, -1)
	}
	return d
}

func add(a, b [3]float64) [3]float64 { return [3]float64{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func sub(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func scale(a [3]float64, f float64) [3]float64 {
	return [3]float64{a[0] * f, a[1] * f, a[2] * f}
}
func dot(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func norm(a [3]float64) float64   { return math.Sqrt(dot(a, a)) }

// unit is a scaled to length 1 (zero stays zero).
func unit(a [3]float64) [3]float64 {
	if n := norm(a); n > 0 {
		return scale(a, 1/n)
	}
	return a
}

// perp is the part of a perpendicular to the unit vector d.
func perp(a, d [3]float64) [3]float64 { return sub(a, scale(d, dot(a, d))) }
