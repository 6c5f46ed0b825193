package main

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"undercurrent/inverse"
	"undercurrent/report"
)

// The scatter of the logged positions from reading to reading.
//
// The fits take each reading's position as exact. Positions from a
// satellite receiver without corrections scatter by centimetres to
// decimetres from one reading to the next while the sensor moves smoothly,
// and the field logged is that of the true position: the fit then meets an
// error in its variables. The misfit grows with the field's gradient (it
// is largest on the anomaly's flanks, the readings that fix the offset)
// and is uncorrelated from reading to reading, and the scatter flattens
// and widens the fitted anomaly, so depths read deep and currents high, a
// bias that more traverses do not average away (in review, 0.2 m of
// scatter on 0.1 m reading spacing over a 25 A line 1.1 m down read 3.5%
// deep and 1.5% high, 0.5 m read 22% deep and 9% high, every fit "sound";
// the only warning named conductors closer together than the fit can
// part). The walked path is smooth at the reading spacing, so the scatter
// shows in the positions' own fourth differences along each traverse, as
// the readings' noise does in the field's (dcnoise.go): x[i-2] - 4 x[i-1]
// + 6 x[i] - 4 x[i+1] + x[i+2] of independent errors of sd sigma has
// variance 70 sigma², and a straight or gently curving path none.

// jitterNoiseRatio is how many times the readings' own noise the misfit
// the positions' scatter makes (jitterMisfit) must reach for the scatter
// to matter to a fit: at twice the noise the fit's residual is over twice
// what the readings explain (root-sum-square) and the sigmas, which take
// the residual for noise, and the offset, which the flanks fix, are off.
const jitterNoiseRatio = 2

// jitterDepthShare is the scatter, as a share of the conductor's depth
// below the sensors (the width of its anomaly), from which the bias of
// depth and current matters whatever the noise: in review 14% of the
// depth read 3.5% deep, 36% read 22% deep (a bias near 1.7 times the
// share squared), so 5% reads about half a per cent deep.
const jitterDepthShare = 0.05

// positionScatter returns the scatter of the positions pts from reading to
// reading, in the order given (the log's), m: across the plan (the robust
// scale of the fourth differences of east and of north, the larger) and in
// height (of up), each 0 when there are too few readings
// (minDiffReadings) or they are not finite; and the reading spacing, m,
// the median distance between readings eight apart over eight (the
// scatter does not enter it then). The differences are taken along each
// sensor's own track (sensorTracks), not across the rows of several
// sensors logged in turn.
func positionScatter(pts [][3]float64) (plan, up, spacing float64) {
	return trackScatter(pts, sensorTracks(pts))
}

// trackScatter is positionScatter over the tracks given, each a list of
// indices into pts in the log's order, their differences pooled over the
// tracks. The plan's scatter is the larger of east's and north's, each
// its own axis's robust scale: pooled, the median of the two axes'
// differences together is that of the clean one when only one scatters,
// as a latitude rounded to 32-bit floats does (0.42 m steps at 52 N while
// the longitude keeps millimetres near 0.17 E: pooled 0.25 mm, north alone
// 34 mm; found in review, with no warning and the misfit taken for the
// sensor's noise).
func trackScatter(pts [][3]float64, tracks [][]int) (plan, up, spacing float64) {
	plan, _, up, spacing = trackScatterPooled(pts, tracks)
	return plan, up, spacing
}

