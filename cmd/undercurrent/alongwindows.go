package main

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"undercurrent/ingest"
	"undercurrent/inverse"
)

// Along-route windows: a cart of several sensors, or one sensor zig-zagging,
// walked along a conductor for tens of metres. Fitted as one group, its
// readings form a swath so narrow against its length that the fit takes it
// for a single traverse (inverse: RMS spread across below a tenth of the
// spread along), and a single traverse may not hold a line within 10° of its
// own direction, so the line along the swath that the readings do fix is
// refused and the fit fails with a misfit of hundreds of nT. Cut into
// windows short enough that the swath is no longer a single traverse, each
// window fixes the line along it (20 A, 1.3 m found to 0.1% on a 4-sensor
// cart in review), and the windows are the stations of the route.

// alongWindowRatio is the ratio of a window's RMS spread across the route
// to its spread along it that the default window length keeps: twice the
// single-traverse ratio of the fits (0.1), so that a window is never taken
// for a single traverse, with room for a swath narrower in places.
const alongWindowRatio = 0.4

// minAlongSwath is the RMS spread of a walk's readings across its
// direction, m, from which it is taken as a swath (several sensors side by
// side, or a zig-zag) and may be cut into along-route windows: GNSS scatter
// of a straight walk stays a few centimetres.
const minAlongSwath = 0.1

// maxAlongSwath is the largest RMS spread across a walk, m, taken as one
// swath walked along its length (a cart 3.5 m wide, or a zig-zag of 1.7 m
// to either side): readings spread wider across are traverses or lines of
// their own, which --group-by names.
const maxAlongSwath = 1.0

// minAlongWindow is the shortest default window, m.
const minAlongWindow = 2.0

// alongMisfit is how many times the readings' noise a single fit of a
// walk's readings must miss them by before the run cuts the walk into
// along-route windows by itself.
const alongMisfit = 5.0

// alongWindowLength is the default window length for a swath whose RMS
// spread across the route is swath, m: a uniform walk of length L has an
// RMS spread of L/sqrt(12) along it, so the window keeps the swath at
// alongWindowRatio of that.
func alongWindowLength(swath float64) float64 {
	return math.Max(minAlongWindow, math.Sqrt(12)*swath/alongWindowRatio)
}

// planFootprint is the plan shape of a set of readings: their centroid,
// principal direction (a unit vector, east and north), and RMS spreads
// along and across it.
type planFootprint struct {
	c, t          [2]float64
	along, across float64
	n             int
}

// footprintOf returns the plan footprint of the points (x, y; NaN left
// out).
func footprintOf(x, y []float64) planFootprint {
	var f planFootprint
	var sx, sy float64
	for i := range x {
		if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
			continue
		}
		sx, sy = sx+x[i], sy+y[i]
		f.n++
	}
	if f.n == 0 {
		return f
	}
	f.c = [2]float64{sx / float64(f.n), sy / float64(f.n)}
	var cee, cen, cnn float64
	for i := range x {
		if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
			continue
		}
		de, dn := x[i]-f.c[0], y[i]-f.c[1]
		cee, cen, cnn = cee+de*de, cen+de*dn, cnn+dn*dn
	}
	n := float64(f.n)
	l1, l2, a := inverse.PlanPrincipal(cee/n, cnn/n, cen/n)
	f.t = [2]float64{math.Cos(a), math.Sin(a)}
	f.along, f.across = math.Sqrt(math.Max(l1, 0)), math.Sqrt(math.Max(l2, 0))
	return f
}

// alongSwath reports whether a footprint is a swath walked along its
// length: wide enough across (minAlongSwath) to see a conductor along it,
// no wider than a cart or a zig-zag (maxAlongSwath),
// yet narrow enough against its length that one fit takes it for a single
// traverse (the fits' ratio 0.1), and long enough for two windows.
func (f planFootprint) alongSwath() bool {
	return f.n > 0 && f.across >= minAlongSwath && f.across <= maxAlongSwath && f.across < 0.1*f.along &&
		math.Sqrt(12)*f.along >= 2*alongWindowLength(f.across)
}

