package main

import (
	"fmt"
	"math"
	"sort"

	"undercurrent/inverse"
)

// Drift of the Earth's field that is not a straight line in time.
//
// driftWarning (drift.go) looks for one steady rate over the survey. A real
// afternoon's variation is no straight line: over a 4.5-hour walk of a 2 km
// pipeline (41 traverses, one every 6.7 minutes) with the Boulder
// observatory's minutes of a disturbed afternoon added (2014-11-02 from
// 13:30 UTC; east range 54.5 nT, north 24.3, up 9.7), the groups'
// backgrounds wandered by 13.2/7.0/2.3 nT RMS (east/north/up) against
// their own sigmas of 0.08-0.1 nT, no straight line held them, and no word
// was said while one traverse became a false go-and-return pair and others
// were 4-6 sigma off (found in review). Without drift the same walk's
// backgrounds scatter by 0.50/0.14/0.64 nT, the welds' and the route's
// own.
//
// curvedDriftWarning tells the two apart by how the backgrounds follow
// time. Of each axis's backgrounds, in time order, less the straight line
// in time through them (one steady rate is driftWarning's case), with
// variance s² and mean squared successive difference d², the part of the
// scatter that follows a curve in time is
//
//	A² = s² - d²/2
//
// (von Neumann's ratio d²/s² is 2 for independent scatter, and near 0 for
// a curve sampled finely enough; common practice). It warns when all of
// these hold, in a DC run without a base log:
//
//   - the groups' readings span at least curveMinSpan (an hour: over
//     hours the Earth's field varies by tens of nT, and a shorter run is
//     driftWarning's);
//   - on some axis A exceeds curveK times the backgrounds' median sigma
//     (there 79 times east);
//   - on no axis does that curve (the backgrounds less the straight line)
//     range over more than curveMaxRange. The Boulder observatory's
//     minutes (../shared/data/iaga2002, 1 and 2 November 2014) less a
//     straight line over any 1 to 4.5 hours range over 60 nT at most
//     (east, the disturbed afternoon); a site's own field walked in
//     order ranged over 240-950 nT in review (a tee's branch, a bend's far
//     leg, a service crossing, a line ending past the traverses), and
//     that was all the curve there was. Backgrounds the site's field
//     fills so far say nothing of the Earth's;
//   - taking out of each group's readings the drift the backgrounds give
//     it (the slope of a straight line through its own and its
//     neighbours' backgrounds in time, per axis) moves some group's
//     strongest line's current, depth or offset by over curveShiftK of
//     its sigmas, and curveMinMoved groups' by over driftShiftK: the
//     results are off by more than their uncertainties say.
//
// The site's own field can still look alike where it changes along the
// route by less than curveMaxRange; the warning says a base log tells the
// two apart. A storm's variation beyond curveMaxRange is taken for the
// site's, unwarned here (driftWarning may still see its steady part). It
// is not corrected: the neighbours' slope, from traverses minutes apart,
// is not the drift within a traverse (the within-traverse part of a
// disturbed field changes faster than the groups sample it; taking it
// out raised the chi-square in the real case, so the fits' chi-square
// does not tell the Earth's drift from the site's field either).
const (
	curveMinSpan   = 3600.0 // s
	curveK         = 10.0
	curveMinGroups = 5
	curveMaxRange  = 150.0 // nT
	curveShiftK    = 3.0
	curveMinMoved  = 3
)

