package report

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"undercurrent/inverse"
)

// The tail of a reported object at the traverses beside it.
//
// A steel object's field reaches the traverses beside its own, and their
// line fits take it into their conductors' current and geometry: beside a
// drum 1.3 m off a plain 20 A cable
// (testdata/scenarios/open/drum-beside-cable.toml, seeds 17 and 21) the
// traverse 2 m before the drum's read 0.35-0.39 A high, and the route gave
// it a current-anomaly caution though the drum was reported at the next
// traverse. The search uses those refits to judge the neighbours' step
// (agrees, withoutObject), but the route kept their first fits.
//
// So once the objects are accepted (checkDipoles), every other traverse
// with a line fit that carries a current, whose readings an accepted
// object's field reaches above their noise (the largest component of the
// object's field at them over the fit's sigma per axis: tailReach), has
// its conductors refitted on its readings with the field of every such
// object taken out (refitWithout: their positions and moments as fitted
// at their own traverses; no more lines than its fit had, the count
// chosen by the criterion), as a traverse merged into another's object is
// (sameobject.go). The refit is kept when its strongest line carries a
// current and it misses the readings by no more than the first fit did
// (its residual sum of squares, tailWorse): a field taken out that
// the readings do not hold (a moment fitted poorly for readings metres
// away) makes the fit worse, and the first fit stands. The traverse stays
// on the route with the refit, its note saying so.
const (
	// tailReach is the least ratio of an object's largest field component
	// at a traverse's readings to that fit's noise per axis for the
	// traverse to be refitted without it.
	tailReach = 1.0
	// tailWorse is how much larger than the first fit's residual sum of
	// squares the refit's may be and still be kept (a share: 1 + tailWorse
	// times).
	tailWorse = 0.0
)

// objectTails refits the traverses within reach of the objects accepted
// (the fits listed in kept, see above). It reports whether any fit
// changed.
func objectTails(fits []Fit, kept []accepted) bool {
	if len(kept) == 0 {
		return false
	}
	changed := false
	for i := range fits {
		f := &fits[i]
		res, p := f.Result, f.Problem
		if f.Dipole || f.object != nil || f.sameObject != "" || f.surface != nil || res == nil || p == nil ||
			len(res.Sources) == 0 || !(res.Status.Converged() || res.Status == inverse.Stalled) || !(res.Sigma > 0) {
			continue
		}
		lines := true
		for _, s := range res.Sources {
			if s.Kind != KindLine {
				lines = false
			}
		}
		ac := p.Phasors != nil
		if !lines || NoCurrent(&res.Sources[0], ac) {
			continue
		}
		var near []*dipoleSearch
		var keys []string
		var peak float64
		for _, a := range kept {
			if a.fit == i || a.ds.moment == nil {
				continue
			}
			m := objectPeak(p, a.ds)
			if m > tailReach*res.Sigma {
				near = append(near, a.ds)
				keys = append(keys, fits[a.fit].Key)
				peak = math.Max(peak, m)
			}
		}
		if len(near) == 0 {
			continue
		}
		out, ok := refitWithout(f, len(res.Sources), near...)
		if !ok || NoCurrent(&out.Sources[0], ac) || !(residualSS(out) <= (1+tailWorse)*residualSS(res)) {
			continue
		}
		var where []string
		for k, ds := range near {
			o := ds.obj
			where = append(where, fmt.Sprintf("%s (a point dipole at east %.2f m, north %.2f m, %.2f m down)", keys[k], o.Point[0], o.Point[1], o.Depth))
		}
		out.Notes = append(out.Notes, fmt.Sprintf(
			"the field of the magnetised object found at %s, as fitted there, is taken out of these readings before the conductors are fitted: it reaches this traverse (up to %.3g nT on an axis, against a noise of %.3g nT), and its tail would pull the conductors' fit",
			strings.Join(where, " and of the one at "), peak, res.Sigma))
		dropSearch(f)
		f.Result = out
		changed = true
	}
	return changed
}

// objectPeak returns the largest magnitude of a component of the field of
// the object ds found (its position and moment as fitted) at p's
// readings, nT (the modulus of the phasor for AC).
func objectPeak(p *inverse.Problem, ds *dipoleSearch) float64 {
	_, field, phasors := without(p, ds.moment, ds.momentAt, ds.obj.Point)
	var m float64
	for i := range field {
		for a := range 3 {
			m = math.Max(m, math.Abs(field[i][a]))
		}
	}
	for i := range phasors {
		for a := range 3 {
			m = math.Max(m, cmplx.Abs(phasors[i][a]))
		}
	}
	return m
}

// residualSS returns r's residual sum of squares over its readings, nT^2 (both
// parts of the phasors for AC).
func residualSS(r *inverse.Result) float64 {
	var s float64
	for _, e := range r.Residuals {
		s += e[0]*e[0] + e[1]*e[1] + e[2]*e[2]
	}
	for _, e := range r.ResidualPhasors {
		for a := range 3 {
			s += real(e[a])*real(e[a]) + imag(e[a])*imag(e[a])
		}
	}
	return s
}
