package route

import (
	"math"
	"sort"
)

// Chainage round a bend.
//
// Chainage is the distance along the conductor, but the stations' points
// are where each fit put its straight line, and at a sharp bend a chord
// between successive points cuts the corner: round a 90 degree bend the
// stations either side of the vertex, 3 m from it along the cable, were
// joined by a 4.4 m chord where the cable runs 6.2 m, and every chainage
// past the bend was 2.4 m short (a fault reported at 44.60 ± 0.15 m lay at
// 47 m; found in review). The fits within a bend are poor, and their
// points poorer still: the corner traverse's line came out steep, its
// point 3 m back along the first arm, and the chain put it before the
// traverse that precedes it.
//
// Over each stretch where quality names a bend (bendSpan: the sound
// stations a and b either side of poorly fitted ones, whose directions
// differ by bendTurn degrees or more) the conductor is taken to run
// straight along a's line to where it meets b's line, the vertex V, and on
// along b's line to b:
//
//	P_a + s D_a = P_b - t D_b = V,   s, t > 0,
//
// with D_a and D_b the stations' horizontal unit directions, so that the
// chainage from a to b is s + t, and a station between them takes the
// chainage of its point's nearest point on the two legs; one whose point
// falls behind the station before it is spaced evenly between its
// neighbours. The stations between a and b are put in the
// order the caller gave them when that order runs from a to b, as their
// own points are the least trustworthy on the route. Where the lines do not
// meet ahead of a and behind b (the bend is not one vertex) the chords
// stand.

// cornerSpan is a bend's stretch: indices in route order of the sound
// stations either side.
type cornerSpan struct{ a, b int }

// cornerSpans returns the stretches of ps over which quality names a bend
// (see bends), overlapping ones merged, in route order.
func cornerSpans(ps []Placed, set *Settings) []cornerSpan {
	maxChi := set.maxReducedChi2()
	var out []cornerSpan
	for i := range ps {
		p := &ps[i]
		over := maxChi > 0 && p.DOF > 0 && p.Chi2/float64(p.DOF) > maxChi
		if !over && p.OK {
			continue
		}
		a, b, _ := bendSpan(ps, i, maxChi)
		if a < 0 {
			continue
		}
		if k := len(out) - 1; k >= 0 && a < out[k].b {
			out[k].a, out[k].b = min(out[k].a, a), max(out[k].b, b)
			continue
		}
		out = append(out, cornerSpan{a, b})
	}
	return out
}

// bendOrder puts the stations within each bend of the chain order (indices
// into st, in route order) in the caller's order, when the stations at the
// bend's ends bracket them in it.
func bendOrder(st []Station, order []int, set *Settings) {
	ps := make([]Placed, len(order))
	for k, idx := range order {
		ps[k] = Placed{Station: st[idx], Index: idx}
	}
	measure(ps)
	orient(ps, repeatGap(ps))
	for _, sp := range cornerSpans(ps, set) {
		lo, hi := ps[sp.a].Index, ps[sp.b].Index
		up := lo < hi
		if !up {
			lo, hi = hi, lo
		}
		inner := order[sp.a+1 : sp.b]
		ok := true
		for _, idx := range inner {
			if idx < lo || idx > hi {
				ok = false
			}
		}
		if !ok {
			continue
		}
		sort.Slice(inner, func(i, j int) bool { return (inner[i] < inner[j]) == up })
	}
}

// cornerChainage measures chainage round each bend of ps (in route order,
// chords already measured) along the two legs through its vertex, moving
// every station beyond by the difference.
func cornerChainage(ps []Placed, set *Settings) {
	for _, sp := range cornerSpans(ps, set) {
		a, b := &ps[sp.a], &ps[sp.b]
		da, okA := horizUnit(a.Dir)
		db, okB := horizUnit(b.Dir)
		if !okA || !okB {
			continue
		}
		// Solve P_a + s D_a + t D_b = P_b for s and t.
		dx, dy := b.Point[0]-a.Point[0], b.Point[1]-a.Point[1]
		det := da[0]*db[1] - da[1]*db[0]
		if math.Abs(det) < math.Sin(bendTurn*math.Pi/180) {
			continue
		}
		s := (dx*db[1] - dy*db[0]) / det
		t := (da[0]*dy - da[1]*dx) / det
		if !(s > 0) || !(t > 0) {
			continue
		}
		v := [2]float64{a.Point[0] + s*da[0], a.Point[1] + s*da[1]}
		along := func(p [3]float64) float64 {
			u1 := math.Min(math.Max((p[0]-a.Point[0])*da[0]+(p[1]-a.Point[1])*da[1], 0), s)
			d1 := math.Hypot(p[0]-a.Point[0]-u1*da[0], p[1]-a.Point[1]-u1*da[1])
			u2 := math.Min(math.Max((p[0]-v[0])*db[0]+(p[1]-v[1])*db[1], 0), t)
			d2 := math.Hypot(p[0]-v[0]-u2*db[0], p[1]-v[1]-u2*db[1])
			if d2 < d1 {
				return s + u2
			}
			return u1
		}
		c0 := a.Chainage
		shift := c0 + s + t - b.Chainage
		// Each station within takes its point's place along the legs; one
		// that falls behind the station before it (its point is not to be
		// trusted) is spaced evenly between its trusted neighbours.
		n := sp.b - sp.a
		c := make([]float64, n+1)
		ok := make([]bool, n+1)
		c[0], ok[0], c[n], ok[n] = 0, true, s+t, true
		last := 0.0
		for k := 1; k < n; k++ {
			c[k] = along(ps[sp.a+k].Point)
			if c[k] > last && c[k] < s+t {
				ok[k], last = true, c[k]
			}
		}
		for k := 1; k < n; k++ {
			if ok[k] {
				continue
			}
			i, j := k-1, k+1
			for !ok[j] {
				j++
			}
			c[k] = c[i] + (c[j]-c[i])/float64(j-i)
			ok[k] = true
		}
		for k := 1; k < n; k++ {
			ps[sp.a+k].Chainage = c0 + c[k]
		}
		for k := sp.b; k < len(ps); k++ {
			ps[k].Chainage += shift
		}
	}
}

// horizUnit is d's horizontal part as a unit vector; ok is false when it
// is too steep to have one.
func horizUnit(d [3]float64) (u [2]float64, ok bool) {
	n := math.Hypot(d[0], d[1])
	if n < 0.5*math.Sqrt(d[0]*d[0]+d[1]*d[1]+d[2]*d[2]) || n == 0 {
		return u, false
	}
	return [2]float64{d[0] / n, d[1] / n}, true
}

// outsideBends returns the usable stations of ps that do not lie strictly
// within a bend quality names. Their currents are biased by the turned
// arm (see steps), model error confined to the bend that acrossBends
// deals with; let into the route-wide between-station scatter it is
// taken for error every station shares. Round a 90 degree bend, putting
// the corner traverse (181 A on a 60 A cable) in its place between its
// neighbours rather than before them made two of the intervals large
// instead of one, and the scatter's median went from 0.15 to 0.51 A.
func outsideBends(ps []Placed, set *Settings) []*Placed {
	bs := bends(ps, set)
	var u []*Placed
	for _, p := range usable(ps) {
		if inBend(bs, p.Chainage) < 0 {
			u = append(u, p)
		}
	}
	return u
}
