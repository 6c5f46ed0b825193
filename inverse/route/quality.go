package route

import (
	"fmt"
	"math"
	"strings"
)

// MisfitNoiseWords follows the factor by which a poor fit's readings miss
// the fitted conductors (the square root of the reduced chi-square: the
// residuals' RMS in units of the noise). The report names the noise it is
// measured against in its place (the survey's reference noise).
const MisfitNoiseWords = "times the noise"

// quality reports stations whose fit failed, is poor or ambiguous, and
// stations better explained by a dipole. steps are the route's
// current-step findings: a poor fit within a step's bracket names the
// step as the likely cause of its misfit (stepCause).
func quality(ps []Placed, set *Settings, steps []Finding) []Finding {
	var out []Finding
	maxChi := set.maxReducedChi2()
	for i := range ps {
		p := &ps[i]
		if p.Dipole {
			out = append(out, dipoleFinding(p, set, len(ps) == 1))
		}
		var why []string
		var vals []Value
		minor := p.OK && p.Problem == "" && p.Signal > 0 && p.RMS <= set.minorMisfit()*p.Signal
		chi := 0.0
		if p.DOF > 0 && maxChi > 0 && p.Chi2 > 0 {
			if r := p.Chi2 / float64(p.DOF); r > maxChi {
				chi = r
				why = append(why, fmt.Sprintf("the readings miss the fitted conductors by %.3g %s, more than the %.3g times allowed, so the model or the noise level does not match the readings (reduced chi-square %.3g, limit %.3g)", math.Sqrt(r), MisfitNoiseWords, math.Sqrt(maxChi), r, maxChi))
				vals = append(vals, Value{Name: "reduced chi-square", Value: r, Unit: ""})
			}
		}
		if p.OK && p.Problem == "" && len(why) == 0 {
			continue
		}
		bend, turn := bendAt(ps, i, maxChi)
		if bend != "" {
			vals = append(vals, Value{Name: "turn", Value: turn, Unit: "deg"})
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
				Message: fmt.Sprintf("fit at %s misses %.3g nT RMS of a %.0f nT signal (%.2g%%), %.3g %s: the straight-line model is only approximate here (%s); the misfit shows only the part of the model's error that the line could not take up, so the estimates can be off by about %.0f times that share or more%s (reduced chi-square %.3g)",
					at(p, len(ps) == 1), p.RMS, p.Signal, 100*p.RMS/p.Signal, math.Sqrt(chi), MisfitNoiseWords, orDefault(bend, orDefault(stepCause(p, steps), "a bend, a change of depth or a nearby object")), ModelErrFactor, modelWidened(p), chi),
				Values: vals,
			})
			continue
		}
		if bend != "" && (chi > 0 || !p.OK) {
			why = append(why, bend+", which one straight line cannot follow")
		}
		use := "its estimates are used with care"
		switch {
		case p.Unplaced && !p.OK:
			use = "it is left out of the route's line and chainage (its chainage is that of its readings' centre, taken onto the route between its neighbours) and of the current and cover profile" +
				unplacedCurrent(ps, i, set)
		case !p.usable():
			use = "it is left out of the current and cover profile"
		}
		out = append(out, Finding{
			Kind:     KindPoorFit,
			Severity: SeverityCaution,
			From:     p.Chainage, To: p.Chainage,
			Position: p.Point,
			Keys:     []string{p.Key},
			Message:  fmt.Sprintf("%s; %s", poorHead(p, len(ps) == 1, why), use),
			Values:   vals,
			Reasons:  poorReasons(p, why),
		})
	}
	return out
}

// poorHead says what is wrong with the fit at station p: that it failed
// or is poor or ambiguous, with the caller's Problem and the further
// reasons why, each said once. A Problem that already speaks of the fit
// ("the fit failed: ...", "the fit did not converge (...)") is not
// repeated after "fit at X failed".
func poorHead(p *Placed, single bool, why []string) string {
	head := "fit at " + at(p, single)
	prob := p.Problem
	switch {
	case strings.HasPrefix(prob, "the fit failed"):
		head += " failed" + strings.TrimPrefix(prob, "the fit failed")
		prob = ""
	case strings.HasPrefix(prob, "the fit "):
		head += " " + strings.TrimPrefix(prob, "the fit ")
		prob = ""
	case !p.OK:
		head += " failed"
	case prob != "":
		head += " is poor or ambiguous"
	default:
		head += " is poor"
	}
	if prob != "" {
		why = append([]string{prob}, why...)
	}
	if len(why) == 0 {
		return head
	}
	sep := ": "
	if strings.Contains(head, ":") {
		sep = "; "
	}
	return head + sep + strings.Join(why, "; ")
}

