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
// Two placed closer together than tailSameSpot of the shallower one's
// depth are one object too, whatever their sigmas (sameSpot): each fit is
// one dipole for all the field it saw, and the sigmas can be optimistic
// (in review a drum 3.5 m beside a cable placed 2 cm apart from the
// traverses either side, 3.4 sigma in north, reported twice and taken out
// of the neighbours' readings twice, objecttail.go).
//
// Two objects truly a few metres apart are not merged: each fit places its
// own within centimetres, far more sigmas apart than sameObjectK. An object
// alone (no conductor under it, searchAlone) seen from two traverses is
// merged too (aloneHeldFit): the other traverse then reads "no current
// found", its group listing no dipole.
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
		for _, k := range kept {
			if !sameSpot(k.ds.obj, a.ds.obj) {
				continue
			}
			f := &fits[a.fit]
			var res *inverse.Result
			var ok bool
			if a.ds.alone {
				res, ok = aloneHeldFit(f, a.ds, k.ds, fits[k.fit].Key)
			} else {
				res, ok = heldObjectFit(f, a.ds, k.ds, fits[k.fit].Key)
			}
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
	if own.result == nil {
		return nil, false
	}
	lines := 0
	for _, s := range own.result.Sources {
		if s.Kind != KindDipole {
			lines++
		}
	}
	out, ok := refitWithout(f, lines, kept)
	if !ok || NoCurrent(&out.Sources[0], f.Problem.Phasors != nil) {
		return nil, false
	}
	o := kept.obj
	out.Notes = append(out.Notes, fmt.Sprintf(
		"the field of the magnetised object found at %s (a point dipole at east %.2f m, north %.2f m, %.2f m down, as fitted there) is taken out of these readings before the conductors are fitted: this traverse sees the same object, which its own fit placed within its uncertainties of that position or within a quarter of its depth",
		keptKey, o.Point[0], o.Point[1], o.Depth))
	if widen := tailSigma(f, out, kept); widen > 0 {
		out.Notes = append(out.Notes, fmt.Sprintf(
			"the current's uncertainty holds that of the object's field (its position and moment within their uncertainties move the current here by %.2g A): widened from %.2g to %.2g A",
			widen, res0Sigma(out, widen), out.Sources[0].CurrentSigma))
	}
	return out, true
}

// aloneHeldFit is heldObjectFit for a traverse whose own search own found
// the object alone (searchAlone: with the object, no current in its
// conductors). Its conductors, as many lines as its first fit holds at
// most, are refitted on its readings with the field of the object kept
// (the search of the group keptKey) places better taken out; when the
// strongest line then carries no current (NoCurrent) that refit is the
// traverse's result. The moment taken out is one fitted at another
// traverse, though, and a position within its sigmas there can still
// leave a line here: in review a body 2.5 m from both traverses that
// placed it (1.3 cm and 3 cm apart, 1.5 sigma; moments 12.9 and 13.2 A
// m^2) left a 6 mA line, 4.8 sigma, once the other's field was taken out,
// where with its own placing the line carried 0.05 ± 0.40 mA. So when a
// current is left, the traverse takes its own search's conductors (own's
// search with them, own.with: the lines refitted with its own placing of
// the object taken out), when their strongest carries no current. Either
// way the result's sources are the lines only (the object is reported
// once, at keptKey) and its predictions hold the object's field; ok is
// false when both leave a current: the traverse may hold a conductor
// after all, and nothing is merged.
func aloneHeldFit(f *Fit, own, kept *dipoleSearch, keptKey string) (*inverse.Result, bool) {
	lines := 0
	if f.Result != nil {
		for _, s := range f.Result.Sources {
			if s.Kind != KindDipole {
				lines++
			}
		}
	}
	ac := f.Problem.Phasors != nil
	o := kept.obj
	if out, ok := refitWithout(f, max(lines, 1), kept); ok && NoCurrent(&out.Sources[0], ac) {
		out.Notes = append(out.Notes, fmt.Sprintf(
			"the field of the magnetised object found at %s (a point dipole at east %.2f m, north %.2f m, %.2f m down, as fitted there) is taken out of these readings before the conductors are fitted: this traverse sees the same object, which its own fit placed within its uncertainties of that position or within a quarter of its depth, and no current is left under it",
			keptKey, o.Point[0], o.Point[1], o.Depth))
		return out, true
	}
	w := own.with
	if w == nil || w.result == nil {
		return nil, false
	}
	out := *w.result
	out.Sources = nil
	for _, s := range w.result.Sources {
		if s.Kind != KindDipole {
			out.Sources = append(out.Sources, s)
		}
	}
	if len(out.Sources) == 0 || !NoCurrent(&out.Sources[0], ac) {
		return nil, false
	}
	out.Notes = append(append([]string(nil), w.result.Notes...), fmt.Sprintf(
		"the field of the magnetised object found at %s (a point dipole at east %.2f m, north %.2f m, %.2f m down, as fitted there) is in these readings: this traverse's own fit placed the same object within its uncertainties of that position or within a quarter of its depth, and with the object so placed taken out of the readings no current is left under it",
		keptKey, o.Point[0], o.Point[1], o.Depth))
	return &out, true
}

