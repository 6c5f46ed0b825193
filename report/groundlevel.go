package report

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"undercurrent/inverse"
)

// This file holds what Build checks and does about the ground the depths
// and cover are taken from (found in review):
//
//   - With --sensor-height and depths below each group's mean sensor
//     height, cover = depth - H held only where the ground under the whole
//     traverse is level with the ground above the conductor. A ditch beside
//     a cable read 0.81 ± 0.02 m of cover for 1.10, and a cross-slope under
//     an off-centre traverse 1.50 for 1.10. With heights in the log, each
//     reading's height minus H is the ground under it, so a line's depth is
//     now measured below the sensors' height where they pass over it
//     (groundAtLines, localSensorZ).
//   - Sensors at different heights on one pole or cart: depths are below
//     the mean height of all of them, and --sensor-height is that mean's
//     height above the ground; given as one sensor's height the cover was
//     0.25 m too deep at ±0.0003 m, with no word (stackedHeights).
//   - --reference-z is one flat level for the whole survey. On a route whose
//     sensors climbed 2.4 m above it, good fits were declared failed ("no
//     buried conductor lies there"); a ground level given above every sensor
//     (an ellipsoidal height for a latitude/longitude/height log, whose up
//     is relative to the origin) gave 31 m of cover, all "sound", with no
//     word (referenceLevelWarnings, levelOff).

// Limits of localSensorZ: readings within localGroundReach of the nearest
// one to the line's point are taken (enough either side of it for a
// straight-line fit of their heights, little enough to keep a ditch 1 m
// beside a cable out), and none when the nearest lies over
// localGroundFar from the point (the ground at the conductor is then not
// read from the sensors: a traverse ending short of it).
const (
	localGroundReach = 0.75
	localGroundFar   = 1.0
	// groundShiftMin is the least change of reference, m, applied: below
	// it the depths stay below the mean height (a millimetre is far inside
	// any ground level's uncertainty, and flat logs keep their numbers to
	// the last digit).
	groundShiftMin = 0.005
)

// localSensorZ returns the sensors' height where they pass over the plan
// position at (its east and north): the readings of pts within
// localGroundReach of the nearest one's distance from at, their heights
// fitted by least squares as a plane in east and north (a straight line
// along a traverse, when they lie along one) and taken at at, with the
// standard error of that value from the fit's residuals. ok is false when
// no reading lies within localGroundFar of at in plan.
func localSensorZ(pts [][3]float64, at [3]float64) (z, se float64, ok bool) {
	if len(pts) == 0 {
		return 0, 0, false
	}
	dmin := math.Inf(1)
	for _, p := range pts {
		dmin = math.Min(dmin, math.Hypot(p[0]-at[0], p[1]-at[1]))
	}
	if !(dmin <= localGroundFar) {
		return 0, 0, false
	}
	var win [][3]float64
	for _, p := range pts {
		if math.Hypot(p[0]-at[0], p[1]-at[1]) <= dmin+localGroundReach {
			win = append(win, p)
		}
	}
	n := float64(len(win))
	// Plan spread of the window: its principal directions.
	ce, cn, see, snn, sen := inverse.PlanScatter(win)
	l1, l2, ang := inverse.PlanPrincipal(see, snn, sen)
	// Unit vectors along the principal directions.
	u := [2]float64{math.Cos(ang), math.Sin(ang)}
	v := [2]float64{-u[1], u[0]}
	// Coordinates along the directions that are spread (over 5 cm sd).
	var axes [][2]float64
	if l1/n > 0.0025 {
		axes = append(axes, u)
	}
	if l2/n > 0.0025 {
		axes = append(axes, v)
	}
	k := len(axes) + 1
	if len(win) < k+2 {
		axes, k = nil, 1
	}
	// Least squares z = a + b·(x along the axes), centred on the window,
	// by the normal equations (at most 3 by 3).
	row := func(p [3]float64) []float64 {
		r := []float64{1}
		for _, a := range axes {
			r = append(r, (p[0]-ce)*a[0]+(p[1]-cn)*a[1])
		}
		return r
	}
	ata := make([][]float64, k)
	for i := range ata {
		ata[i] = make([]float64, k)
	}
	atb := make([]float64, k)
	for _, p := range win {
		r := row(p)
		for i := 0; i < k; i++ {
			atb[i] += r[i] * p[2]
			for j := 0; j < k; j++ {
				ata[i][j] += r[i] * r[j]
			}
		}
	}
	inv, good := invSmall(ata)
	if !good {
		return 0, 0, false
	}
	coef := make([]float64, k)
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			coef[i] += inv[i][j] * atb[j]
		}
	}
	r0 := row(at)
	for i := 0; i < k; i++ {
		z += coef[i] * r0[i]
	}
	var rss float64
	for _, p := range win {
		r := row(p)
		f := 0.0
		for i := 0; i < k; i++ {
			f += coef[i] * r[i]
		}
		rss += (p[2] - f) * (p[2] - f)
	}
	if dof := len(win) - k; dof > 0 {
		s2 := rss / float64(dof)
		var q float64
		for i := 0; i < k; i++ {
			for j := 0; j < k; j++ {
				q += r0[i] * inv[i][j] * r0[j]
			}
		}
		se = math.Sqrt(math.Max(s2*q, 0))
	}
	return z, se, true
}

