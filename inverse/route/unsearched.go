package route

import (
	"fmt"
	"math"
	"strings"
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
			// The levels either side to the decimals of the change
			// they bracket: "T08 20 A" beside a change of 0.025 A said
			// nothing of it (found in review).
			dec, ok := SigmaDecimals(sd)
			if !ok {
				dec = 3
			}
			msg := fmt.Sprintf("no current step can be searched for between %s (chainage %.1f m) and %s (%.1f m), %.0f m of the route: the %d stations between them (%s to %s) give no usable current (%s), %s; across the whole stretch the current changes by %s A (%s %s A, %s %s A). %s",
				a.Key, a.Chainage, b.Key, b.Chainage, b.Chainage-a.Chainage, j-i, ps[i].Key, ps[j-1].Key, unusedCauses(ps[i:j]), what,
				signedPlusMinus(d, sd), a.Key, fixed(a.Current, dec), b.Key, fixed(b.Current, dec), unsearchedAdvice(ps[i:j]))
			out = append(out, Finding{
				Kind:     KindUnsearched,
				Severity: SeverityCaution,
				From:     a.Chainage, To: b.Chainage,
				Position: unsearchedPoint(a, b),
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

// unsearchedPoint places an unsearched stretch at its middle on the
// conductor drawn between the usable stations either side, along their
// fitted lines (legPoint, as a step bracketed across a bend is placed),
// at the conductor's height there. The stations between give no current;
// a failed fit's point is its readings' centre, which can lie metres off
// the route and above the ground: the stretch was placed at one, 4.4 m
// north of the conductor and 0.3 m up (found in review).
func unsearchedPoint(a, b *Placed) [3]float64 {
	return legPoint(a, b, 0.5)
}

// Causes of a station giving no usable current, in the order named.
const (
	causeObject = iota
	causeFailed
	causeUnplaced
	causeCount
)

// unusedCause says why a station without usable current has none.
func unusedCause(p *Placed) int {
	switch {
	case p.Dipole:
		return causeObject
	case p.Unplaced:
		return causeUnplaced
	}
	return causeFailed
}

// unusedCauses words why each station of a run gives no usable current,
// stations grouped by cause: "T09, T10: magnetised objects; T12: fit
// failed". Two drums' stations, whose fits converged, were said to be
// failed fits (found in review).
func unusedCauses(run []Placed) string {
	var keys [causeCount][]string
	for k := range run {
		c := unusedCause(&run[k])
		keys[c] = append(keys[c], run[k].Key)
	}
	one := [causeCount]string{"a magnetised object", "fit failed", "fit too poorly determined to place the conductor"}
	many := [causeCount]string{"magnetised objects", "fits failed", "fits too poorly determined to place the conductor"}
	var parts []string
	for c := range keys {
		switch len(keys[c]) {
		case 0:
			continue
		case 1:
			parts = append(parts, keys[c][0]+": "+one[c])
		default:
			parts = append(parts, strings.Join(keys[c], ", ")+": "+many[c])
		}
	}
	return strings.Join(parts, "; ")
}

// unsearchedAdvice is the caution's closing advice, by the causes in the
// run: a magnetised object's fit did not fail, and surveying again clear
// of it (traverses moved along the route) is what gives a current there.
func unsearchedAdvice(run []Placed) string {
	var objects, fits bool
	for k := range run {
		if unusedCause(&run[k]) == causeObject {
			objects = true
		} else {
			fits = true
		}
	}
	switch {
	case objects && fits:
		return "Survey it again, with traverses clear of the objects, or find why the other fits failed"
	case objects:
		return "Survey it again with traverses clear of the objects"
	}
	return "Survey it again, or find why those fits failed"
}

// signedPlusMinus is PlusMinus with the value's sign always written.
func signedPlusMinus(v, sigma float64) string {
	s := PlusMinus(v, sigma)
	if !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return s
}