// alongWindowLabels cuts the readings of s into consecutive windows along
// the principal direction of their plan positions, each about length m
// long (the walk's length divided into whole windows), and returns each
// reading's window label: its chainage range from the end the walk started
// at, prefixed with prefix. n is the number of windows.
func alongWindowLabels(s *ingest.Samples, length float64, prefix string) (labels []string, n int) {
	f := footprintOf(s.X, s.Y)
	if f.n == 0 {
		return nil, 0
	}
	at := func(i int) float64 { return (s.X[i]-f.c[0])*f.t[0] + (s.Y[i]-f.c[1])*f.t[1] }
	first, last := -1, -1
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := range s.Len() {
		if math.IsNaN(s.X[i]) || math.IsNaN(s.Y[i]) {
			continue
		}
		if first < 0 {
			first = i
		}
		last = i
		a := at(i)
		lo, hi = math.Min(lo, a), math.Max(hi, a)
	}
	// Chainage from the end the walk started at.
	sign := 1.0
	if at(first) > at(last) {
		sign, lo, hi = -1, -hi, -lo
	}
	span := hi - lo
	n = max(1, int(math.Round(span/length)))
	w := span / float64(n)
	names := make([]string, n)
	for k := range names {
		names[k] = fmt.Sprintf("%s%.1f-%.1f m", prefix, float64(k)*w, float64(k+1)*w)
	}
	labels = make([]string, s.Len())
	for i := range labels {
		if math.IsNaN(s.X[i]) || math.IsNaN(s.Y[i]) {
			continue // no group: left out
		}
		k := 0
		if w > 0 {
			k = min(n-1, max(0, int((sign*at(i)-lo)/w)))
		}
		labels[i] = names[k]
	}
	return labels, n
}

// parseAlongWindow reads --along-window: auto (0), off (-1) or a length in
// metres.
func parseAlongWindow(v string) (float64, error) {
	switch strings.ToLower(strings.TrimSpace(v)) {
	case "", "auto":
		return 0, nil
	case "off", "none":
		return -1, nil
	}
	m, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(v), "m"), 64)
	if err != nil || !(m > 0) || math.IsInf(m, 0) {
		return 0, usageErrorf("--along-window %s: give a length in metres (as 8), auto or off", v)
	}
	return m, nil
}

// windowed reports whether the run cuts the logs into along-route windows.
func (o *locateOptions) windowed() bool { return o.groupBy == "" && o.alongLen > 0 }

// grouped reports whether the readings are fitted in groups: --group-by, or
// along-route windows.
func (o *locateOptions) grouped() bool { return o.groupBy != "" || o.windowed() }

// setAlongWindows gives each reading of s its along-route window as its
// group (o.alongLen long), and returns the note that says so.
func setAlongWindows(o *locateOptions, s *ingest.Samples, logs int) string {
	prefix := ""
	if logs > 1 {
		prefix = strings.TrimSuffix(filepath.Base(s.Source), filepath.Ext(s.Source)) + " "
	}
	labels, n := alongWindowLabels(s, o.alongLen, prefix)
	if labels == nil {
		return ""
	}
	s.Group = labels
	f := footprintOf(s.X, s.Y)
	if n, sep := parallelTracks(s.X, s.Y, f); n == 2 {
		o.alongTwo = append(o.alongTwo, twoTracksWarning(s.Source+": ", sep))
	}
	how := fmt.Sprintf("--along-window %g", o.alongLen)
	if o.alongAuto {
		how = fmt.Sprintf("chosen from the swath's RMS width of %.2f m so that each window is %.0f%% as wide as long in RMS, over the tenth below which a fit takes readings for one traverse; --along-window M sets it, off stops it", f.across, 100*alongWindowRatio)
		if o.alongWhy != "" {
			how = o.alongWhy + "; the length is " + how
		}
	}
	return fmt.Sprintf("%s: the readings were walked along their length (a swath %.1f m long and %.2f m RMS wide): cut into %d windows of %.1f m along it, each fitted as a station of the route (%s)",
		s.Source, math.Sqrt(12)*f.along, f.across, n, math.Sqrt(12)*f.along/float64(n), how)
}

