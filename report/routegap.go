package report

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Route gaps: a stretch of a route with no station, so much longer than
// the route's own station spacing that the survey left it out (a river,
// a road, a building crossed), not a traverse that was merely paced
// long. The route's line, its current and cover profiles and the least
// cover all run straight across such a stretch, where nothing was
// measured: an HDD bore under a river, surveyed every 10 m on both banks,
// had no traverse for 60 m where it lies deepest, and route.geojson drew
// the route straight across with no note while the summary said "traced
// for 180 m ... cover 1.0 to 11.1 m" (found in review).
const (
	// GapSpacingRatio: a stretch between neighbouring stations longer
	// than this many times the station spacing (RouteGaps) is a gap.
	// A traverse walked a pace or two off its peg moves two intervals by
	// a quarter of the spacing at most (1.25 times), and one traverse
	// missed (an obstacle, a fit left out keeps its station, so this is
	// a traverse never walked) doubles one interval: the route still has
	// a station on each side within one spacing of any point, as on the
	// rest of the survey. From 2.5 times on, at least two traverses in a
	// row were not walked and the route's straight line spans more than
	// twice what the survey measured anywhere else.
	GapSpacingRatio = 2.5
	// GapMinLength, m: a shorter stretch is no gap whatever the ratio,
	// since a dense survey (traverses 1 m apart) that skips 3 m still
	// places the conductor within a few metres everywhere.
	GapMinLength = 5.0
	// gapMinIntervals: fewer intervals between distinct stations give no
	// median spacing to measure a gap against.
	gapMinIntervals = 3
)

// RouteGap is a stretch of a route with no station (RouteGaps): from the
// station From at chainage FromChainage to the next station To at
// ToChainage, Length metres, Ratio times the route's median station
// spacing Spacing. Cover, depth and current are not known along it: the
// route only joins the stations either side.
type RouteGap struct {
	From         string  `json:"from_group"`
	To           string  `json:"to_group"`
	FromChainage float64 `json:"from_chainage_m"`
	ToChainage   float64 `json:"to_chainage_m"`
	Length       float64 `json:"length_m"`
	Spacing      float64 `json:"median_spacing_m"`
	Ratio        float64 `json:"spacing_ratio"`
}

// RouteGaps are the gaps of route r, in chainage order: the stretches
// between neighbouring stations (used or not: a station whose fit failed
// was still surveyed, and routeBridges draws across it) longer than
// GapSpacingRatio times the spacing between the route's stations (the
// larger of the route's median and the stretch's own, localSpacing) and
// than GapMinLength. Stations within max(RepeatGap, 0.5 m) of each
// other in chainage are one station (a route walked again), so that
// repeats do not shrink the median. Nil for a nil route or one with fewer
// than gapMinIntervals intervals.
func RouteGaps(r *Route) []RouteGap {
	if r == nil {
		return nil
	}
	type at struct {
		key string
		c   float64
	}
	var sts []at
	for _, s := range r.Stations {
		if finite(s.Chainage) {
			sts = append(sts, at{s.Key, s.Chainage})
		}
	}
	sort.SliceStable(sts, func(i, j int) bool { return sts[i].c < sts[j].c })
	tol := math.Max(r.RepeatGap, 0.5)
	var distinct []at
	for _, s := range sts {
		if n := len(distinct); n > 0 && s.c-distinct[n-1].c <= tol {
			continue
		}
		distinct = append(distinct, s)
	}
	if len(distinct) < gapMinIntervals+1 {
		return nil
	}
	steps := make([]float64, len(distinct)-1)
	for i := range steps {
		steps[i] = distinct[i+1].c - distinct[i].c
	}
	sorted := append([]float64(nil), steps...)
	sort.Float64s(sorted)
	n := len(sorted)
	med := sorted[n/2]
	if n%2 == 0 {
		med = (sorted[n/2-1] + sorted[n/2]) / 2
	}
	if !(med > 0) {
		return nil
	}
	var out []RouteGap
	for i, l := range steps {
		sp := math.Max(med, localSpacing(steps, i))
		if l > GapSpacingRatio*sp && l > GapMinLength {
			out = append(out, RouteGap{
				From: distinct[i].key, To: distinct[i+1].key,
				FromChainage: distinct[i].c, ToChainage: distinct[i+1].c,
				Length: l, Spacing: sp, Ratio: l / sp,
			})
		}
	}
	return out
}

// gapLocalIntervals: the intervals either side of one that its local
// spacing is the median of (localSpacing).
const gapLocalIntervals = 3

// localSpacing is the median of the up to gapLocalIntervals intervals on
// each side of interval i of steps (not i itself): the pitch the survey
// kept about it. A route walked at two pitches (2 m over a joint bay, 10 m
// beyond) measures each stretch against its own pitch, so the wider pitch
// is no gap; a gap within a stretch is measured against that stretch's pitch
// (found in review: 16 traverses 2 m apart and 5 at 10 m gave five false gaps
// against the 2 m median). 0 when i has no neighbour.
func localSpacing(steps []float64, i int) float64 {
	var near []float64
	for j := max(0, i-gapLocalIntervals); j <= min(len(steps)-1, i+gapLocalIntervals); j++ {
		if j != i {
			near = append(near, steps[j])
		}
	}
	if len(near) == 0 {
		return 0
	}
	sort.Float64s(near)
	n := len(near)
	if n%2 == 1 {
		return near[n/2]
	}
	return (near[n/2-1] + near[n/2]) / 2
}

// gapWords names route r's gaps for the summary's sentences: "60 m
// between T07 and T13" (and "; 20 m between ..." for more), empty when
// there are none.
func gapWords(r *Route) string {
	var parts []string
	for _, g := range RouteGaps(r) {
		parts = append(parts, fmt.Sprintf("%.0f m between %s and %s", g.Length, g.From, g.To))
	}
	return keyList(parts)
}

// RouteGapSentence says in a sentence where conductor 1's route has no
// station (RouteGaps): "Not surveyed: 60 m between T07 and T13 (chainage
// 60–120 m, 6.0 times the station spacing of 10 m about it); the route is
// drawn straight across it and the conductor's position, current and
// cover there are not known." Empty when there is no gap or no route.
func RouteGapSentence(d *Document) string {
	if d == nil || d.Route == nil {
		return ""
	}
	gaps := RouteGaps(d.Route)
	if len(gaps) == 0 {
		return ""
	}
	var parts []string
	for _, g := range gaps {
		parts = append(parts, fmt.Sprintf("%.0f m between %s and %s (chainage %.0f–%.0f m, %.1f times the station spacing of %s m about it)",
			g.Length, g.From, g.To, g.FromChainage, g.ToChainage, g.Ratio, trimFloat(g.Spacing)))
	}
	it := "it"
	if len(gaps) > 1 {
		it = "each"
	}
	return "Not surveyed: " + keyList(parts) + "; the route only joins the stations either side of " + it + "," +
		" and the conductor's position, current and cover there are not known."
}

// trimFloat writes v with up to two decimals and no trailing zeros.
func trimFloat(v float64) string {
	s := fmt.Sprintf("%.2f", v)
	s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	return s
}

// inGap reports whether a gap of gaps lies between chainages a and b
// (a < b): the route's line is not drawn straight from a to b.
func inGap(gaps []RouteGap, a, b float64) bool {
	const tol = 1e-6
	for _, g := range gaps {
		if g.FromChainage >= a-tol && g.ToChainage <= b+tol {
			return true
		}
	}
	return false
}