// curvedDriftWarning returns the warning above, or "" (a base log given,
// an AC survey, no times, too few groups, a short run, or no such drift).
// It is not given beside driftWarning's.
func curvedDriftWarning(o *locateOptions, sv *survey) string {
	if o.base != "" || sv.ac {
		return ""
	}
	gs, ok := driftGroups(sv)
	n := len(gs)
	if !ok || n < curveMinGroups {
		return ""
	}
	sort.SliceStable(gs, func(i, j int) bool { return gs[i].mean < gs[j].mean })
	first, last := math.Inf(1), math.Inf(-1)
	for _, d := range gs {
		first, last = math.Min(first, d.mean-d.span/2), math.Max(last, d.mean+d.span/2)
	}
	span := last - first
	if !(span >= curveMinSpan) {
		return ""
	}
	var tm, stt float64
	for _, d := range gs {
		tm += d.mean / float64(n)
	}
	for _, d := range gs {
		stt += (d.mean - tm) * (d.mean - tm)
	}
	if !(stt > 0) {
		return ""
	}
	var smooth, sig, lo, hi [3]float64
	follows := false
	for a := range 3 {
		var m, sbt float64
		sigmas := make([]float64, n)
		lo[a], hi[a] = math.Inf(1), math.Inf(-1)
		for i, d := range gs {
			b := d.g.res.Background[a]
			m += b / float64(n)
			sigmas[i] = d.g.res.BackgroundSigma[a]
			lo[a], hi[a] = math.Min(lo[a], b), math.Max(hi[a], b)
		}
		for _, d := range gs {
			sbt += (d.mean - tm) * (d.g.res.Background[a] - m)
		}
		slope := sbt / stt
		// The backgrounds less the straight line: their variance, mean
		// squared successive difference and range.
		var s2, d2, prev float64
		rlo, rhi := math.Inf(1), math.Inf(-1)
		for i, d := range gs {
			e := d.g.res.Background[a] - m - slope*(d.mean-tm)
			s2 += e * e / float64(n)
			if i > 0 {
				d2 += (e - prev) * (e - prev) / float64(n-1)
			}
			prev = e
			rlo, rhi = math.Min(rlo, e), math.Max(rhi, e)
		}
		if rhi-rlo > curveMaxRange {
			return "" // the site's own field
		}
		sig[a] = medianOf(sigmas)
		smooth[a] = math.Sqrt(math.Max(0, s2-d2/2))
		if sig[a] > 0 && smooth[a] > curveK*sig[a] {
			follows = true
		}
	}
	if !follows {
		return ""
	}
	// Each group's drift from its own and its neighbours' backgrounds,
	// and the fits with it taken out.
	set := o.fitSettings()
	var shift float64
	moved := 0
	rates := make([]float64, 0, n)
	for i, d := range gs {
		j, k := max(i-1, 0), min(i+1, n-1)
		rate := localRate(gs[j : k+1])
		rates = append(rates, math.Sqrt(rate[0]*rate[0]+rate[1]*rate[1]+rate[2]*rate[2]))
		_, q := d.detrended(sv, o, rate)
		r, err := inverse.FitLines(q, set)
		if err != nil {
			continue
		}
		z := driftShift(d.g.res, r)
		if z > driftShiftK {
			moved++
		}
		shift = math.Max(shift, z)
	}
	if !(shift > curveShiftK) || moved < curveMinMoved {
		return ""
	}
	return fmt.Sprintf("no base station log was given (--base), and the Earth's field changed while the traverses were walked, not at one steady rate (or the site's own field changed along the route): over the walk's %s the groups' backgrounds range over %.3g nT east, %.3g north and %.3g up, following the time they were walked on a curve, not a straight line (each near the traverses walked before and after it; %.2g, %.2g and %.2g nT of their scatter about a straight line follow such a curve, against their own uncertainties of %.2g, %.2g and %.2g nT), as the Earth's field changes over hours (tens of nT on a disturbed afternoon); the fits take its change along each traverse for part of the conductor's field, and taking out the drift the neighbouring traverses give (a median %.3g nT a minute) moves the current, depth or offset of %s by more than its uncertainty (by up to %.2g times), so the results are off by more than their uncertainties say (a false go-and-return pair or a loss placed between the wrong traverses can follow); the site's own field changing along the route would look alike, and a base station log given with --base tells them apart and takes the Earth's change out",
		hoursWords(span), hi[0]-lo[0], hi[1]-lo[1], hi[2]-lo[2], smooth[0], smooth[1], smooth[2], sig[0], sig[1], sig[2], 60*medianOf(rates), plural(moved, "group"), shift)
}

// localRate is the slope in time, per axis, of a straight line through the
// backgrounds of gs (least squares over their mean times), nT/s; zero when
// their times do not differ.
func localRate(gs []driftGroup) [3]float64 {
	var rate [3]float64
	var tm float64
	for _, d := range gs {
		tm += d.mean / float64(len(gs))
	}
	var stt float64
	for _, d := range gs {
		stt += (d.mean - tm) * (d.mean - tm)
	}
	if !(stt > 0) {
		return rate
	}
	for a := range 3 {
		var sbt float64
		for _, d := range gs {
			sbt += (d.mean - tm) * d.g.res.Background[a]
		}
		rate[a] = sbt / stt
	}
	return rate
}

// hoursWords says a duration in seconds as hours and minutes ("4 h 28 min",
// "52 min").
func hoursWords(s float64) string {
	m := int(math.Round(s / 60))
	if m < 60 {
		return fmt.Sprintf("%d min", m)
	}
	return fmt.Sprintf("%d h %02d min", m/60, m%60)
}
