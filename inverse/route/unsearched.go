package route

import (
	"fmt"
	"math"
)

// unsearchedMin is the fewest stations in a row without a usable current
// that make a stretch worth naming: one is bridged by its neighbours'
// bracket, which the step's own finding names.
const unsearchedMin = 2

// unsearched names each stretch of the route between usable stations
// where unsearchedMin or more stations in a row give no usable current
// (failed, or a magnetised object): a current step there, a coating
// defect or a fault, could not be found, and the levels either side say
// only how much the current changed across the whole stretch. Before, 13
// failed traverses (650 m of a pipeline beside a mains cable) left the
// profile with a hole and no word, and its coating defect unreported
// (found in review). A step finding in found that spans the stretch is
// placed only to it: the caution then says so, and that another step
// within the stretch would not be found, rather than that a step there
// would not be found beside the step reported (found in review).
func unsearched(ps []Placed, found []Finding) []Finding {
	var out []Finding
	for i := 0; i < len(ps); {
		if ps[i].usable() {
			i++
			continue
		}
		j := i
		for j < len(ps) && !ps[j].usable() {
			j++
		}
		// ps[i:j] is a run without current; it counts inside the route,
		// with usable stations either side.
		if j-i >= unsearchedMin && i > 0 && j < len(ps) {
			a, b := &ps[i-1], &ps[j]
			// The stretch's middle, along the stations (the failed ones'
			// points are their readings' centres, which follow the route's
			// turns better than the chord between a and b).
			run := make([]*Placed, 0, j-i+2)
			for k := i - 1; k <= j; k++ {
				run = append(run, &ps[k])
			}
			keys := make([]string, 0, j-i)
			for k := i; k < j; k++ {
				keys = append(keys, ps[k].Key)
			}
			d := b.Current - a.Current
			sd := math.Hypot(a.CurrentSigma, b.CurrentSigma)
			spanned := false
			for _, f := range found {
				if f.Kind == KindCurrentStep && f.From <= a.Chainage+1e-6 && f.To >= b.Chainage-1e-6 {
					spanned = true
				}
			}
			what := "so a step there (current leaving or joining) would not be found"
			if spanned {
				what = "so the step found across this stretch is placed only to it, not within it, and any other step within it (current leaving or joining) would not be found"
			}
			msg := fmt.Sprintf("no current step can be searched for between %s (chainage %.1f m) and %s (%.1f m), %.0f m of the route: the %d stations between them (%s to %s) give no usable current, %s; across the whole stretch the current changes by %+.3g ± %.2g A (%s %.4g A, %s %.4g A). Survey it again, or find why those fits failed",
				a.Key, a.Chainage, b.Key, b.Chainage, b.Chainage-a.Chainage, j-i, ps[i].Key, ps[j-1].Key, what, d, sd, a.Key, a.Current, b.Key, b.Current)
			out = append(out, Finding{
				Kind:     KindUnsearched,
				Severity: SeverityCaution,
				From:     a.Chainage, To: b.Chainage,
				Position: pointAt(run, (a.Chainage+b.Chainage)/2),
				Keys:     keys,
				Message:  msg,
				Values: []Value{
					{Name: "length", Value: b.Chainage - a.Chainage, Unit: "m"},
					{Name: "change across", Value: d, Sigma: sd, Unit: "A"},
				},
			})
		}
		i = j
	}
	return out
}