// refitWithout refits the conductors of f on its readings with the field
// of the objects kept found taken out (its position and moment as fitted,
// see without): at most lines lines, the count chosen by the criterion
// (inverse.FitLines). The result's predictions include the object's
// field; its residuals are the readings' less the lines and the object;
// its sources are the lines. ok is false when there is no line to fit or
// the refit fails (an error, no line, not converged).
func refitWithout(f *Fit, lines int, kept ...*dipoleSearch) (*inverse.Result, bool) {
	p := f.Problem
	if p == nil || lines <= 0 || len(kept) == 0 {
		return nil, false
	}
	q, field, phasors := p, [][3]float64(nil), [][3]complex128(nil)
	for _, k := range kept {
		if k.moment == nil {
			return nil, false
		}
		var fk [][3]float64
		var pk [][3]complex128
		q, fk, pk = without(q, k.moment, k.momentAt, k.obj.Point)
		field, phasors = addField(field, fk), addField(phasors, pk)
	}
	var fs inverse.Settings
	if f.Settings != nil {
		fs = *f.Settings
	}
	fs.Count, fs.MaxCount, fs.Dipoles, fs.FirmMaxCount = 0, lines, 0, true
	lr, err := inverse.FitLines(q, &fs)
	if err != nil || len(lr.Sources) == 0 || !(lr.Status.Converged() || lr.Status == inverse.Stalled) {
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
	out.Notes = append([]string(nil), lr.Notes...)
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
			if r := g.Result; r != nil && len(r.Sources) > 0 && NoCurrent(&r.Sources[0], g.Problem != nil && g.Problem.Phasors != nil) {
				// An object alone seen from two traverses
				// (aloneHeldFit): no conductor there.
				parts = append(parts, fmt.Sprintf("%s sees the same object (its own fit placed it %.2f m from this position, within %d sigma or a quarter of its depth), and with the object's field taken out of its readings no current is found there",
					where, g.sameOffset, sameObjectK))
				continue
			}
			parts = append(parts, fmt.Sprintf("%s sees the same object (its own fit placed it %.2f m from this position, within %d sigma or a quarter of its depth) and stays on the profile with the object's field taken out of its readings",
				where, g.sameOffset, sameObjectK))
		}
		f.Message += "; " + strings.Join(parts, "; ")
	}
}

// addField returns the sum of two per-reading fields (DC, or AC
// phasors), either nil; a's storage is reused.
func addField[T float64 | complex128](a, b [][3]T) [][3]T {
	if a == nil {
		return b
	}
	for i := range b {
		for ax := range 3 {
			a[i][ax] += b[i][ax]
		}
	}
	return a
}
