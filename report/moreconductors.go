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
// finding's reason for a fit carrying inverse.MoreLinesNote, worded by the
// group's own count of lines and the most it may choose: a count below
// the maximum is noted only where the fit at the maximum collapsed into a
// line dipole (a count stopped below it by angles the traverse does not
// determine is not: the further lines there took up a model error, a tee
// or a conductor's end, and the route's caution had said "their maximum
// of 4 lines" over fits of one).
func moreConductorsProblem(count, maxCount int) string {
	if count >= maxCount || count <= 0 {
		return fmt.Sprintf("%s: the count of lines stopped at its maximum%s while one line more still fits the readings better, so the currents and depths of the lines reported are biased by the conductors left out, beyond their sigmas (see the group's notes)",
			inverse.MoreLinesNote, maxLinesWord(maxCount))
	}
	return fmt.Sprintf("%s: the count stopped at %s, short of its maximum of %d, as %d lines fit the readings better but two of them collapsed into a line dipole (standing for more lines), so the currents and depths of the lines reported are biased by the conductors left out, beyond their sigmas (see the group's notes)",
		inverse.MoreLinesNote, linesWord(count), maxCount, maxCount)
}

// maxLinesWord words a maximum count of lines (" of 4 lines"), "" when unknown.
func maxLinesWord(maxCount int) string {
	if maxCount <= 0 {
		return ""
	}
	return fmt.Sprintf(" of %d lines", maxCount)
}

// linesWord words a count of lines ("1 line", "3 lines").
func linesWord(n int) string {
	if n == 1 {
		return "1 line"
	}
	return fmt.Sprintf("%d lines", n)
}

// moreConductorsFindings marks each converged group whose fit carries
// inverse.MoreLinesNote as used with care (its Problem) and adds to r one
// poor-fit caution naming them all, in route order, each by its own count
// of lines; groups are d.Groups in the order of fits.
func moreConductorsFindings(groups []Group, fits []Fit, r *route.Route) {
	type held struct{ count, maxCount int }
	byKey := map[string]held{}
	for i := range fits {
		f := &fits[i]
		if f.Result == nil || i >= len(groups) || !groups[i].OK {
			continue
		}
		for _, n := range f.Result.Notes {
			if strings.HasPrefix(n, inverse.MoreLinesNote) {
				g := &groups[i]
				h := held{maxCount: len(g.Criteria)} // counts tried: 1..maximum
				for _, c := range g.Criteria {
					if c.Chosen {
						h.count = c.Count
					}
				}
				byKey[f.Key] = h
				if !strings.Contains(g.Problem, inverse.MoreLinesNote) {
					if g.Problem != "" {
						g.Problem += "; "
					}
					g.Problem += moreConductorsProblem(h.count, h.maxCount)
				}
				break
			}
		}
	}
	if len(byKey) == 0 || r == nil {
		return
	}
	fd := route.Finding{Kind: route.KindPoorFit, Severity: route.SeverityCaution}
	// The stations by the count they stopped at, in route order.
	var order []held
	keys := map[held][]string{}
	for i := range r.Stations {
		p := &r.Stations[i]
		h, ok := byKey[p.Key]
		if !ok || slices.Contains(fd.Keys, p.Key) {
			continue
		}
		if len(fd.Keys) == 0 {
			fd.From, fd.Position = p.Chainage, p.Point
		}
		fd.To = p.Chainage
		fd.Keys = append(fd.Keys, p.Key)
		if _, seen := keys[h]; !seen {
			order = append(order, h)
		}
		keys[h] = append(keys[h], p.Key)
	}
	if len(fd.Keys) == 0 {
		return
	}
	var parts []string
	for _, h := range order {
		var part string
		if h.count >= h.maxCount || h.count <= 0 {
			part = "at their maximum" + maxLinesWord(h.maxCount) + ", where one line more still fits the readings better"
		} else {
			part = fmt.Sprintf("at %s, short of their maximum of %d, as %d lines fit the readings better but two of them collapsed into a line dipole", linesWord(h.count), h.maxCount, h.maxCount)
		}
		if len(order) > 1 {
			part += " (" + keyList(keys[h]) + ")"
		}
		parts = append(parts, part)
		fd.Reasons = append(fd.Reasons, moreConductorsProblem(h.count, h.maxCount))
	}
	fd.Message = fmt.Sprintf("%s at %s: the fits stopped %s, so more conductors lie here than the fits hold, and the lines reported take up their field: their currents and depths are biased beyond their sigmas, and a conductor may be missing; these fits are used with care (fit again with a higher --max-count)",
		inverse.MoreLinesNote, keyList(fd.Keys), strings.Join(parts, "; "))
	r.Findings = append(r.Findings, fd)
	sortFindings(r.Findings)
}
