package main

import (
	"math"
	"slices"
	"sort"
	"strings"

	"undercurrent/inverse"
)

// A log read beside a strong conductor (a DC rail or return cable of a
// thousand amperes and more, a busbar) has a median |B| above the Earth's
// band because most of its readings are in that conductor's field: 1000 A
// at 1.2 m gives about 170 000 nT (mu0 I / (2 pi r)). The band warning of
// checkFieldUnits then blamed the field columns' unit or scale, which the
// fits show to be right (found in review: "median |B| 8.9e4 nT outside the
// Earth's band ... unit or scale is wrong" beside a 1000 A rail fitted
// to 1000.00 A). explainedBand takes that warning back for a DC log whose
// fitted readings, with the fitted sources' field taken off, have a median
// |B| inside the band: what is left is the Earth's field in nT, so the unit
// is right and the conductors' field is the excess. (The readings pinned
// at the magnetometer's range, left out of the fits and named by their own
// warning, are commonly most of the excess: beside a 1000 A rail at 0.4 m
// the fitted readings' own median is already inside the band.) A log in
// the wrong unit keeps the warning: the Earth's field scaled by the unit's
// factor is uniform, so the fits put it in the background, not in a
// source, and what is left stays outside the band; so does a zero-field
// log, or one with the Earth's field removed, which has no Earth's field
// left to find.

// explainedBandMin is the fewest fitted readings of a log on which its
// band warning is taken back.
const explainedBandMin = 20

// explainedBand removes from sv.warnings the band warning of each DC log
// whose excess over the Earth's band the fitted sources' field accounts
// for (see above). It is called once the groups are fitted.
func explainedBand(sv *survey) {
	if sv.ac {
		return
	}
	sv.warnings = slices.DeleteFunc(sv.warnings, func(w string) bool {
		path, rest, ok := strings.Cut(w, ": median |B| is ")
		if !ok || !strings.Contains(rest, earthBand) {
			return false
		}
		left, n := fittedFieldMedian(sv, path)
		return n >= explainedBandMin && left >= earthMinNT && left <= earthMaxNT
	})
}

// fittedFieldMedian returns, over the readings of the fitted DC groups of
// log path (those whose first reading came from it), the median |B| with
// the fitted sources' field taken off, nT, and how many readings that was.
func fittedFieldMedian(sv *survey, path string) (left float64, n int) {
	var b []float64
	for _, g := range sv.groups {
		if g.from != path || g.err != nil || g.res == nil || len(g.fields) != len(g.points) {
			continue
		}
		lines, dips := fittedSources(g.res)
		if lines == nil && dips == nil {
			continue
		}
		for i, r := range g.points {
			s := g.fields[i]
			for _, l := range lines {
				d := l.line.Field(r, l.current)
				for k := range s {
					s[k] -= d[k] * 1e9
				}
			}
			for _, d := range dips {
				m := d.dip.Field(r, d.moment)
				for k := range s {
					s[k] -= m[k] * 1e9
				}
			}
			if m := math.Sqrt(s[0]*s[0] + s[1]*s[1] + s[2]*s[2]); !math.IsNaN(m) {
				b = append(b, m)
			}
		}
	}
	if len(b) == 0 {
		return 0, 0
	}
	sort.Float64s(b)
	return b[len(b)/2], len(b)
}

type fittedLine struct {
	line    inverse.Line
	current float64
}

type fittedDipole struct {
	dip    inverse.Dipole
	moment [3]float64
}

// fittedSources is a DC fit's sources as forward models (tesla).
func fittedSources(res *inverse.Result) ([]fittedLine, []fittedDipole) {
	var lines []fittedLine
	var dips []fittedDipole
	for _, s := range res.Sources {
		switch s.Kind {
		case "line":
			lines = append(lines, fittedLine{inverse.Line{Point: s.Point, Dir: s.Dir}, s.Current})
		case "dipole":
			dips = append(dips, fittedDipole{inverse.Dipole{Pos: s.Point}, s.Moment})
		}
	}
	return lines, dips
}