// trackScatterPooled is trackScatter that also returns the plan's scatter
// pooled over east and north (the median of both axes' differences
// together), for levelMisfit: positions rounded to a centimetre on a
// steady walk make a periodic pattern on one axis, whose fourth
// differences read above the rounding's own error (up to 16 times the
// pattern's amplitude, against the square root of 70 for independent
// errors), and that check bounds the rounding by its step instead
// (positionQuantum).
func trackScatterPooled(pts [][3]float64, tracks [][]int) (plan, pooled, up, spacing float64) {
	var de, dn, dz, sp []float64
	for _, tr := range tracks {
		n := len(tr)
		if n < minDiffReadings {
			continue
		}
		for i := 2; i+2 < n; i++ {
			for k := range 3 {
				v := pts[tr[i-2]][k] - 4*pts[tr[i-1]][k] + 6*pts[tr[i]][k] - 4*pts[tr[i+1]][k] + pts[tr[i+2]][k]
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return 0, 0, 0, 0
				}
				switch k {
				case 0:
					de = append(de, math.Abs(v))
				case 1:
					dn = append(dn, math.Abs(v))
				default:
					dz = append(dz, math.Abs(v))
				}
			}
		}
		const lag = 8
		for i := 0; i+lag < n; i++ {
			a, b := pts[tr[i]], pts[tr[i+lag]]
			d := [3]float64{b[0] - a[0], b[1] - a[1], b[2] - a[2]}
			sp = append(sp, math.Sqrt(d[0]*d[0]+d[1]*d[1]+d[2]*d[2])/lag)
		}
	}
	if len(de) == 0 {
		return 0, 0, 0, 0
	}
	k := madNormal * math.Sqrt(70)
	return max(medianOf(de), medianOf(dn)) / k, medianOf(append(de, dn...)) / k, medianOf(dz) / k, medianOf(sp)
}

// maxSensorsInTurn is the most sensors logged in turn in one group's rows
// that sensorTracks looks for: a pole or cart carrying two to four.
const maxSensorsInTurn = 4

// sensorTracks splits the rows of a group, positions pts in the log's
// order, into the tracks of the sensors logged in turn in them: rows
// i, i+k, i+2k, ... for the k sensors of a pole or cart whose readings
// interleave (each sensor's reading at one time, then the next time's),
// or the one track of all rows. Two sensors on a pole at 0.3 and 0.8 m,
// or side by side 1 m apart on a cart, in one log, make successive rows
// jump between them, which the fourth differences along the rows took for
// a scatter of 0.71 m and 0.97 m (satellite positioning jitter, "fits
// miss by 452 nT", while every fit was at the 2 nT noise; found in
// review). The split is by the positions: k sensors in turn is the
// smallest period whose tracks' scatter (trackScatter, the larger of plan
// and height) is under half that of the rows in order and within half as
// much again of the least over the periods tried; scatter the same at
// every period (independent errors: positioning jitter) keeps one track.
func sensorTracks(pts [][3]float64) [][]int {
	split := func(k int) [][]int {
		tr := make([][]int, k)
		for i := range pts {
			tr[i%k] = append(tr[i%k], i)
		}
		return tr
	}
	one := split(1)
	if len(pts) < 2*minDiffReadings {
		return one
	}
	scat := make([]float64, maxSensorsInTurn+1)
	for k := 1; k <= maxSensorsInTurn && len(pts) >= k*minDiffReadings; k++ {
		// Pooled over east and north, as the split was tuned: the
		// larger axis's scatter moved the split of rounded positions
		// (TestRoundedPositionsNoFalseTurn).
		_, p, u, _ := trackScatterPooled(pts, split(k))
		scat[k] = math.Max(p, u)
	}
	if !(scat[1] > 1e-9) { // smooth to well under a micrometre: one track
		return one
	}
	least, best := scat[1], 1
	for k := 2; k <= maxSensorsInTurn && len(pts) >= k*minDiffReadings; k++ {
		if scat[k] < least {
			least, best = scat[k], k
		}
	}
	if best == 1 || !(least < 0.5*scat[1]) {
		return one
	}
	for k := 2; k < best; k++ {
		if len(pts) >= k*minDiffReadings && scat[k] <= 1.5*least {
			return split(k)
		}
	}
	return split(best)
}