// invSmall inverts a symmetric matrix of order 1 to 3 by Gauss-Jordan
// elimination; ok is false when it is singular.
func invSmall(a [][]float64) (inv [][]float64, ok bool) {
	k := len(a)
	m := make([][]float64, k)
	for i := range m {
		m[i] = make([]float64, 2*k)
		copy(m[i], a[i])
		m[i][k+i] = 1
	}
	for c := 0; c < k; c++ {
		p := c
		for r := c + 1; r < k; r++ {
			if math.Abs(m[r][c]) > math.Abs(m[p][c]) {
				p = r
			}
		}
		if !(math.Abs(m[p][c]) > 1e-12) {
			return nil, false
		}
		m[c], m[p] = m[p], m[c]
		d := m[c][c]
		for j := range m[c] {
			m[c][j] /= d
		}
		for r := 0; r < k; r++ {
			if r != c && m[r][c] != 0 {
				f := m[r][c]
				for j := range m[r] {
					m[r][j] -= f * m[c][j]
				}
			}
		}
	}
	inv = make([][]float64, k)
	for i := range inv {
		inv[i] = m[i][k:]
	}
	return inv, true
}

// groundAtLines measures the depths of f's lines below the sensors' height
// where they pass over each line (localSensorZ at the line's point), in
// place of their mean height, when the sensors' height above the ground is
// given (Build's SensorHeight) and the depths are below the mean sensor
// height: with heights in the log, that height minus SensorHeight is the
// ground over the line, so cover = depth - SensorHeight holds over a ditch
// or a cross-slope under the traverse. The change is made only where it is
// over groundShiftMin and twice its standard error (a jittery logged height
// leaves the depths as they were), and that standard error is added to the
// depth's sigma in quadrature. f.Result is replaced by a copy whose Notes
// end with the note saying what was done (returned; "" when nothing was,
// or f's result was already so measured). Dipoles keep their depths.
func groundAtLines(f *Fit) (note string) {
	res := f.Result
	if res == nil || res.DepthReference != "mean sensor height" || f.Problem == nil || len(f.Problem.Points) == 0 {
		return ""
	}
	for _, n := range res.Notes {
		if strings.HasPrefix(n, GroundAtLinesNote) {
			return "" // measured so already (a copy of a result so measured)
		}
	}
	pts := f.Problem.Points
	shift := func(at [3]float64) (dz, se float64, ok bool) {
		z, se, ok := localSensorZ(pts, at)
		if !ok {
			return 0, 0, false
		}
		dz = z - res.ReferenceZ
		if !(math.Abs(dz) > groundShiftMin && math.Abs(dz) > 2*se) {
			return 0, 0, false
		}
		return dz, se, true
	}
	cp := *res
	changed := false
	var first string
	cp.Sources = slices.Clone(res.Sources)
	for i := range cp.Sources {
		s := &cp.Sources[i]
		if s.Kind == KindDipole {
			continue
		}
		dz, se, ok := shift(s.Point)
		if !ok {
			continue
		}
		if !changed {
			first = fmt.Sprintf("the sensors pass over its strongest line at up = %.2f m, %+.2f m from their mean, up = %.2f m", res.ReferenceZ+dz, dz, res.ReferenceZ)
			if i != 0 {
				first = fmt.Sprintf("the sensors pass over line %d at up = %.2f m, %+.2f m from their mean, up = %.2f m", i+1, res.ReferenceZ+dz, dz, res.ReferenceZ)
			}
		}
		changed = true
		s.Depth += dz
		s.DepthSigma = math.Hypot(s.DepthSigma, se)
	}
	for _, ps := range []*[]inverse.PairEstimate{&cp.Pairs, &cp.Opposed, &cp.SameWay} {
		if *ps == nil {
			continue
		}
		*ps = slices.Clone(*ps)
		for i := range *ps {
			p := &(*ps)[i]
			if dz, se, ok := shift(p.Point); ok {
				changed = true
				p.Depth += dz
				p.DepthSigma = math.Hypot(p.DepthSigma, se)
			}
		}
	}
	if !changed {
		return ""
	}
	note = GroundAtLinesNote + " (" + first + ")"
	cp.Notes = append(slices.Clone(res.Notes), note)
	f.Result = &cp
	return note
}