// unplacedCurrent compares the current of station i of ps, one left out
// as too poorly determined to place the conductor (Station.Unplaced),
// with the nearest usable stations either side of it: "; its current,
// -0.56 ± 0.17 A, is 185 sigma from T02's (29.9977 ± 0.0075 A) and 185
// sigma from T04's (...), over 3 sigma from each: ...", 3 being
// Settings.StepK. Left out, it is in no step search and no
// anomaly test, and a traverse cut to three readings over a 30 A cable,
// its line fitted 4.6 m aside carrying -0.56 A, had been taken into the
// profile with no word on its current. The sigmas are the fits' own, in
// quadrature; the station's own rests on a noise estimated from a few
// residuals. "" when no usable station lies on either side.
func unplacedCurrent(ps []Placed, i int, set *Settings) string {
	var nb []*Placed
	for j := i - 1; j >= 0; j-- {
		if ps[j].usable() {
			nb = append(nb, &ps[j])
			break
		}
	}
	for j := i + 1; j < len(ps); j++ {
		if ps[j].usable() {
			nb = append(nb, &ps[j])
			break
		}
	}
	if len(nb) == 0 {
		return ""
	}
	p := &ps[i]
	k := set.stepK()
	var parts []string
	off := 0
	for _, q := range nb {
		s := math.Hypot(p.CurrentSigma, q.CurrentSigma)
		if !(s > 0) {
			continue
		}
		z := math.Abs(p.Current-q.Current) / s
		if z > k {
			off++
		}
		zt := fmt.Sprintf("%.2g", z)
		if z >= 10 {
			zt = fmt.Sprintf("%.0f", z)
		}
		parts = append(parts, fmt.Sprintf("%s times the uncertainty from %s's (%s A)", zt, label(q), pm(q.Current, q.CurrentSigma)))
	}
	if len(parts) == 0 {
		return ""
	}
	var verdict string
	switch {
	case off == len(parts) && len(parts) > 1:
		verdict = fmt.Sprintf("over %.3g times the uncertainty from each: the line this fit found is not the conductor its neighbours follow, or the current changes here, which these readings cannot tell; take the traverse again before reading a change of current here", k)
	case off == len(parts):
		verdict = fmt.Sprintf("over %.3g times the uncertainty from it: the line this fit found is not the conductor its neighbour follows, or the current changes here, which these readings cannot tell; take the traverse again before reading a change of current here", k)
	case off > 0:
		verdict = fmt.Sprintf("over %.3g times the uncertainty from one only, as where current changes beside this traverse (the step search weighs that change between its neighbours, without it)", k)
	case len(parts) > 1:
		verdict = fmt.Sprintf("within %.3g times the uncertainty of each", k)
	default:
		verdict = fmt.Sprintf("within %.3g times the uncertainty of it", k)
	}
	return fmt.Sprintf("; its current, %s A, is %s, %s", pm(p.Current, p.CurrentSigma), strings.Join(parts, " and "), verdict)
}

// poorReasons lists the reasons of a poor-fit caution at station p: its
// Problem, or that the fit failed, then the further reasons why.
func poorReasons(p *Placed, why []string) []string {
	out := make([]string, 0, len(why)+1)
	switch {
	case p.Problem != "":
		out = append(out, p.Problem)
	case !p.OK:
		out = append(out, "the fit failed")
	}
	return append(out, why...)
}

// dipoleFinding reports a station whose field is better explained with a
// magnetised object, placed at the object when its position is known.
func dipoleFinding(p *Placed, set *Settings, single bool) Finding {
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
	f.From = ObjectChainage(p.Chainage, p.Point, p.Dir, o.Point)
	f.To = f.From
	f.Message = fmt.Sprintf("the field at %s is better explained by a magnetised object (a buried steel or iron item, for example a drum, a valve or a pipe fitting) than by a current: the object lies %s, %.1f m from the conductor; it is left out of the current and cover profile (fitted as a point dipole; information criterion lower by %.0f)",
		at(p, single), set.depthText(o.Depth, o.DepthSigma), o.Distance, o.Evidence)
	f.Values = []Value{
		{Name: "east", Value: o.Point[0], Sigma: o.PointSigma[0], Unit: "m"},
		{Name: "north", Value: o.Point[1], Sigma: o.PointSigma[1], Unit: "m"},
	}
	f.Values = append(f.Values, set.depthValues(o.Depth, o.DepthSigma)...)
	f.Values = append(f.Values,
		Value{Name: "distance from conductor", Value: o.Distance, Sigma: distanceSigma(p, o), Unit: "m"},
		Value{Name: "moment", Value: o.Moment, Sigma: o.MomentSigma, Unit: "A m^2"},
		Value{Name: "BIC lower by", Value: o.Evidence},
	)
	return f
}