// jitterMisfit returns the misfit per field component, nT RMS, that
// positions scattered by plan (across the plan) and up (in height) m make
// to the fit res of the readings at pts: the scatter times the RMS over
// the readings of the gradient of the fitted model's field (every line
// and magnetised object of the fit, the forward models inverse.Line and
// inverse.Dipole, summed; for AC as phasors) across the strongest line's
// direction in plan and in height, over the square root of 3 components,
// in quadrature. It also returns the strongest line's depth below the
// readings' mean height, m. Both are 0 without a line source, and ok is
// false for a fit that does not describe a field whose gradient means
// anything (jitterFitUsable). The strongest line alone gave a go-and-return
// pair that the readings did not separate (lines of +3717 and -3715 A at
// one place, whose fields cancel) a gradient thousands of times the pair's,
// and blamed 0.45 mm of rounding for a 35 nT misfit (found in review).
func jitterMisfit(res *inverse.Result, pts [][3]float64, plan, up float64, ac bool) (misfit, depth float64, ok bool) {
	if res == nil || len(pts) == 0 || !jitterFitUsable(res, pts) {
		return 0, 0, false
	}
	var src *inverse.SourceEstimate
	for i := range res.Sources {
		s := &res.Sources[i]
		if s.Kind == "line" && (src == nil || math.Abs(s.Current) > math.Abs(src.Current)) {
			src = s
		}
	}
	if src == nil {
		return 0, 0, false
	}
	across := [3]float64{-src.Dir[1], src.Dir[0], 0}
	if h := math.Hypot(across[0], across[1]); h > 1e-9 {
		across[0], across[1] = across[0]/h, across[1]/h
	} else {
		across = [3]float64{1, 0, 0} // a vertical line: any horizontal direction
	}
	const step = 1e-3 // m, well inside the depth of any conductor fitted
	var gh, gz, zm float64
	for _, p := range pts {
		gh += sq(modelDiff(res.Sources, p, across, step, ac))
		gz += sq(modelDiff(res.Sources, p, [3]float64{0, 0, 1}, step, ac))
		zm += p[2]
	}
	n := float64(len(pts))
	return math.Sqrt((plan*plan*gh + up*up*gz) / (3 * n)), zm/n - src.Point[2], true
}

// jitterFitUsable reports whether the fit res of the readings at pts
// describes a field whose gradient the position scatter's misfit can be
// taken from: every line's current determined (not a collapsed pair whose
// currents cancel, inverse Identifiable.Current) and below the lowest
// reading (a line above the sensors, a fit gone astray, gave 0.015 m of
// scatter a misfit of 65,000 nT; found in review), and some line carrying
// a current beyond its noise (report.NoCurrent).
func jitterFitUsable(res *inverse.Result, pts [][3]float64) bool {
	low := math.Inf(1)
	for _, p := range pts {
		low = math.Min(low, p[2])
	}
	found := false
	for i := range res.Sources {
		s := &res.Sources[i]
		if s.Kind != "line" {
			continue
		}
		if !s.Identifiable.Current || !(s.Point[2] < low) {
			return false
		}
		if !report.NoCurrent(s, false) {
			found = true
		}
	}
	return found
}

// modelDiff is the magnitude of the derivative of the field of the sources
// ss, nT per m, at p along the unit vector u, by a central difference of
// step h: lines and (DC) magnetised objects summed, for AC the lines as
// phasors of their RMS current and phase.
func modelDiff(ss []inverse.SourceEstimate, p, u [3]float64, h float64, ac bool) float64 {
	a := [3]float64{p[0] + h*u[0], p[1] + h*u[1], p[2] + h*u[2]}
	b := [3]float64{p[0] - h*u[0], p[1] - h*u[1], p[2] - h*u[2]}
	var d [3]complex128
	for i := range ss {
		s := &ss[i]
		var fa, fb [3]float64
		w := complex(1, 0)
		switch s.Kind {
		case "line":
			ln := inverse.Line{Point: s.Point, Dir: s.Dir}
			fa, fb = ln.Field(a, s.Current), ln.Field(b, s.Current)
			if ac {
				w = cmplx.Rect(1, s.Phase*math.Pi/180)
			}
		case "dipole":
			if ac {
				continue // its moment per axis has no phase here
			}
			dp := inverse.Dipole{Pos: s.Point}
			fa, fb = dp.Field(a, s.Moment), dp.Field(b, s.Moment)
		default:
			continue
		}
		for k := range 3 {
			d[k] += w * complex(fa[k]-fb[k], 0)
		}
	}
	var m float64
	for k := range 3 {
		m += real(d[k])*real(d[k]) + imag(d[k])*imag(d[k])
	}
	return 1e9 * math.Sqrt(m) / (2 * h) // T to nT
}

