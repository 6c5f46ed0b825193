package route

import (
	"fmt"
	"strings"
)

// quality reports stations whose fit failed, is poor or ambiguous, and
// stations better explained by a dipole.
func quality(ps []Placed, set *Settings) []Finding {
	var out []Finding
	maxChi := set.maxReducedChi2()
	for i := range ps {
		p := &ps[i]
		if p.Dipole {
			out = append(out, dipoleFinding(p, len(ps) == 1))
		}
		var why []string
		var vals []Value
		minor := p.OK && p.Problem == "" && p.Signal > 0 && p.RMS <= set.minorMisfit()*p.Signal
		if !p.OK {
			why = append(why, "the fit failed")
		}
		if p.Problem != "" {
			why = append(why, p.Problem)
		}
		chi := 0.0
		if p.DOF > 0 && maxChi > 0 && p.Chi2 > 0 {
			if r := p.Chi2 / float64(p.DOF); r > maxChi {
				chi = r
				why = append(why, fmt.Sprintf("chi-square per degree of freedom is %.3g (limit %.3g): the model or the noise level does not match the readings", r, maxChi))
				vals = append(vals, Value{Name: "reduced chi-square", Value: r, Unit: ""})
			}
		}
		if len(why) == 0 {
			continue
		}
		if p.RMS > 0 {
			vals = append(vals, Value{Name: "rms residual", Value: p.RMS, Unit: "nT"})
		}
		if p.Signal > 0 {
			vals = append(vals, Value{Name: "rms signal", Value: p.Signal, Unit: "nT"})
		}
		if minor && chi > 0 {
			out = append(out, Finding{
				Kind:     KindPoorFit,
				Severity: SeverityInfo,
				From:     p.Chainage, To: p.Chainage,
				Position: p.Point,
				Keys:     []string{p.Key},
				Message: fmt.Sprintf("fit at %s misses %.3g nT RMS of a %.0f nT signal (%.2g%%), more than the noise allows (chi-square per degree of freedom %.3g): the straight-line model is only approximate here (a bend, a change of depth or a nearby object); the estimates hold to about that fraction, but their sigmas may be optimistic",
					at(p, len(ps) == 1), p.RMS, p.Signal, 100*p.RMS/p.Signal, chi),
				Values: vals,
			})
			continue
		}
		use := "used with care"
		if !p.usable() {
			use = "not used"
		}
		out = append(out, Finding{
			Kind:     KindPoorFit,
			Severity: SeverityCaution,
			From:     p.Chainage, To: p.Chainage,
			Position: p.Point,
			Keys:     []string{p.Key},
			Message: fmt.Sprintf("fit at %s is poor or ambiguous (%s); %s",
				at(p, len(ps) == 1), strings.Join(why, "; "), use),
			Values: vals,
		})
	}
	return out
}

// dipoleFinding reports a station whose field is better explained with a
// magnetised object, placed at the object when its position is known.
func dipoleFinding(p *Placed, single bool) Finding {
	f := Finding{
		Kind:     KindDipole,
		Severity: SeverityInfo,
		From:     p.Chainage, To: p.Chainage,
		Position: p.Point,
		Keys:     []string{p.Key},
		Message: fmt.Sprintf("the field at %s looks like a magnetised object, not a current; it is left out of the current and cover profile",
			at(p, single)),
	}
	o := p.Object
	if o == nil {
		return f
	}
	f.Position = o.Point
	f.Message = fmt.Sprintf("a magnetised object (a buried steel or iron item), not a current: a point dipole %.1f m from the conductor at %s, %s m deep, explains the field (information criterion lower by %.0f); it is left out of the current and cover profile",
		o.Distance, at(p, single), pm(o.Depth, o.DepthSigma), o.Evidence)
	f.Values = []Value{
		{Name: "east", Value: o.Point[0], Sigma: o.PointSigma[0], Unit: "m"},
		{Name: "north", Value: o.Point[1], Sigma: o.PointSigma[1], Unit: "m"},
		{Name: "depth", Value: o.Depth, Sigma: o.DepthSigma, Unit: "m"},
		{Name: "distance from conductor", Value: o.Distance, Unit: "m"},
		{Name: "moment", Value: o.Moment, Sigma: o.MomentSigma, Unit: "A m^2"},
		{Name: "BIC lower by", Value: o.Evidence},
	}
	return f
}