// ObjectChainage is the chainage of an object at obj, m: its position
// projected in plan on the conductor of the station at chainage c, whose
// line passes through at in direction dir (turned along increasing
// chainage). An object seen from two traverses, placed midway between
// them, kept the reporting traverse's chainage, 1 m short of its east and
// north given beside it (found in review). c itself when dir is not
// horizontal enough to measure along.
func ObjectChainage(c float64, at, dir, obj [3]float64) float64 {
	u, ok := horizUnit(dir)
	if !ok {
		return c
	}
	return c + (obj[0]-at[0])*u[0] + (obj[1]-at[1])*u[1]
}

// distanceSigma is the one-sigma uncertainty of o.Distance, the object's
// horizontal distance from the conductor of station p, by first-order
// propagation (JCGM 100:2008 section 5.1.2) of the object's east and north
// sigmas, taken as independent: the distance changes with the object's
// position along the horizontal normal from the conductor to it, and not
// along the conductor. The conductor's own position is taken as exact: its
// fitted sigma is tens of times smaller than the object's (0.03 mm across
// against 3 mm in the demo), and the object's sigmas are found with the
// conductors' geometry free. Zero when the object lies on the conductor in
// plan (no normal) or has no position sigmas.
func distanceSigma(p *Placed, o *Object) float64 {
	dx, dy := o.Point[0]-p.Point[0], o.Point[1]-p.Point[1]
	if h := math.Hypot(p.Dir[0], p.Dir[1]); h > 0 {
		ux, uy := p.Dir[0]/h, p.Dir[1]/h
		t := dx*ux + dy*uy
		dx, dy = dx-t*ux, dy-t*uy
	}
	d := math.Hypot(dx, dy)
	if !(d > 0) {
		return 0
	}
	return math.Hypot(dx/d*o.PointSigma[0], dy/d*o.PointSigma[1])
}

// bendTurn is the smallest change of direction between the stations either
// side of a poorly fitted one that is reported as a bend at it, degrees.
// An infinite straight line fitted to a traverse over a bend misses the
// field of the turned arm; a few degrees are within the scatter of fitted
// azimuths, tens are a bend a crew can look for.
const bendTurn = 10.0

// bendNeighbours is how many stations either side of a poorly fitted one
// are searched for a sound station to compare directions with.
const bendNeighbours = 3

// bendAt describes a bend of the conductor at station i of ps: the turn, in
// plan, between the directions of the nearest sound stations before and
// after it, when it is at least bendTurn. A station is sound here when it
// is usable, has no Problem, is not steep, and its reduced chi-square is
// within maxChi (when positive) or half station i's, whichever is larger:
// near a bend the neighbours' fits suffer too, but less. It returns ""
// when there is none, else a phrase such as "the conductor turns 31
// degrees to the left between T18 and T20" and the signed turn (degrees,
// positive to the left looking along the route).
func bendAt(ps []Placed, i int, maxChi float64) (string, float64) {
	a, b, turn := bendSpan(ps, i, maxChi)
	if a < 0 {
		return "", 0
	}
	side := "left"
	if turn < 0 {
		side = "right"
	}
	return fmt.Sprintf("the conductor turns %.0f degrees to the %s between %s and %s", math.Abs(turn), side, label(&ps[a]), label(&ps[b])), turn
}

