package report

import (
	"fmt"
	"slices"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// Fits whose automatic count stopped at its maximum while one line more
// still fitted better (inverse.MoreLinesNote).
//
// In review, a street of six conductors in an 8 m traverse window was
// fitted with four lines at most: 11 of 15 traverses were "sound", their
// currents 10-38 sigma off, and nothing said that more lines were there
// (over an AC crossing, a 60 A feeder read 79.6 +/- 1.1 A). Such a group
// is now not sound: its problem says so, and the route holds one caution
// naming every group of the kind, so that a crew reads it once and not at
// every traverse.

// moreConductorsProblem is the group's problem (Group.Problem) and the
// finding's reason for a fit carrying inverse.MoreLinesNote.
const moreConductorsProblem = inverse.MoreLinesNote + ": the count of lines stopped at its maximum while one line more still fits the readings better, so the currents and depths of the lines reported are biased by the conductors left out, beyond their sigmas (see the group's notes)"

// moreConductorsFindings marks each converged group whose fit carries
// inverse.MoreLinesNote as used with care (its Problem) and adds to r one
// poor-fit caution naming them all, in route order; groups are d.Groups in
// the order of fits.
func moreConductorsFindings(groups []Group, fits []Fit, r *route.Route) {
	held := map[string]bool{}
	maxCount := 0
	for i := range fits {
		f := &fits[i]
		if f.Result == nil || i >= len(groups) || !groups[i].OK {
			continue
		}
		for _, n := range f.Result.Notes {
			if strings.HasPrefix(n, inverse.MoreLinesNote) {
				held[f.Key] = true
				maxCount = max(maxCount, len(groups[i].Criteria)) // counts tried: 1..maximum
				g := &groups[i]
				if !strings.Contains(g.Problem, inverse.MoreLinesNote) {
					if g.Problem != "" {
						g.Problem += "; "
					}
					g.Problem += moreConductorsProblem
				}
				break
			}
		}
	}
	if len(held) == 0 || r == nil {
		return
	}
	fd := route.Finding{Kind: route.KindPoorFit, Severity: route.SeverityCaution}
	for i := range r.Stations {
		p := &r.Stations[i]
		if !held[p.Key] || slices.Contains(fd.Keys, p.Key) {
			continue
		}
		if len(fd.Keys) == 0 {
			fd.From, fd.Position = p.Chainage, p.Point
		}
		fd.To = p.Chainage
		fd.Keys = append(fd.Keys, p.Key)
	}
	if len(fd.Keys) == 0 {
		return
	}
	count := ""
	if maxCount > 0 {
		count = fmt.Sprintf(" of %d lines", maxCount)
	}
	fd.Message = fmt.Sprintf("%s at %s: the fits stopped at their maximum%s while one line more still fits the readings better, so more conductors lie here than the fits hold, and the lines reported take up their field: their currents and depths are biased beyond their sigmas, and a conductor may be missing; these fits are used with care (fit again with a higher --max-count)",
		inverse.MoreLinesNote, keyList(fd.Keys), count)
	fd.Reasons = []string{moreConductorsProblem}
	r.Findings = append(r.Findings, fd)
	sortFindings(r.Findings)
}
