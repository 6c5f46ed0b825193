package report

import (
	"strings"

	"undercurrent/inverse/route"
)

// BaseGapMark starts the part of a group's Problem that marks it for a gap
// in the base-station record its readings fell in (locate adds it last,
// after any other reason, with the gap in Correction.BaseGaps).
const BaseGapMark = "base gap:"

// BaseGapOnly reports whether group g is marked for review only because
// some of its readings fell in a base gap: its fit converged (OK), no
// poor-fit finding of severity caution or worse names it, and its Problem
// is the base-gap mark alone (the mark is added last, so a Problem that
// starts with it holds nothing else). Such a fit is sound; the base
// correction under it is what needs review. The terminal's summary counts
// these groups apart ("N marked for a base gap") and the crew report's
// table words their fit so. False for a nil d or g.
func (d *Document) BaseGapOnly(g *Group) bool {
	if d == nil || g == nil || !g.OK || !strings.HasPrefix(g.Problem, BaseGapMark) {
		return false
	}
	for _, f := range d.Findings {
		if f.Kind != string(route.KindPoorFit) || f.Severity == string(route.SeverityInfo) {
			continue
		}
		for _, k := range f.Groups {
			if k == g.Key {
				return false
			}
		}
	}
	return true
}

// fitDoubted reports whether the report doubts group g's fit: it carries
// a Problem (a poor or ambiguous fit, a failed one) other than the
// base-gap mark alone (BaseGapOnly). A group marked only for a base gap
// has a sound fit over readings whose base correction needs review; the
// least-cover headline had taken such a group's Problem as a poor fit,
// dropping a 10 A service 0.35 m down from the headline and calling
// conductor 1's least cover there "poor or ambiguous" over a 0.1 nT
// interpolation error (found in review).
func (d *Document) fitDoubted(g *Group) bool {
	return g.Problem != "" && !d.BaseGapOnly(g)
}
