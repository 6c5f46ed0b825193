package report

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/inverse"
)

// KindCurrentVaried is the kind of the finding that the current changed in
// time while traverses were walked (addCurrentRamps).
const KindCurrentVaried = "current-varied"

// addCurrentRamps adds a caution for the traverses whose fits found the
// current changing while they were walked (inverse.CurrentRampNote): their
// misfit is a change in time, not a further conductor, and each current is
// the traverse's mean. One finding names them all with the largest change;
// it is not a place to dig, and its chainages only bracket the traverses.
func (d *Document) addCurrentRamps(fits []Fit) {
	var keys []string
	var worst, worstSigma float64
	var from, to float64 = math.Inf(1), math.Inf(-1)
	for _, f := range fits {
		r := f.Result
		if r == nil || r.CurrentRamp == 0 && r.CurrentRampSigma == 0 {
			continue
		}
		ramped := false
		for _, n := range r.Notes {
			ramped = ramped || strings.HasPrefix(n, inverse.CurrentRampNote)
		}
		if !ramped {
			continue
		}
		keys = append(keys, f.Key)
		if a := math.Abs(r.CurrentRamp); a > worst {
			worst, worstSigma = a, r.CurrentRampSigma
		}
		for _, g := range d.Groups {
			if g.Key == f.Key && g.Chainage != nil {
				from, to = math.Min(from, *g.Chainage), math.Max(to, *g.Chainage)
			}
		}
	}
	if len(keys) == 0 {
		return
	}
	if from > to {
		from, to = 0, 0
	}
	which := "traverse " + keys[0]
	if len(keys) > 1 {
		which = fmt.Sprintf("%d traverses (%s)", len(keys), strings.Join(keys, ", "))
	}
	d.Findings = append(d.Findings, Finding{
		Kind:         KindCurrentVaried,
		Severity:     SeverityCaution,
		ChainageFrom: from,
		ChainageTo:   to,
		Groups:       keys,
		Message: fmt.Sprintf("the current changed by about %.0f%% while %s %s walked (a varying load, e.g. traction): each current reported is its traverse's mean, its uncertainty widened to cover the change, and the misfit it leaves is the change in time, not a further conductor; walk faster or log a reference current",
			100*worst, which, map[bool]string{true: "was", false: "were"}[len(keys) == 1]),
		Values: []Value{{Name: "largest change over a traverse", Value: worst, Sigma: worstSigma, Unit: "fraction of the mean current"}},
	})
	SortFindings(d.Findings)
}