// parallelTracks counts the straight tracks side by side that the
// readings at x, y lie on across the footprint f's direction: clusters of
// their offsets across it (2 cm bins, adjacent bins joined) that each hold
// at least 5% of the readings and together at least 95%; 0 when the
// offsets are spread (a zig-zag). sep is the largest distance between two
// tracks' mean offsets, m.
func parallelTracks(x, y []float64, f planFootprint) (n int, sep float64) {
	const bin = 0.02
	count := map[int]int{}
	total := 0
	for i := range x {
		if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
			continue
		}
		c := -(x[i]-f.c[0])*f.t[1] + (y[i]-f.c[1])*f.t[0]
		count[int(math.Floor(c/bin))]++
		total++
	}
	if total == 0 {
		return 0, 0
	}
	lo, hi := math.MaxInt, math.MinInt
	for k := range count {
		lo, hi = min(lo, k), max(hi, k)
	}
	var means []float64
	covered := 0
	for k := lo; k <= hi; {
		if count[k] == 0 {
			k++
			continue
		}
		m, sum := 0, 0.0
		for ; k <= hi && count[k] > 0; k++ {
			m += count[k]
			sum += float64(count[k]) * (float64(k) + 0.5) * bin
		}
		if float64(m) >= 0.05*float64(total) {
			means = append(means, sum/float64(m))
			covered += m
		}
	}
	if float64(covered) < 0.95*float64(total) {
		return 0, 0
	}
	if len(means) > 1 {
		sep = means[len(means)-1] - means[0]
	}
	return len(means), sep
}

// twoTracksWarning is the warning for readings on two straight tracks sep
// m apart walked along their length: they cannot part a conductor along
// them from the background. Two sensors walked straight along a cable
// gave every window "the line lies above the ground given" or currents
// such as 46422 ± 19923443 A, with no word why (found in review).
func twoTracksWarning(path string, sep float64) string {
	return fmt.Sprintf("%sthe readings lie on two straight tracks %.2f m apart walked along their length: two tracks running side by side along a conductor cannot part its field from the background field (the six field values at each place along them, less the background's three, cannot give a current, a position across and a depth), so no fit of them places it; walk a zig-zag across its line, add a third sensor across the cart, or walk traverses across it",
		path, sep)
}

// autoAlongWindows decides, after a run without --group-by fitted every
// reading as one group, whether to fit again in along-route windows: the
// readings form a swath walked along its length (alongSwath) and the one
// fit failed or misses them by more than alongMisfit times their noise.
// It returns the window length, m, and the reason; 0 for no. warn is a
// warning for a swath of two straight tracks, which windows cannot help
// (parallelTracks).
func autoAlongWindows(o *locateOptions, sv *survey) (length float64, why, warn string) {
	if o.groupBy != "" || o.alongLen != 0 || len(sv.groups) != 1 || sv.ac {
		return 0, "", ""
	}
	g := sv.groups[0]
	x, y := make([]float64, len(g.points)), make([]float64, len(g.points))
	for i, p := range g.points {
		x[i], y[i] = p[0], p[1]
	}
	f := footprintOf(x, y)
	if !f.alongSwath() || walkedAcross(x, y, f) {
		return 0, "", ""
	}
	// The noise the readings show (from neighbouring readings), else the
	// --noise given.
	noise := g.measuredNoise(false)
	if !(noise > 0) {
		noise = o.noise
	}
	switch {
	case g.err != nil || g.res == nil:
		why = "fitted as one group, they gave no answer"
		if g.res != nil && noise > 0 {
			why = fmt.Sprintf("fitted as one group, they gave no answer and were missed by %.3g nT RMS, %.0f times their %.2g nT noise", g.res.RMS, g.res.RMS/noise, noise)
		}
	case !(noise > 0):
		return 0, "", ""
	case len(g.res.Sources) == 0 || g.res.RMS > alongMisfit*noise:
		why = fmt.Sprintf("fitted as one group, they were missed by %.3g nT RMS, %.0f times their %.2g nT noise", g.res.RMS, g.res.RMS/noise, noise)
	default:
		return 0, "", ""
	}
	if n, sep := parallelTracks(x, y, f); n == 2 {
		return 0, "", twoTracksWarning("", sep)
	}
	return alongWindowLength(f.across), why, ""
}