// jitterShown reports whether the fit res misses its readings by at least
// half the misfit m, nT per component, that the positions' scatter would
// make (res.RMS, for AC over the square root of 2, per real part).
func jitterShown(res *inverse.Result, m float64, ac bool) bool {
	r := res.RMS
	if ac {
		r /= math.Sqrt2
	}
	return r >= 0.5*m
}

// positionJitter measures each group's position scatter and the misfit it
// makes to the group's fit, sets them on the group's report.Fit
// (PositionScatter, PositionMisfit: report sharedMisfit names scattered
// positions as the cause of a misfit they explain), and returns a warning
// naming the groups where the scatter matters (jitterNoiseRatio,
// jitterDepthShare), or "" where it matters in none.
func positionJitter(sv *survey, fits []report.Fit, stated bool) string {
	var keys []string
	var scat, spac, mis, noise, share []float64
	for i, g := range sv.groups {
		if g.res == nil || i >= len(fits) {
			continue
		}
		tracks := g.memo.sensorTracks(g.points)
		plan, up, spacing := trackScatter(g.points, tracks)
		if !(plan > 0 || up > 0) {
			continue
		}
		m, depth, ok := jitterMisfit(g.res, g.points, plan, up, sv.ac)
		if !ok {
			continue
		}
		fits[i].PositionScatter = math.Max(plan, up)
		fits[i].PositionMisfit = m
		nz := g.measuredNoise(sv.ac)
		sh := 0.0
		if depth > 0 {
			sh = math.Max(plan, up) / depth
		}
		if !(nz > 0 && m > jitterNoiseRatio*nz || sh >= jitterDepthShare) {
			continue
		}
		// The fit's own residuals must show the misfit claimed: scatter
		// uncorrelated from reading to reading is not taken up by a
		// smooth model, so a fit missing the readings by under half of
		// it says the positions do not scatter so (jitterShown).
		if !jitterShown(g.res, m, sv.ac) {
			fits[i].PositionScatter, fits[i].PositionMisfit = 0, 0
			continue
		}
		key := g.key
		if key == "" {
			key = "(all)"
		}
		keys = append(keys, key)
		scat = append(scat, math.Max(plan, up))
		spac = append(spac, spacing)
		mis = append(mis, m)
		noise = append(noise, nz)
		share = append(share, sh)
	}
	if len(keys) == 0 {
		return ""
	}
	which := strings.Join(keys[:min(len(keys), 8)], ", ")
	if len(keys) > 8 {
		which += ", ..."
	}
	against := ""
	if nz := medianOf(noise); nz > 0 {
		against = fmt.Sprintf(" against the %.3g nT noise the readings themselves show", nz)
	}
	what := "so depths read deep, currents high and offsets off by more than their uncertainties, which count no position error; smooth the track or use corrected positions, or state the scatter with --position-sigma"
	if stated {
		what = "which --position-sigma counts in the fits' uncertainties and corrects on average as far as the value given holds; smooth the track or use corrected positions for tighter ones"
	}
	return fmt.Sprintf("the positions scatter from reading to reading by %.2g m (median; robust, from their fourth differences along each traverse, on %.2g m reading spacing) in %d of %d groups (%s), %.0f%% of the conductor's depth below the sensors: scattered positions (satellite positioning jitter, or positions rounded when stored) make the fits miss the readings by about %.3g nT RMS per component%s, most on the anomaly's flanks, and flatten and widen the fitted anomaly, %s",
		medianOf(scat), medianOf(spac), len(keys), len(sv.groups), which, 100*medianOf(share), medianOf(mis), against, what)
}
