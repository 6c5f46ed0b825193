package report

import (
	"slices"
	"strings"
)

// leftOutReason is why a route's station was left out of its conductor's
// current and cover profile (Station.Used false).
type leftOutReason int

const (
	// leftUsed: the station was used.
	leftUsed leftOutReason = iota
	// leftFailed: its group's fit failed or found no current; it has no
	// value.
	leftFailed
	// leftObject: its field was taken for a magnetised object (a
	// dipole-anomaly finding names its group).
	leftObject
	// leftPastEnd: it lies past the conductor's end (inverse/route
	// ends.go): its fit is sound but finds only the field beyond the end,
	// a line far deeper and weaker than the conductor, and the current-step
	// finding that the conductor appears to end names its group.
	leftPastEnd
	// leftUnplaced: its group's fit converged but leaves too few degrees
	// of freedom to place the conductor (unplacedFit, its problem says
	// so): it takes no part in the route's line and chainage either.
	leftUnplaced
	// leftOther: left out for a reason the document does not name.
	leftOther
)

// whyLeftOut says why station st of the route of conductor (0 for the
// route, conductor 1; else a further conductor's Track.Number) was left
// out. The route marks a station unused when its group's fit failed
// (Group.OK false), when the fit leaves too few degrees of freedom to
// place the conductor, when it is taken for a magnetised object, or when
// it lies past the conductor's end; the document keeps only Used, so the
// reason is read from the group and the findings that name it. Before, a
// station past an end was called a magnetised object in the figures'
// legend and in results.csv's left_out, where no object finding exists.
func (d *Document) whyLeftOut(st *Station, conductor int) leftOutReason {
	if st.Used {
		return leftUsed
	}
	for i := range d.Groups {
		if d.Groups[i].Key == st.Key && !d.Groups[i].OK {
			return leftFailed
		}
	}
	names := func(kind string) bool {
		for i := range d.Findings {
			f := &d.Findings[i]
			if f.Kind == kind && f.Conductor == conductor && !f.Lone && slices.Contains(f.Groups, st.Key) {
				return true
			}
		}
		return false
	}
	if names("dipole-anomaly") {
		return leftObject
	}
	// Before the steps: a step between the stations either side of an
	// unplaced one may name it.
	for i := range d.Groups {
		if g := &d.Groups[i]; g.Key == st.Key && strings.Contains(g.Problem, fewDOFMark) {
			return leftUnplaced
		}
	}
	if names("current-step") {
		return leftPastEnd
	}
	return leftOther
}
