package report

import (
	"fmt"
	"math"

	"undercurrent/inverse"
)

// furtherAboveGround returns why a fit is poor when one of its further
// lines (not the strongest, which aboveGroundProblem judges) lies above
// the ground given by more than 3 sigma, or "": no buried conductor lies
// there, so the fit took the line to absorb something the model does not
// describe. README ("Weak lines") says a line above the ground is a failed
// fit or a poor one; the rule had been applied to the strongest line only,
// and on a 2000-reading-a-second DC log corrected with a base station, two
// traverses kept a second line of 75 µA 0.26 m above the ground (7.9 sigma
// above), both "sound": the base correction's noise, shared by the 2000
// readings between two base readings, is not white, and the criterion
// rewarded a line following its wiggle (found in review). The strongest
// line is kept; the group is marked poor, so its count and sigmas are
// used with care.
func furtherAboveGround(res *inverse.Result, sensorHeight float64) string {
	for j := 1; j < len(res.Sources); j++ {
		s := &res.Sources[j]
		if s.Kind == KindDipole {
			continue
		}
		if _, fail := aboveGroundProblem(res, s, sensorHeight); !fail {
			continue
		}
		if len(res.Criteria) == 0 && math.Abs(s.Current) <= 3*s.CurrentSigma {
			// The count was given (--count), not chosen: a line the
			// readings do not need carries nothing, within 3 sigma of
			// zero, and its place means nothing (a fourth line forced on
			// a three-core circuit had made three of six exact fits poor;
			// found in review). The automatic count chose its lines, so
			// there even a weak one above the ground marks the fit.
			continue
		}
		ground := 0.0
		if res.DepthReference != "ReferenceZ" {
			ground = sensorHeight
		}
		return fmt.Sprintf("a further line (%s A) lies %s m above the ground given (over 3 sigma above): no buried conductor lies there, and the fit took it to absorb something else (noise shared by many readings, as a base station's correction leaves on a fast log, or the field of something above the ground), so the number of lines and the uncertainties are doubtful",
			PlusMinus(s.Current, s.CurrentSigma), PlusMinus(ground-s.Depth, s.DepthSigma))
	}
	return ""
}

// lineAboveGround reports whether line j of res lies above the ground by
// more than 3 sigma (aboveGroundProblem): no buried conductor lies there,
// whatever the fit took it for. Such a further line gets one verdict, the
// poor fit's (furtherAboveGround, or a failed fit for the strongest): it
// is not followed as a further conductor (trackCandidates) nor checked for
// cover (addLoneCover). Before, a line the run called "0.128 ± 0.036 m
// above the ground given: no buried conductor lies there" was also warned
// of as "a further line source ... its cover, -0.128 ± 0.062 m, is less
// than the 0.90 m minimum ...: confirm before digging here", and three
// such lines of an unlogged sensor tilt were followed as a "conductor 2"
// whose -0.25 m cover led the least-cover headline (found in review).
func lineAboveGround(res *inverse.Result, j int, sensorHeight float64) bool {
	if res == nil || j < 0 || j >= len(res.Sources) || res.Sources[j].Kind == KindDipole {
		return false
	}
	_, fail := aboveGroundProblem(res, &res.Sources[j], sensorHeight)
	return fail
}
