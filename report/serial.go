package report

import (
	"fmt"
	"strings"
)

// serialWarnWidening is the widening of a DC fit's current sigma for
// residuals correlated from reading to reading (inverse.Result.SigmaWidening,
// the first line's current's; each parameter is widened by its own factor)
// from which the run warns (serialWarning): 1.5 times, the current's
// widening under AR(1) noise of lag-1 correlation about 0.38 on a traverse
// long against the line's depth.
const serialWarnWidening = 1.5

// serialWarning returns the run warning for fits whose sigmas were widened
// serialWarnWidening times or more for residuals correlated along the
// traverse, naming the likely causes; "" when there is none. The widened
// sigmas are the ones reported and the route's step test uses; the warning
// says why they are wider than the noise alone would give, and that an
// estimate from correlated noise is worth less than its reading count.
func serialWarning(fits []Fit) string {
	var keys []string
	n := 0
	lo, hi := 0.0, 0.0
	for _, f := range fits {
		r := f.Result
		if r == nil || f.Err != nil || r.ResidualPhasors != nil {
			continue
		}
		n++
		w := r.SigmaWidening
		if !(w >= serialWarnWidening) {
			continue
		}
		if len(keys) == 0 || w < lo {
			lo = w
		}
		if w > hi {
			hi = w
		}
		keys = append(keys, f.Key)
	}
	if len(keys) == 0 {
		return ""
	}
	which := ""
	if len(keys) < n || n > 1 {
		which = " (" + strings.Join(keys[:min(len(keys), 8)], ", ")
		if len(keys) > 8 {
			which += ", ..."
		}
		which += ")"
	}
	by := fmt.Sprintf("%.2g", lo)
	if hi >= lo*1.05 {
		by = fmt.Sprintf("%.2g-%.2g", lo, hi)
	}
	lead := fmt.Sprintf("%d of %d groups' fits%s", len(keys), n, which)
	if n == 1 {
		lead = "the group's fit"
	}
	return fmt.Sprintf("%s leave residuals correlated from reading to reading along the traverse, so the readings carry less than their number suggests: their currents' uncertainties were widened %s times for it, and their other uncertainties each by its own factor (see each group's notes). Either the fitted lines do not fully describe the field there (a bend or change of depth, an object, a tee or crossing service, a conductor's end, a sensor not calibrated: see the other findings on these groups), or the noise itself is correlated (slow drift of the sensor, tilt wander of a hand-held sensor, passing traffic, mains hum aliased into a slow DC log); where no such feature explains it, steady the sensor, log faster or away from traffic, and repeat a traverse to check",
		lead, by)
}