// GroundAtLinesNote starts the note of a group whose depths groundAtLines
// measured below the sensors' height over each line.
const GroundAtLinesNote = "depths are below the sensors' height where they pass over each line, not their mean height, so that cover = depth - sensor height takes the ground there from the logged heights"

// stackedHeights looks for readings of one group taken at the same place in
// plan (within 2 cm) at heights over 5 cm apart: several sensors on one pole
// or cart. It returns the largest such height difference, m, and how far the
// readings' mean height lies above the lowest sensor's, m, with ok true when
// at least a fifth of the readings are so stacked.
func stackedHeights(pts [][3]float64) (spread, aboveLowest float64, ok bool) {
	const cell = 0.02
	type key struct{ e, n int64 }
	cells := map[key][]int{}
	for i, p := range pts {
		k := key{int64(math.Floor(p[0] / cell)), int64(math.Floor(p[1] / cell))}
		cells[k] = append(cells[k], i)
	}
	stacked := 0
	var sumAbove float64
	var nAbove int
	for _, idx := range cells {
		if len(idx) < 2 {
			continue
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, i := range idx {
			lo, hi = math.Min(lo, pts[i][2]), math.Max(hi, pts[i][2])
		}
		if hi-lo <= 0.05 {
			continue
		}
		stacked += len(idx)
		spread = math.Max(spread, hi-lo)
		for _, i := range idx {
			sumAbove += pts[i][2] - lo
			nAbove++
		}
	}
	if stacked*5 < len(pts) || nAbove == 0 {
		return 0, 0, false
	}
	return spread, sumAbove / float64(nAbove), true
}

// sensorHeightNotes are Build's notes about --sensor-height: groups
// whose readings stand at several heights at one place (stackedHeights),
// where depths are below the mean height of all the sensors and the height
// given is taken as that mean's. A note, not a warning: the height given
// is the mean's as documented, and the note fired on every run with
// stacked sensors, the right height given or not (found in review). Relief under a traverse draws no warning: with
// heights logged, the ground is read over each line (groundAtLines), and a
// sloping GNSS survey would draw it in every group.
func sensorHeightNotes(fits []Fit, h float64) []string {
	if !(h > 0) {
		return nil
	}
	var out []string
	var stacked []string
	var spread, above float64
	for _, f := range fits {
		if f.Problem == nil || len(f.Problem.Points) == 0 {
			continue
		}
		if s, a, ok := stackedHeights(f.Problem.Points); ok {
			stacked = append(stacked, f.Key)
			spread = math.Max(spread, s)
			above = math.Max(above, a)
		}
	}
	if len(stacked) > 0 {
		// A run without --group-by fits one group with no name: the
		// note read "... cart) in : depths ..." (found in review).
		var named []string
		for _, k := range stacked {
			if k != "" {
				named = append(named, k)
			}
		}
		where := ""
		if len(named) > 0 {
			where = " in " + groupList(named)
		}
		out = append(out, fmt.Sprintf("readings taken at one place stand at heights up to %.2f m apart (several sensors on one pole or cart)%s: depths are below the mean height of all the sensors, and --sensor-height (%.2f m) is taken as that mean height above the ground, not one sensor's; here the mean lies %.2f m above the lowest sensor, so if %.2f m is the lowest sensor's height, give %.2f m",
			spread, where, h, above, h, h+above))
	}
	return out
}

// groupList names up to five groups, and how many more.
func groupList(keys []string) string {
	if len(keys) <= 5 {
		return strings.Join(keys, ", ")
	}
	return fmt.Sprintf("%s and %d more", strings.Join(keys[:5], ", "), len(keys)-5)
}

// levelFlat and levelHigh, m: the groups' mean sensor heights above a
// --reference-z level that differ by more than levelFlat say one flat level
// does not hold for the survey. Heights within levelFlat of each other but
// all over levelHigh (higher than a hand-carried sensor) hold the level
// fine, as on a mast or a boom, or a log whose up is not from the ground:
// they draw only a note asking whether the level is the ground, and set no
// fit aside (a level simply mistyped keeps its own message per group).
//
// levelAtSensors, m: every group's mean sensor height within it of the
// level says the level is the sensors' own height, not the ground's (a
// carried or cart sensor never runs at ground level; the lowest sensors in
// testdata/scenarios stand 0.25 m up). On a latitude/longitude/height
// log --reference-z 0 is the origin's height, by default the first
// reading's: the walk-through survey read so gave 1.6503 ± 0.0025 m of
// least cover for 1.40, 0.25 m (the sensor height) too much, with no word
// (found in review).
const (
	levelFlat      = 0.5
	levelHigh      = 2.5
	levelAtSensors = 0.05
)

// referenceLevelWarnings checks a --reference-z level (ReferenceZ of the
// fits, or of their settings) against the sensors' own heights: the
// warnings, and the keys of the groups whose sensors stand so high above
// the level, against the lowest group's, that a line placed above it says
// nothing of the data (levelOff). origin, when not nil, is the WGS84
// origin of a geo-referenced log, whose height up is measured from.
func referenceLevelWarnings(fits []Fit, origin *Origin) (warn []string, off map[string]float64) {
	zref, ok := 0.0, false
	for _, f := range fits {
		if f.Result != nil && f.Result.DepthReference == "ReferenceZ" {
			zref, ok = f.Result.ReferenceZ, true
			break
		}
		if f.Result == nil && f.Settings != nil && f.Settings.ReferenceZ != nil {
			zref, ok = *f.Settings.ReferenceZ, true
		}
	}
	if !ok {
		return nil, nil
	}
	type gh struct {
		key string
		h   float64
	}
	var hs []gh
	zmax := math.Inf(-1)
	for _, f := range fits {
		if f.Problem == nil || len(f.Problem.Points) == 0 {
			continue
		}
		var s float64
		for _, p := range f.Problem.Points {
			s += p[2]
			zmax = math.Max(zmax, p[2])
		}
		hs = append(hs, gh{f.Key, s/float64(len(f.Problem.Points)) - zref})
	}
	if len(hs) == 0 {
		return nil, nil
	}
	lo, hi := hs[0], hs[0]
	for _, g := range hs {
		if g.h < lo.h {
			lo = g
		}
		if g.h > hi.h {
			hi = g
		}
	}
	frame := ""
	if origin != nil {
		frame = fmt.Sprintf(" On a latitude/longitude/height log, up is measured from the origin's height (%.2f m in the log's height datum), so up = %g m is height %.2f m there; give --reference-z as the ground's height in that datum minus %.2f m.",
			origin.H, zref, origin.H+zref, origin.H)
	}
	name := func(k string) string {
		if k == "" {
			return ""
		}
		return " (" + k + ")"
	}
	if math.Abs(lo.h) <= levelAtSensors && math.Abs(hi.h) <= levelAtSensors {
		cm := func(x float64) string {
			if s := fmt.Sprintf("%.2f", x); s != "-0.00" {
				return s
			}
			return "0.00"
		}
		span := cm(lo.h) + " m"
		if cm(hi.h) != cm(lo.h) {
			span = cm(lo.h) + " m to " + cm(hi.h) + " m"
		}
		at := ""
		if origin != nil {
			at = fmt.Sprintf(" On a latitude/longitude/height log, up is measured from the origin's height (%.2f m in the log's height datum; the first reading's unless --origin gives another), so up = %g m is height %.2f m there; give --reference-z as the ground's height in that datum minus %.2f m.",
				origin.H, zref, origin.H+zref, origin.H)
		}
		warn = append(warn, fmt.Sprintf("the ground level given with --reference-z, up = %g m, lies at the sensors' own height or within 5 cm of it: their mean height above it is %s on every traverse, and carried or cart-mounted sensors seldom run that close to the ground. If the level is not the ground's, depths and cover are measured from near the sensors, and the cover is too large by the sensors' height above the ground; give that height with --sensor-height instead, or the ground's own level with --reference-z (a sensor dragged or sledged on the ground is the exception: then the level holds).%s",
			zref, span, at))
		return warn, nil
	}
	if zref > zmax {
		warn = append(warn, fmt.Sprintf("the ground level given with --reference-z, up = %g m, lies above every reading (the highest at up = %.2f m): carried sensors would be buried, so the depths and cover below it are not to be trusted.%s",
			zref, zmax, frame))
		return warn, nil
	}
	if lo.h < 0 {
		warn = append(warn, fmt.Sprintf("the ground level given with --reference-z, up = %g m, lies %.2f m above the mean height of the sensors%s: check the level given.%s",
			zref, -lo.h, name(lo.key), frame))
	}
	if hi.h-lo.h <= levelFlat {
		if lo.h > levelHigh {
			span := fmt.Sprintf("%.2f m", lo.h)
			if fmt.Sprintf("%.2f", hi.h) != fmt.Sprintf("%.2f", lo.h) {
				span = fmt.Sprintf("%.2f m to %.2f m", lo.h, hi.h)
			}
			warn = append(warn, fmt.Sprintf("the sensors stand %s above the ground level given with --reference-z (up = %g m) on every traverse: is that the ground? Depths and cover are measured below it; if the sensors were carried that high (a mast or a boom) they stand, otherwise give the ground's level, or the sensors' height above the ground with --sensor-height.%s",
				span, zref, frame))
		}
		return warn, nil
	}
	off = map[string]float64{}
	var offKeys []string
	for _, g := range hs {
		if g.h-lo.h > levelFlat {
			off[g.key] = g.h
			offKeys = append(offKeys, g.key)
		}
	}
	// The currents, not only the depths, depend on the level where it
	// does not hold: a line above it sets the group aside. (Two lines
	// close together are summed by their distance below the sensors since
	// the same-way test stopped using the level; before, on a weld main
	// whose sensors climbed 2 m, two splits were no longer summed and two
	// false current steps stood beside traverses this warning had said
	// only the depths of; found in review.)
	where := fmt.Sprintf("%d groups", len(offKeys))
	switch {
	case len(offKeys) == 1:
		where = "group " + offKeys[0]
	case len(offKeys) > 1:
		where = fmt.Sprintf("%d groups, %s to %s", len(offKeys), offKeys[0], offKeys[len(offKeys)-1])
	}
	warn = append(warn, fmt.Sprintf("one flat ground level (--reference-z, up = %g m) does not hold for this survey: the sensors' mean height above it runs from %.2f m%s to %.2f m%s. Depths and cover below it are wrong where the ground is not at that level, and so can be the currents and the current findings there (%s, over %.1f m higher above it than the lowest): a line placed above it says nothing of the data, so such a group is set aside, out of the current profile as well as the cover; current steps beside those groups can be false or missed. Give the sensors' height above the ground with --sensor-height instead (with heights in the log, the ground then follows them).%s",
		zref, lo.h, name(lo.key), hi.h, name(hi.key), where, levelFlat, frame))
	return warn, off
}

// perGroupReference says whether the fits' depths below the sensors are
// measured from more than one height (DepthReference.PerGroup): mean sensor
// heights over a centimetre apart, or depths below the sensors' height over
// each line (GroundAtLinesNote). On a route climbing 2.4 m, results.json
// and the report had given the first traverse's mean height as the one
// reference for every station.
func perGroupReference(fits []Fit) bool {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, f := range fits {
		if f.Result == nil || f.Result.DepthReference != "mean sensor height" {
			continue
		}
		lo, hi = math.Min(lo, f.Result.ReferenceZ), math.Max(hi, f.Result.ReferenceZ)
		for _, n := range f.Result.Notes {
			if strings.HasPrefix(n, GroundAtLinesNote) {
				return true
			}
		}
	}
	return hi-lo > 0.01
}