// bendSpan finds the bend of bendAt: the indices in ps of the sound
// stations before and after station i that it is measured between, and
// the turn (degrees); a and b are -1 when there is none.
func bendSpan(ps []Placed, i int, maxChi float64) (a, b int, turn float64) {
	red := func(p *Placed) float64 {
		if p.DOF > 0 && p.Chi2 > 0 {
			return p.Chi2 / float64(p.DOF)
		}
		return 0
	}
	lim := math.Max(maxChi, red(&ps[i])/2)
	sound := func(p *Placed) bool {
		return p.usable() && p.Problem == "" && math.Hypot(p.Dir[0], p.Dir[1]) > 0.5 && (maxChi <= 0 || red(p) <= lim)
	}
	a, b = -1, -1
	for j := i - 1; j >= 0 && j >= i-bendNeighbours; j-- {
		if sound(&ps[j]) {
			a = j
			break
		}
	}
	for j := i + 1; j < len(ps) && j <= i+bendNeighbours; j++ {
		if sound(&ps[j]) {
			b = j
			break
		}
	}
	if a < 0 || b < 0 {
		return -1, -1, 0
	}
	u, v := ps[a].Dir, ps[b].Dir
	turn = math.Atan2(u[0]*v[1]-u[1]*v[0], u[0]*v[0]+u[1]*v[1]) * 180 / math.Pi
	if math.Abs(turn) < bendTurn {
		return -1, -1, 0
	}
	return a, b, turn
}

// bend is a stretch of the route over which quality names a bend: from
// the sound station before the poorly fitted ones to the sound station
// after them (overlapping bends merged). Currents fitted there are biased
// by the turned arm that the straight-line model misses, most at the
// stations nearest the vertex, so that a change between two of them is no
// evidence of current joining or leaving (see steps).
type bend struct {
	from, to float64 // chainage of the sound stations either side, m
	a, b     string  // their labels
	worst    string  // key of the station with the worst fit, where a note goes
	worstChi float64
}

// bends returns the bends quality names, in route order: at each station
// whose fit failed or whose reduced chi-square is over the limit, where
// bendSpan finds a turn.
func bends(ps []Placed, set *Settings) []bend {
	maxChi := set.maxReducedChi2()
	var out []bend
	for i := range ps {
		p := &ps[i]
		r := 0.0
		if p.DOF > 0 && p.Chi2 > 0 {
			r = p.Chi2 / float64(p.DOF)
		}
		over := maxChi > 0 && p.DOF > 0 && r > maxChi
		if !over && p.OK {
			continue
		}
		if !p.OK {
			r = math.Inf(1)
		}
		a, b, _ := bendSpan(ps, i, maxChi)
		if a < 0 {
			continue
		}
		bd := bend{from: ps[a].Chainage, to: ps[b].Chainage, a: label(&ps[a]), b: label(&ps[b]), worst: p.Key, worstChi: r}
		if k := len(out) - 1; k >= 0 && bd.from < out[k].to {
			if bd.to > out[k].to {
				out[k].to, out[k].b = bd.to, bd.b
			}
			if r > out[k].worstChi {
				out[k].worst, out[k].worstChi = p.Key, r
			}
			continue
		}
		out = append(out, bd)
	}
	return out
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// stepCause names the current step among steps (current-step findings)
// whose bracket holds station p as the likely cause of p's misfit: near
// where current leaves or joins the conductor its current changes along
// the stretch the traverse sees (the current's path away from it, and
// the line's own current, end there), which one straight infinite line
// cannot follow. Five traverses beside 3 A leaving a 20 A AC line each
// read "a bend, a change of depth or a nearby object" below the finding
// that placed the fault among them (found in review). Empty when no
// step's bracket holds p.
func stepCause(p *Placed, steps []Finding) string {
	for i := range steps {
		f := &steps[i]
		if f.Kind != KindCurrentStep || p.Chainage < f.From || p.Chainage > f.To {
			continue
		}
		where := fmt.Sprintf("between chainage %.1f and %.1f m", f.From, f.To)
		for _, v := range f.Values {
			if v.Name == "location (chainage)" && finite(v.Value) {
				where = fmt.Sprintf("at chainage %s m", PlusMinus(v.Value, v.Sigma))
			}
		}
		return fmt.Sprintf("most likely the change of current the current-step finding places %s: the current changes along the conductor there, which one straight line does not follow; else a bend, a change of depth or a nearby object", where)
	}
	return ""
}

// modelWidened says how a station's sigmas were widened for its misfit
// (modelDoubt), "" when they were not.
func modelWidened(p *Placed) string {
	if p.Model == nil {
		return ", which its uncertainties do not count"
	}
	return fmt.Sprintf("; its uncertainties are widened to count it (current ± %s A, depth ± %s m)", SigmaText(p.CurrentSigma), SigmaText(p.DepthSigma))
}
