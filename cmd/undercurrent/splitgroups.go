package main

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Split groups: a group whose readings lie in two or more places, side by
// side across the line walked, is most likely two traverses given one
// name (a mislabel). Fitted as one traverse, its current and depth blend
// both places, and the fit's stated causes (a tee, a bend, drift) do not
// include the label. Before, two traverses 20 m apart under one name were
// fitted as one poor traverse with no word of the label (found in review).
const (
	// splitJumpSpacings and splitJumpMin set the jump between successive
	// readings that starts a new run: splitJumpSpacings times the group's
	// median step between readings, and at least splitJumpMin metres
	// (above a GNSS position's scatter of a few decimetres).
	splitJumpSpacings = 20
	splitJumpMin      = 1.0
	// splitApartMin: places side by side closer than this, m, are not
	// named (the sensors of a wide cart logged one after another lie up
	// to a couple of metres apart; traverses are set further apart).
	splitApartMin = 3.0
	// splitMaxRuns: a group broken into more runs than this holds
	// scattered positions, not a few separate passes (positionJitter).
	splitMaxRuns = 8
	// splitMinShare: a place holding fewer of the group's readings than
	// this share (or than splitMinReadings) is a stray, not a pass.
	splitMinShare    = 0.05
	splitMinReadings = 5
	// splitCompare: at most this many readings of each run are compared
	// when runs are joined into places.
	splitCompare = 400
)

// place is one of a group's separate places: its readings' count and
// plan extent.
type place struct {
	n                      int
	minE, maxE, minN, maxN float64
	sumE, sumN             float64
	pts                    [][2]float64
}

// groupPlaces splits the plan positions pts (in reading order) into runs
// at jumps over the jump distance, joins runs that come within it of one
// another (a traverse walked out and back, a pause), and returns the
// places with at least splitMinShare of the readings, largest first, and
// the jump distance. nil when the group is one place, or scattered.
func groupPlaces(pts [][3]float64) ([]*place, float64) {
	n := len(pts)
	if n < 2*splitMinReadings {
		return nil, 0
	}
	steps := make([]float64, 0, n-1)
	for i := 1; i < n; i++ {
		steps = append(steps, math.Hypot(pts[i][0]-pts[i-1][0], pts[i][1]-pts[i-1][1]))
	}
	sorted := append([]float64(nil), steps...)
	sort.Float64s(sorted)
	jump := math.Max(splitJumpSpacings*sorted[len(sorted)/2], splitJumpMin)
	var runs [][2]int
	lo := 0
	for i, d := range steps {
		if d > jump {
			runs = append(runs, [2]int{lo, i + 1})
			lo = i + 1
		}
	}
	runs = append(runs, [2]int{lo, n})
	if len(runs) < 2 || len(runs) > splitMaxRuns {
		return nil, 0
	}
	// Join runs that come within the jump distance of each other.
	parent := make([]int, len(runs))
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		if parent[i] != i {
			parent[i] = find(parent[i])
		}
		return parent[i]
	}
	near := func(a, b [2]int) bool {
		sa, sb := max(1, (a[1]-a[0])/splitCompare), max(1, (b[1]-b[0])/splitCompare)
		for i := a[0]; i < a[1]; i += sa {
			for j := b[0]; j < b[1]; j += sb {
				if math.Hypot(pts[i][0]-pts[j][0], pts[i][1]-pts[j][1]) <= jump {
					return true
				}
			}
		}
		return false
	}
	for i := range runs {
		for j := i + 1; j < len(runs); j++ {
			if find(i) != find(j) && near(runs[i], runs[j]) {
				parent[find(j)] = find(i)
			}
		}
	}
	byRoot := map[int]*place{}
	var places []*place
	for i, r := range runs {
		p := byRoot[find(i)]
		if p == nil {
			p = &place{minE: math.Inf(1), maxE: math.Inf(-1), minN: math.Inf(1), maxN: math.Inf(-1)}
			byRoot[find(i)] = p
			places = append(places, p)
		}
		for _, q := range pts[r[0]:r[1]] {
			p.n++
			p.minE, p.maxE = math.Min(p.minE, q[0]), math.Max(p.maxE, q[0])
			p.minN, p.maxN = math.Min(p.minN, q[1]), math.Max(p.maxN, q[1])
			p.sumE += q[0]
			p.sumN += q[1]
			p.pts = append(p.pts, [2]float64{q[0], q[1]})
		}
	}
	kept := places[:0]
	for _, p := range places {
		if p.n >= splitMinReadings && float64(p.n) >= splitMinShare*float64(n) {
			kept = append(kept, p)
		}
	}
	if len(kept) < 2 {
		return nil, 0
	}
	sort.SliceStable(kept, func(i, j int) bool { return kept[i].n > kept[j].n })
	return kept, jump
}

// axis returns a place's centre and the unit direction of its readings'
// principal axis in plan (the line walked).
func (p *place) axis() (c, d [2]float64) {
	c = [2]float64{p.sumE / float64(p.n), p.sumN / float64(p.n)}
	var sxx, sxy, syy float64
	for _, q := range p.pts {
		x, y := q[0]-c[0], q[1]-c[1]
		sxx += x * x
		sxy += x * y
		syy += y * y
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	return c, [2]float64{math.Cos(th), math.Sin(th)}
}

// splitGroupsWarning names each group whose readings lie in two or more
// places side by side, set apart across the line walked by more than the
// jump distance (groupPlaces) and splitApartMin: two traverses under one
// name. Places in
// line with each other (a traverse with a gap in it) are not named.
func splitGroupsWarning(sv *survey) string {
	var parts []string
	var names []string
	for _, g := range sv.groups {
		if g.key == "" {
			continue
		}
		places, jump := groupPlaces(g.points)
		if places == nil {
			continue
		}
		c0, d0 := places[0].axis()
		apart := 0.0
		for _, p := range places[1:] {
			c, _ := p.axis()
			// The offset across the first place's line.
			across := math.Abs(-(c[0]-c0[0])*d0[1] + (c[1]-c0[1])*d0[0])
			apart = math.Max(apart, across)
		}
		if apart <= math.Max(jump, splitApartMin) {
			continue
		}
		var ext []string
		for _, p := range places {
			ext = append(ext, fmt.Sprintf("%d at east %.1f to %.1f m, north %.1f to %.1f m", p.n, p.minE, p.maxE, p.minN, p.maxN))
		}
		unit := "readings"
		if sv.ac {
			unit = "windows"
		}
		names = append(names, g.key)
		total := 0
		for _, p := range places {
			total += p.n
		}
		parts = append(parts, fmt.Sprintf("%s holds %d %s in %d places up to %.1f m apart across the line walked (%s)", g.key, total, unit, len(places), apart, strings.Join(ext, "; ")))
	}
	if len(parts) == 0 {
		return ""
	}
	what := "a group's readings lie"
	if len(parts) > 1 {
		what = fmt.Sprintf("%d groups' readings lie", len(parts))
	}
	return fmt.Sprintf("%s in separate places side by side: %s. Most likely two traverses were given one name (a mislabel): fitted as one traverse, the current and depth blend both places and the fit may read poor; relabel them apart (%s)", what, strings.Join(parts, "; "), strings.Join(names, ", "))
}
