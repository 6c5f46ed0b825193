package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// One object seen from two traverses.
//
// A steel object's field reaches the traverses beside its own: a drum
// 1.3 m off a 20 A cable at one traverse pulls the cable's fit at the
// traverse 2 m away by 0.4 A, and there too a point dipole beside the
// line explains the readings better than the line alone. checkDipoles
// then accepted both traverses, and the survey reported two objects at
// chainages 16 and 18 m whose fitted positions agreed within their sigmas
// (drum-beside-cable.toml seeds 4 and 11 of 22, in review: 0.706 ± 0.086 m
// and 0.60022 ± 0.00076 m down, 0.13 m apart), and the second traverse, a
// sound station of the cable once the drum's field is allowed for, was
// left out of the current and cover profile.
//
// So the objects accepted in one pass are compared: two whose positions
// agree on each axis within sameObjectK standard deviations of their
// difference (the two fits' sigmas combined as independent: the traverses'
// readings are) are one object. The better determined (the smaller sum of
// its position's variances) is kept and reported, with its position and
// moment; its finding names the other traverse too. The other traverse,
// when its search kept a conductor with a current (not an object alone),
// is the conductor's station beside the object: its conductors are refitted
// on its readings with the kept object's field taken out (its position and
// moment as fitted at its own traverse, see without), as many lines as its
// search kept at most, the count chosen by the criterion, and it stays on
// the route with them. Its group lists the lines only (the object is
// listed once, at the group that reports it); its predictions and residuals
// include the object's field, and a note says so. When that refit fails or
// finds no current, nothing is merged and both objects are reported, as
// before.
//
// Two objects truly a few metres apart are not merged: each fit places its
// own within centimetres, far more sigmas apart than sameObjectK. An object
// alone (no conductor under it, searchAlone) seen from two traverses is not
// merged either (see DEVELOPERS.md).
const sameObjectK = 3

// sameObject reports whether objects a and b, fitted at two traverses, are
// one: every axis of their positions within sameObjectK sigmas of their
// difference, the sigmas resolved (not zero) at both.
func sameObject(a, b *route.Object) bool {
	for ax := range 3 {
		sa, sb := a.PointSigma[ax], b.PointSigma[ax]
		if !(sa > 0) || !(sb > 0) {
			return false
		}
		if math.Abs(a.Point[ax]-b.Point[ax]) > sameObjectK*math.Hypot(sa, sb) {
			return false
		}
	}
	return true
}

// positionVariance is the sum of the variances of o's position, m^2: the
// smaller, the better the fit determined the object.
func positionVariance(o *route.Object) float64 {
	return o.PointSigma[0]*o.PointSigma[0] + o.PointSigma[1]*o.PointSigma[1] + o.PointSigma[2]*o.PointSigma[2]
}

// accepted is an object checkDipoles accepted: the index of its fit and
// its search.
type accepted struct {
	fit int
	ds  *dipoleSearch
}

// mergeSameObjects takes the objects checkDipoles accepted in one pass,
// finds those that are one object seen from two traverses (sameObject)
// and, for each merged traverse with a conductor, refits its conductors
// with the kept object's field taken out (heldObjectFit). It returns the
// objects to accept (the kept ones, and those left unmerged) and sets the
// merged fits' results: such a fit is no object station, and its
// sameObject names the group that reports the object.
func mergeSameObjects(fits []Fit, acc []accepted) []accepted {
	if len(acc) < 2 {
		return acc
	}
	order := append([]accepted(nil), acc...)
	sort.SliceStable(order, func(i, j int) bool {
		return positionVariance(order[i].ds.obj) < positionVariance(order[j].ds.obj)
	})
	var kept []accepted
	for _, a := range order {
		merged := false
		if !a.ds.alone {
			for _, k := range kept {
				if !sameObject(k.ds.obj, a.ds.obj) {
					continue
				}
				f := &fits[a.fit]
				res, ok := heldObjectFit(f, a.ds, k.ds, fits[k.fit].Key)
				if !ok {
					continue
				}
				dropSearch(f)
				f.Result = res
				f.sameObject = fits[k.fit].Key
				f.sameOffset = math.Hypot(math.Hypot(a.ds.obj.Point[0]-k.ds.obj.Point[0], a.ds.obj.Point[1]-k.ds.obj.Point[1]), a.ds.obj.Point[2]-k.ds.obj.Point[2])
				merged = true
				break
			}
		}
		if !merged {
			kept = append(kept, a)
		}
	}
	// In the order checkDipoles found them.
	sort.SliceStable(kept, func(i, j int) bool { return kept[i].fit < kept[j].fit })
	return kept
}

