package report

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/inverse"
)

// minDepthNote begins the note (inverse.SourceEstimate.Notes) of a line held at the
// minimum depth below the sensors.
const minDepthNote = "held at the minimum depth below the sensors"

// lostLineProblem returns why a group whose only source is a line (no pair) cannot be
// taken as a conductor found, or "": the line is held at the minimum depth, lies at
// the edge of the region searched, or passes above the sensors (inverse's notes), so
// the readings place it nowhere. fail is true when its position is not determined
// either (the edge of the region, or above the sensors): the group then fails, and
// its station keeps the readings' centroid. Before, on six fixed sensors over a weak
// pipe, such a line 1.24 m above the sensors at the edge of the region was counted
// sound, with no finding.
// lostMissLimit is how many times the noise (nT: the group's readings' own, else the
// survey's reference noise) the RMS residual of a lone lost line's fit may miss the readings by before
// lostLineProblem no longer says that no conductor is found below: the limit of a
// sound fit elsewhere in the report (3 times the noise).
const lostMissLimit = 3.0

func lostLineProblem(res *inverse.Result, noise float64) (why string, fail bool) {
	if len(res.Sources) != 1 || len(res.Pairs) > 0 || res.Sources[0].Kind == KindDipole {
		return "", false
	}
	var held, edge, above bool
	for _, n := range res.Sources[0].Notes {
		switch {
		case strings.HasPrefix(n, minDepthNote):
			held = true
		case n == inverse.EdgeOfSearchNote:
			edge = true
		case n == inverse.AboveSensorsNote:
			above = true
		}
	}
	var where []string
	if held {
		where = append(where, "held at the minimum depth below the sensors")
	}
	if edge {
		where = append(where, "at the edge of the region searched")
	}
	if above {
		where = append(where, "above the sensors")
	}
	if len(where) == 0 {
		return "", false
	}
	why = "the only line fitted lies " + strings.Join(where, ", ") + ": the readings do not place it"
	if miss := res.RMS / noise; (edge || above) && noise > 0 && miss > lostMissLimit {
		// A fit that misses the readings far beyond their noise describes
		// nothing, what lies below included. Review rv29c: beside a DC
		// railway with an overhead contact wire beyond the traverses' ends,
		// the one line fitted lay above the sensors, missing the readings by
		// 140 times the noise, over a CP pipe whose field was 230-500 times
		// the noise, and the group read "no conductor is found under this
		// group": a false all-clear at a crossing.
		return why + fmt.Sprintf(", and the fit misses the readings by %.3g times their noise, so it says nothing of what lies under this group: a strong field from a conductor beside or above the traverse (rails, an overhead line, a cable at the surface) can hide a buried one; take the ground here as unsearched, not clear, and where what lies beside the traverse may be live, survey it by approved means from where it is safe, not by walking across it", miss), true
	}
	if edge || above {
		return why + ", and no conductor is found under this group (one too deep or weak for these readings may lie there)", true
	}
	return why + ": its depth means nothing, and its current is that of a line at the depth it was held at", false
}

// dipAtBound returns why a group whose conductor's line s stopped at the
// bound of the dip's search (inverse.DipAtBoundNote) has no estimate, or
// "": the readings would stand the line up, as a vertical conductor's field
// does, and the line's depth, position and current are then not a buried
// line's. In review a riser 3 m from a traverse fitted as a line 0.045 m
// under the ground at the 80 degree bound, -16 A, called sound, and its
// cover raised a shallow-cover warning; one beyond the traverses' ends
// made a route with a current reversing along it.
func dipAtBound(s *inverse.SourceEstimate) string {
	if s.Kind == KindDipole {
		return ""
	}
	for _, n := range s.Notes {
		if n == inverse.DipAtBoundNote {
			return fmt.Sprintf("the line's dip stopped at %.1f degrees, at the 80 degree bound of the search: the readings would stand it up, as the field of a vertical conductor near them (a riser, a down-lead or an earth conductor on a wall or pole) does, which is not fitted, so its position, depth (%s m) and current (%s A) mean nothing and its cover is not checked",
				math.Abs(s.Dip), PlusMinus(s.Depth, s.DepthSigma), PlusMinus(s.Current, s.CurrentSigma))
		}
	}
	return ""
}
