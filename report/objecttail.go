package report

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
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
//
// progress, when not nil, is told of each fit looked at (done of
// len(fits)), from the calling goroutine.
func objectTails(fits []Fit, kept []accepted, progress func(done, total int)) bool {
	if len(kept) == 0 {
		return false
	}
	// One list for every traverse (it was built again for each, in
	// O(K^2) for K objects: tailObjects), with each object's reach.
	objs := tailObjects(kept)
	reach := make([]objectReach, len(objs))
	for k, a := range objs {
		reach[k] = newObjectReach(a.ds)
	}
	changed := false
	for i := range fits {
		if progress != nil {
			progress(i, len(fits))
		}
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
		box := readingBox(p)
		for k, a := range objs {
			if a.fit == i || a.ds.moment == nil {
				continue
			}
			if reach[k].below(box, tailReach*res.Sigma) {
				// Too far off for its field to reach tailReach sigmas
				// at any reading: objectPeak would say so too.
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
		widen := tailSigma(f, out, near...)
		var where []string
		for k, ds := range near {
			o := ds.obj
			where = append(where, fmt.Sprintf("%s (a point dipole at east %.2f m, north %.2f m, %.2f m down)", keys[k], o.Point[0], o.Point[1], o.Depth))
		}
		out.Notes = append(out.Notes, fmt.Sprintf(
			"the field of the magnetised object found at %s, as fitted there, is taken out of these readings before the conductors are fitted: it reaches this traverse (up to %.3g nT on an axis, against a noise of %.3g nT), and its tail would pull the conductors' fit",
			strings.Join(where, " and of the one at "), peak, res.Sigma))
		if widen > 0 {
			out.Notes = append(out.Notes, fmt.Sprintf(
				"the current's uncertainty holds that of the object's field (its position and moment within their uncertainties move the current here by %.2g A): widened from %.2g to %.2g A",
				widen, res0Sigma(out, widen), out.Sources[0].CurrentSigma))
		}
		dropSearch(f)
		f.Result = out
		changed = true
	}
	if progress != nil {
		progress(len(fits), len(fits))
	}
	return changed
}

// Objects beyond reach of a traverse.
//
// The field of a point dipole of moment m at distance r is
// k (3 (m.u) u - m) / r^3, k = mu0/(4 pi), u the unit vector from the
// dipole (DOMAIN.md's dipole field). Component a is the row
// k (3 u_a u - e_a) / r^3 of that matrix times m; the row's length is
// k sqrt((3 u_a^2 - 1)^2 + 9 u_a^2 (1 - u_a^2)) / r^3 = k sqrt(1 + 3 u_a^2) / r^3
// <= 2 k / r^3, so by the Cauchy-Schwarz inequality no component exceeds
// 2 k |m| / r^3, |m| the moment's length (for AC the root sum of the
// squared moduli of its phasors: the inequality holds for complex m). A
// reading averaged along its path (inverse.Problem.Travel) is a weighted
// mean, with positive weights, of the field at points of the path, so
// the bound holds with r the least distance from the dipole to any point
// of any path: at least the distance to the box holding every reading's
// path. objectTails skips an object whose bound there is below tailReach
// sigmas: objectPeak, which sums the same field reading by reading, could
// not find it above. The bound is checked with reachSlack to spare, so
// that the rounding of objectPeak's sums (a relative 1e-15 or so of the
// terms) cannot carry a skipped object over the threshold; the results are
// the same as with objectPeak at every reading. Before, every object's
// field was summed at every reading of every traverse: quadratic in the
// route's length (rv14c: 1.2 s of objectPeak at 600 traverses, 5.4 s at
// 1200, with a drum every 6 m).
const reachSlack = 1e-6

// objectReach is what the bound needs of an object: its position and
// 2 k |m|, nT m^3.
type objectReach struct {
	pos   [3]float64
	scale float64
}

func newObjectReach(ds *dipoleSearch) objectReach {
	o := objectReach{pos: ds.obj.Point}
	if ds.moment == nil {
		return o
	}
	var m2 float64
	j := ds.momentAt
	if ds.moment.Strengths != nil {
		for c := range 3 {
			m2 += ds.moment.Strengths[j+c] * ds.moment.Strengths[j+c]
		}
	}
	if ds.moment.StrengthPhasors != nil {
		for c := range 3 {
			z := ds.moment.StrengthPhasors[j+c]
			m2 += real(z)*real(z) + imag(z)*imag(z)
		}
	}
	o.scale = 2 * inverse.Mu0 / (4 * math.Pi) * 1e9 * math.Sqrt(m2)
	return o
}

// below reports whether the object's field is bounded below limit, nT, at
// every point of box (see reachSlack).
func (o objectReach) below(box [2][3]float64, limit float64) bool {
	var d2 float64
	for a := range 3 {
		d := math.Max(box[0][a]-o.pos[a], o.pos[a]-box[1][a])
		if d > 0 {
			d2 += d * d
		}
	}
	if !(d2 > 0) || !(o.scale >= 0) || math.IsInf(o.scale, 0) {
		return false
	}
	r := math.Sqrt(d2)
	return o.scale/(r*r*r)*(1+reachSlack) < limit
}

// readingBox returns the box (least and greatest coordinate per axis)
// holding every reading of p and the whole of its path (Travel).
func readingBox(p *inverse.Problem) (box [2][3]float64) {
	for a := range 3 {
		box[0][a], box[1][a] = math.Inf(1), math.Inf(-1)
	}
	for i, q := range p.Points {
		for a := range 3 {
			t := 0.0
			if p.Travel != nil {
				t = math.Abs(p.Travel[i][a])
			}
			box[0][a] = math.Min(box[0][a], q[a]-t)
			box[1][a] = math.Max(box[1][a], q[a]+t)
		}
	}
	return box
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

// tailSameSpot is the share of an object's depth within which a second
// object accepted at another traverse is taken for the same one (sameSpot:
// merged, mergeSameObjects, and taken out of the tails once, tailObjects).
const tailSameSpot = 0.25

// tailStep is the share of a sigma by which tailSigma moves an object's
// parameter.
const tailStep = 0.25

// tailJump is the most, in sigmas of a line's current, that a tailStep
// move may change it by and be taken as the fit moving in its minimum
// (more is a jump to another, such as a line split in two).
const tailJump = 3.0

// tailObjects returns the objects of kept whose fields the traverses
// beside them are refitted without: one per place. Two traverses can
// each fit the same object and both be kept: in review (a drum 3.5 m
// beside a 20 A cable, the traverses either side placing it 2 cm apart,
// 3.4 sigma in north, which mergeSameObjects then took for two) both were
// taken out of a neighbour's readings, the drum's field twice.
// mergeSameObjects now merges them (sameSpot), but keeps both where the
// merged traverse's refit fails or finds no current. Each
// fit is one dipole for all the field it saw, so two placed closer than
// tailSameSpot of the shallower's depth (or within sameObjectK sigmas,
// sameObject) are one field: only the better placed (the smaller
// positionVariance) is taken out.
func tailObjects(kept []accepted) []accepted {
	order := append([]accepted(nil), kept...)
	sort.SliceStable(order, func(i, j int) bool {
		return positionVariance(order[i].ds.obj) < positionVariance(order[j].ds.obj)
	})
	var out []accepted
	for _, a := range order {
		dup := false
		for _, b := range out {
			if sameSpot(a.ds.obj, b.ds.obj) {
				dup = true
				break
			}
		}
		if !dup {
			out = append(out, a)
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].fit < out[j].fit })
	return out
}

// sameSpot reports whether objects a and b, fitted at two traverses, are
// at one place: sameObject, or closer than tailSameSpot of the shallower
// one's depth.
func sameSpot(a, b *route.Object) bool {
	if sameObject(a, b) {
		return true
	}
	d := math.Hypot(math.Hypot(a.Point[0]-b.Point[0], a.Point[1]-b.Point[1]), a.Point[2]-b.Point[2])
	return d < tailSameSpot*math.Min(a.Depth, b.Depth)
}

// tailSigma widens the current sigmas of out, the conductors of f refitted
// with the fields of the objects near taken out, by the uncertainty of
// those fields. Each object's field is taken as fitted at its own
// traverse; its moment and position have sigmas there, and the current
// refitted here moves with them: near the object (in review, a traverse
// 1 m from a drum, whose field there is hundreds of nT) by far more than
// its own sigma from the noise, which alone gave 19.949 ± 0.0078 A
// against a true 20 A (-6.5 sigma). So each of an object's six parameters
// (the moment's three components, the position's three; their sigmas the
// search's, with the position and the lines' geometry free, not the held
// fit's narrower moment sigmas) is moved by tailStep of its sigma either
// way, the lines refitted (inverse.FitLines,
// as many lines as out holds), and the change of each line's current over
// the two moves, scaled to one sigma, is its part. A refit that lands in
// another minimum (a line moved by more than 5% of its depth, turned, or
// its current changed by more than tailJump sigmas: in review a phantom
// second line took 3 A of the cable's 20) is no derivative; for that
// parameter the lines' geometry is held as out's and only their currents
// and the background refitted (inverse.FitStrengths). The parts add in
// quadrature, as independent (the correlations of the object's fit are
// not kept on it), to each line's current variance; that can widen too
// much or too little (DEVELOPERS.md, Known limits). It returns the strongest line's
// widening, A (the root sum of squares of its parts), zero when nothing
// was added.
func tailSigma(f *Fit, out *inverse.Result, near ...*dipoleSearch) float64 {
	n := len(out.Sources)
	var fs inverse.Settings
	if f.Settings != nil {
		fs = *f.Settings
	}
	set := &inverse.Settings{Background: fs.Background, ReferenceZ: fs.ReferenceZ}
	var lines []inverse.Source
	for _, s := range out.Sources {
		lines = append(lines, inverse.Line{Point: s.Point, Dir: s.Dir})
	}
	held := func(objs []*dipoleSearch) []float64 {
		q := f.Problem
		for _, k := range objs {
			q, _, _ = without(q, k.moment, k.momentAt, k.obj.Point)
		}
		r, err := inverse.FitStrengths(q, lines, set)
		if err != nil || len(r.Sources) != n {
			return nil
		}
		c := make([]float64, n)
		for i, s := range r.Sources {
			c[i] = s.Current
		}
		return c
	}
	cur := func(objs []*dipoleSearch) []float64 {
		q := f.Problem
		for _, k := range objs {
			q, _, _ = without(q, k.moment, k.momentAt, k.obj.Point)
		}
		fs := fs
		fs.Count, fs.MaxCount, fs.Dipoles = n, n, 0
		lr, err := inverse.FitLines(q, &fs)
		if err != nil || len(lr.Sources) != n || !(lr.Status.Converged() || lr.Status == inverse.Stalled) {
			return nil
		}
		c := make([]float64, n)
		for i, s := range lr.Sources {
			o := &out.Sources[i]
			d := [3]float64{s.Point[0] - o.Point[0], s.Point[1] - o.Point[1], s.Point[2] - o.Point[2]}
			if o.Dir[0]*s.Dir[0]+o.Dir[1]*s.Dir[1]+o.Dir[2]*s.Dir[2] < 0.99 || math.Abs(s.Depth-o.Depth) > 0.05*o.Depth ||
				math.Hypot(d[0], d[1]) > 0.05*o.Depth+3*o.OffsetSigma || math.Abs(s.Current-o.Current) > tailJump*o.CurrentSigma {
				// Another minimum, not the fit moved a little.
				return nil
			}
			c[i] = s.Current
		}
		return c
	}
	extra := make([]float64, n)
	shift := func(objs []*dipoleSearch, k int, move func(ds *dipoleSearch, by float64) *dipoleSearch) {
		var c [2][]float64
		for h, by := range [2]float64{tailStep, -tailStep} {
			moved := append([]*dipoleSearch(nil), objs...)
			moved[k] = move(objs[k], by)
			if c[h] = cur(moved); c[h] == nil {
				break
			}
		}
		if c[0] == nil || c[1] == nil {
			for h, by := range [2]float64{tailStep, -tailStep} {
				moved := append([]*dipoleSearch(nil), objs...)
				moved[k] = move(objs[k], by)
				if c[h] = held(moved); c[h] == nil {
					return
				}
			}
		}
		for i := range n {
			d := (c[0][i] - c[1][i]) / (2 * tailStep)
			extra[i] += d * d
		}
	}
	for k, ds := range near {
		for c := range 3 {
			// The moment's sigma with the position and the lines'
			// geometry free (the search's), not the held fit's.
			j := ds.momentAt + c
			sig := ds.source.MomentSigma[c]
			if !(sig > 0) && j < len(ds.moment.StrengthSigmas) {
				sig = ds.moment.StrengthSigmas[j]
			}
			if !(sig > 0) || j >= len(ds.moment.Strengths)+len(ds.moment.StrengthPhasors) {
				continue
			}
			shift(near, k, func(ds *dipoleSearch, by float64) *dipoleSearch {
				m := *ds.moment
				if m.Strengths != nil {
					m.Strengths = append([]float64(nil), m.Strengths...)
					m.Strengths[j] += by * sig
				}
				if m.StrengthPhasors != nil {
					m.StrengthPhasors = append([]complex128(nil), m.StrengthPhasors...)
					if a := cmplx.Abs(m.StrengthPhasors[j]); a > 0 {
						m.StrengthPhasors[j] *= complex(1+by*sig/a, 0)
					} else {
						m.StrengthPhasors[j] = complex(by*sig, 0)
					}
				}
				moved := *ds
				moved.moment = &m
				return &moved
			})
		}
		for ax := range 3 {
			sig := ds.obj.PointSigma[ax]
			if !(sig > 0) {
				continue
			}
			shift(near, k, func(ds *dipoleSearch, by float64) *dipoleSearch {
				o := *ds.obj
				o.Point[ax] += by * sig
				moved := *ds
				moved.obj = &o
				return &moved
			})
		}
	}
	for i := range n {
		s := &out.Sources[i]
		s.CurrentSigma = math.Sqrt(s.CurrentSigma*s.CurrentSigma + extra[i])
	}
	return math.Sqrt(extra[0])
}

// res0Sigma returns the strongest line's current sigma of out before
// tailSigma widened it by w.
func res0Sigma(out *inverse.Result, w float64) float64 {
	s := out.Sources[0].CurrentSigma
	return math.Sqrt(math.Max(s*s-w*w, 0))
}