// heldObjectFit refits the conductors of f, whose own search own found an
// object that kept (the search of the group keptKey) places better, on
// f's readings with kept's object's field taken out: at most as many lines
// as own's result holds, the count chosen by the criterion
// (inverse.FitLines). The result's predictions and residuals include the
// object's field; its sources are the lines. ok is false when the refit
// fails or its strongest line carries no current.
func heldObjectFit(f *Fit, own, kept *dipoleSearch, keptKey string) (*inverse.Result, bool) {
	p := f.Problem
	if p == nil || kept.moment == nil || own.result == nil {
		return nil, false
	}
	lines := 0
	for _, s := range own.result.Sources {
		if s.Kind != KindDipole {
			lines++
		}
	}
	if lines == 0 {
		return nil, false
	}
	q, field, phasors := without(p, kept.moment, kept.momentAt, kept.obj.Point)
	var fs inverse.Settings
	if f.Settings != nil {
		fs = *f.Settings
	}
	fs.Count, fs.MaxCount, fs.Dipoles = 0, lines, 0
	lr, err := inverse.FitLines(q, &fs)
	ac := p.Phasors != nil
	if err != nil || len(lr.Sources) == 0 || !(lr.Status.Converged() || lr.Status == inverse.Stalled) || NoCurrent(&lr.Sources[0], ac) {
		return nil, false
	}
	out := *lr
	if field != nil {
		out.Predicted = make([][3]float64, len(p.Points))
		for i := range p.Points {
			for a := range 3 {
				out.Predicted[i][a] = lr.Predicted[i][a] + field[i][a]
			}
		}
	} else {
		out.PredictedPhasors = make([][3]complex128, len(p.Points))
		for i := range p.Points {
			for a := range 3 {
				out.PredictedPhasors[i][a] = lr.PredictedPhasors[i][a] + phasors[i][a]
			}
		}
	}
	// The residuals are q's less the lines, which are p's less the lines
	// and the object: lr's stand.
	o := kept.obj
	out.Notes = append(append([]string(nil), lr.Notes...), fmt.Sprintf(
		"the field of the magnetised object found at %s (a point dipole at east %.2f m, north %.2f m, %.2f m down, as fitted there) is taken out of these readings before the conductors are fitted: this traverse sees the same object, which its own fit placed within its sigmas of that position",
		keptKey, o.Point[0], o.Point[1], o.Depth))
	return &out, true
}

// sameObjectFindings adds to each dipole-anomaly finding of r the groups
// whose readings saw the same object (Fit.sameObject, mergeSameObjects):
// their keys, after the reporting group's, and a sentence saying that they
// stay on the profile with the object's field taken out.
func sameObjectFindings(fits []Fit, r *route.Route) {
	also := map[string][]*Fit{}
	for i := range fits {
		if f := &fits[i]; f.sameObject != "" {
			also[f.sameObject] = append(also[f.sameObject], f)
		}
	}
	if len(also) == 0 {
		return
	}
	chainage := map[string]float64{}
	for k := range r.Stations {
		chainage[r.Stations[k].Key] = r.Stations[k].Chainage
	}
	for i := range r.Findings {
		f := &r.Findings[i]
		if f.Kind != route.KindDipole || len(f.Keys) != 1 || len(also[f.Keys[0]]) == 0 {
			continue
		}
		var parts []string
		for _, g := range also[f.Keys[0]] {
			f.Keys = append(f.Keys, g.Key)
			where := g.Key
			if c, ok := chainage[g.Key]; ok {
				where = fmt.Sprintf("%s (chainage %.1f m)", g.Key, c)
			}
			parts = append(parts, fmt.Sprintf("%s sees the same object (its own fit placed it %.2f m from this position, within %d sigma) and stays on the profile with the object's field taken out of its readings",
				where, g.sameOffset, sameObjectK))
		}
		f.Message += "; " + strings.Join(parts, "; ")
	}
}