// Traverses across the walk (walkedAcross): short traverses one after
// another along a route make a footprint as long and narrow as a cart's
// swath (21 traverses of 3 m, 2 m apart: 42 m long, 0.88 m RMS wide), but
// each traverse already fixes a line crossing it, and windows of several
// traverses only blurred the steps between them (placed to 8 m, not 2 m;
// and their own windows were then called mislabelled traverses; found in
// review).
const (
	// traverseMinReadings is the fewest readings a leg of the walk
	// holds to count as a traverse: a cart's sensors, logged one after
	// another across it, make legs of one reading a sensor.
	traverseMinReadings = 10
	// traverseSlant is the largest ratio of a leg's extent along the
	// walk to its extent across it for a traverse (about 11° from
	// square across the walk): a zig-zag's legs run slantwise.
	traverseSlant = 0.2
	// traverseWidth is the share of the swath's full width (sqrt(12)
	// times its RMS width) a traverse's extent across reaches.
	traverseWidth = 0.5
	// traverseShare is the share of the readings that lie in traverses
	// when the walk is one of traverses across it.
	traverseShare = 0.5
)

// walkedAcross reports whether the readings at x, y (in the log's order),
// whose footprint is f, were walked as traverses across f's direction:
// the walk, cut into legs where its offset across f turns back (by a
// quarter of the swath's full width, above position scatter), has at
// least three legs of traverseMinReadings or more that each run square
// across the walk (traverseSlant) over most of the swath's width
// (traverseWidth), holding at least traverseShare of the readings. A
// cart's sensors logged in turn make legs of a few readings; a zig-zag's
// legs run slantwise along the walk; a walk straight along makes one leg.
func walkedAcross(x, y []float64, f planFootprint) bool {
	full := math.Sqrt(12) * f.across
	turn := math.Max(0.25*full, 0.05)
	var a, c []float64
	for i := range x {
		if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
			continue
		}
		de, dn := x[i]-f.c[0], y[i]-f.c[1]
		a = append(a, de*f.t[0]+dn*f.t[1])
		c = append(c, -de*f.t[1]+dn*f.t[0])
	}
	// Cut the walk into legs: a leg ends at its furthest offset across
	// once the walk has come back from it by turn.
	var cuts []int // each leg's first reading
	dir, ext := 0.0, 0
	for i := range c {
		s := 0
		if len(cuts) > 0 {
			s = cuts[len(cuts)-1]
		}
		if i == 0 {
			cuts = append(cuts, 0)
			dir, ext = 0, 0
			continue
		}
		switch {
		case dir == 0:
			if math.Abs(c[i]-c[s]) > turn {
				dir, ext = math.Copysign(1, c[i]-c[s]), i
			}
		case dir*(c[i]-c[ext]) > 0:
			ext = i
		case dir*(c[ext]-c[i]) > turn:
			// Turned back: the next leg starts after the furthest
			// reading.
			cuts = append(cuts, ext+1)
			dir, ext = 0, ext+1
			if math.Abs(c[i]-c[ext]) > turn {
				dir, ext = math.Copysign(1, c[i]-c[ext]), i
			}
		}
	}
	cuts = append(cuts, len(c))
	n, in := 0, 0
	for k := 0; k+1 < len(cuts); k++ {
		lo, hi := cuts[k], cuts[k+1]
		if hi-lo < traverseMinReadings {
			continue
		}
		aLo, aHi := slices.Min(a[lo:hi]), slices.Max(a[lo:hi])
		cLo, cHi := slices.Min(c[lo:hi]), slices.Max(c[lo:hi])
		if across := cHi - cLo; across >= traverseWidth*full && aHi-aLo <= traverseSlant*across {
			n++
			in += hi - lo
		}
	}
	return n >= 3 && float64(in) >= traverseShare*float64(len(c))
}
