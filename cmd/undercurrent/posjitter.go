package main

import (
	"fmt"
	"math"
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
// scale of the fourth differences of east and north, pooled) and in
// height (of up), each 0 when there are too few readings
// (minDiffReadings) or they are not finite; and the reading spacing, m,
// the median distance between readings eight apart over eight (the
// scatter does not enter it then).
func positionScatter(pts [][3]float64) (plan, up, spacing float64) {
	n := len(pts)
	if n < minDiffReadings {
		return 0, 0, 0
	}
	var dh, dz, sp []float64
	for i := 2; i+2 < n; i++ {
		for k := range 3 {
			v := pts[i-2][k] - 4*pts[i-1][k] + 6*pts[i][k] - 4*pts[i+1][k] + pts[i+2][k]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, 0, 0
			}
			if k < 2 {
				dh = append(dh, math.Abs(v))
			} else {
				dz = append(dz, math.Abs(v))
			}
		}
	}
	const lag = 8
	for i := 0; i+lag < n; i++ {
		d := [3]float64{pts[i+lag][0] - pts[i][0], pts[i+lag][1] - pts[i][1], pts[i+lag][2] - pts[i][2]}
		sp = append(sp, math.Sqrt(d[0]*d[0]+d[1]*d[1]+d[2]*d[2])/lag)
	}
	k := madNormal * math.Sqrt(70)
	return medianOf(dh) / k, medianOf(dz) / k, medianOf(sp)
}

// jitterMisfit returns the misfit per field component, nT RMS, that
// positions scattered by plan (across the plan) and up (in height) m make
// to the fit res of the readings at pts: the scatter times the RMS over
// the readings of the gradient of the strongest line's field across its
// direction in plan and in height (the forward model, inverse.Line),
// over the square root of 3 components, in quadrature. It also returns that
// line's depth below the readings' mean height, m. Both are 0 without a
// line source.
func jitterMisfit(res *inverse.Result, pts [][3]float64, plan, up float64) (misfit, depth float64) {
	if res == nil || len(pts) == 0 {
		return 0, 0
	}
	var src *inverse.SourceEstimate
	for i := range res.Sources {
		s := &res.Sources[i]
		if s.Kind == "line" && (src == nil || math.Abs(s.Current) > math.Abs(src.Current)) {
			src = s
		}
	}
	if src == nil {
		return 0, 0
	}
	ln := inverse.Line{Point: src.Point, Dir: src.Dir}
	across := [3]float64{-src.Dir[1], src.Dir[0], 0}
	if h := math.Hypot(across[0], across[1]); h > 1e-9 {
		across[0], across[1] = across[0]/h, across[1]/h
	} else {
		across = [3]float64{1, 0, 0} // a vertical line: any horizontal direction
	}
	const step = 1e-3 // m, well inside the depth of any conductor fitted
	cur := math.Abs(src.Current)
	var gh, gz, zm float64
	for _, p := range pts {
		gh += sq(fieldDiff(ln, p, across, step, cur))
		gz += sq(fieldDiff(ln, p, [3]float64{0, 0, 1}, step, cur))
		zm += p[2]
	}
	n := float64(len(pts))
	return math.Sqrt((plan*plan*gh + up*up*gz) / (3 * n)), zm/n - src.Point[2]
}

// fieldDiff is the magnitude of the derivative of ln's field, nT per m (current cur)
// at p along the unit vector u, by a central difference of step h.
func fieldDiff(ln inverse.Line, p, u [3]float64, h, cur float64) float64 {
	a := ln.Field([3]float64{p[0] + h*u[0], p[1] + h*u[1], p[2] + h*u[2]}, cur)
	b := ln.Field([3]float64{p[0] - h*u[0], p[1] - h*u[1], p[2] - h*u[2]}, cur)
	return 1e9 * math.Sqrt(sq(a[0]-b[0])+sq(a[1]-b[1])+sq(a[2]-b[2])) / (2 * h) // T to nT
}

// positionJitter measures each group's position scatter and the misfit it
// makes to the group's fit, sets them on the group's report.Fit
// (PositionScatter, PositionMisfit: report sharedMisfit names scattered
// positions as the cause of a misfit they explain), and returns a warning
// naming the groups where the scatter matters (jitterNoiseRatio,
// jitterDepthShare), or "" where it matters in none.
func positionJitter(sv *survey, fits []report.Fit) string {
	var keys []string
	var scat, spac, mis, noise, share []float64
	for i, g := range sv.groups {
		if g.res == nil || i >= len(fits) {
			continue
		}
		plan, up, spacing := positionScatter(g.points)
		if !(plan > 0 || up > 0) {
			continue
		}
		m, depth := jitterMisfit(g.res, g.points, plan, up)
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
	return fmt.Sprintf("the positions scatter from reading to reading by %.2g m (median; robust, from their fourth differences along each traverse, on %.2g m reading spacing) in %d of %d groups (%s), %.0f%% of the conductor's depth below the sensors: scattered positions (satellite positioning jitter) make the fits miss the readings by about %.3g nT RMS per component%s, most on the anomaly's flanks, and flatten and widen the fitted anomaly, so depths read deep, currents high and offsets off by more than their sigmas, which count no position error; smooth the track or use corrected positions",
		medianOf(scat), medianOf(spac), len(keys), len(sv.groups), which, 100*medianOf(share), medianOf(mis), against)
}
