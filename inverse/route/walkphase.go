package route

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"
)

// Phase references of walks on different days.
//
// The phase of an AC station is measured against the logger's clock, and
// the mains (or a tracer) keeps no fixed phase to it from one day to the
// next: each log's own phase ramp is taken out per route, but what is
// left is a phase reference of its own, some tens of degrees from another
// day's. Combined as they read, two walks 40° apart gave each station's
// repeats a phase sigma of some 20° (their disagreement), and a 5° phase
// turn, 0.87 A leaving a 10 A cable at -87.5° to it, which each walk alone
// reports at 70 sigmas, was not reported at all (found in review,
// simulated).
//
// walkPhases refers the phases of each later walk to the first walk's by
// one fitted offset per walk and a steady turn along it (each day's
// frequency may be off the one demodulated at by its own amount, which
// turns its phases steadily with time: a mains 0.5 mHz off turned one
// simulated day's phases 3.2° a station and the next day's -2.1°): a
// weighted straight line in the walk's own time (chainage when its
// stations are not timed) through its repeats' phase differences from
// the first walk's repeats, unwrapped one from the last; its sigma at
// each station is carried into that station's phase. When it leaves the
// differences within their sigmas (the chi-square within its
// 1-walkAlpha quantile) the walks' phases are combined after it, so a
// loss the walks share is found as each finds it; an offset or turn
// beyond walkPhaseK of its sigma is named in an information
// (walks-differ). When it does not, the phases changed along the route
// between the walks: a phasor loss that grew or shrank, or a phase
// reference that moved during a walk. The walks' phase differences are
// then tried as one change at one place (an offset each side of the best
// split, with the steady turn; the stations beside it that read part of
// the change left out); the caution names where and by how much, and the
// step search takes the first walk's phases alone at the repeated
// stations (each later walk's repeats are left out of the combined phase,
// their RMS currents still combined), so that a loss that changed between
// the walks is not averaged into one neither walk saw.

// phaseLeanOut is the most stations either side of a change of the walks'
// phase differences that may be left out of the offsets either side of
// it, as reading part of the change.
const phaseLeanOut = 2

// walkPhaseK is the multiple of its sigma beyond which a walk's phase
// offset from the first walk is named.
const walkPhaseK = 3.0

// phaseWalk is one walk's repeats, for walkPhases.
type phaseWalk struct {
	name string
	walkTime
	// timed is true when every repeat of the walk has a start time: its
	// drift is then per second of its own time, else per metre of
	// chainage.
	timed bool
	// d and v are the phase differences from the first walk's repeats at
	// the sets both hold (route order, unwrapped one from the last),
	// degrees, and their variances; tau the walk's own time (or
	// chainage) there; at is the set's station of the first walk.
	d, v, tau []float64
	at        []*Placed
	// fit is the offset (and drift) fitted to d; chi2 its chi-square.
	fit  phaseLine
	chi2 float64
	// split, when the differences are one change at one place, is the
	// index in d of the first set after it, fit then holding an offset
	// either side; -1 otherwise. left counts the sets before and after
	// it left out of the fit (reading part of the change); leaning is
	// true when no model of one change fits within its sigmas (see
	// walkPhases).
	split     int
	splitChi2 float64
	left      [2]int
	leaning   bool
}

// phaseLine is a fitted offset, or an offset either side of a split,
// and a drift, of a walk's phases from the first walk's: c[0] (and
// c[1] past the split) degrees, c[len-1] the drift, degrees per second
// (or metre) of tau, when drift is true; cov their covariance.
type phaseLine struct {
	c     [3]float64
	cov   [3][3]float64
	n     int // the number of parameters
	drift bool
}

// at returns the fitted difference at tau on side g (0, or 1 past a
// split) and its sigma.
func (l *phaseLine) at(tau float64, g int) (float64, float64) {
	if l.n == 0 {
		return 0, 0
	}
	v := l.c[g]
	vr := l.cov[g][g]
	if l.drift {
		k := l.n - 1
		v += l.c[k] * tau
		vr += 2*tau*l.cov[g][k] + tau*tau*l.cov[k][k]
	}
	return v, math.Sqrt(math.Max(vr, 0))
}

// fitPhaseLine fits the differences d (variances v, at tau) by weighted
// least squares: one offset (levels 1), or one either side of index
// split with the points in [skipA, skipB) left out (levels 2), and a
// drift in tau when tau spreads and enough points remain. It returns
// the fit, its chi-square and degrees of freedom; false when singular or
// without degrees of freedom.
func fitPhaseLine(d, v, tau []float64, levels, split, skipA, skipB int) (phaseLine, float64, int, bool) {
	var l phaseLine
	lo, hi := math.Inf(1), math.Inf(-1)
	used := 0
	for k := range d {
		if k >= skipA && k < skipB {
			continue
		}
		used++
		lo, hi = math.Min(lo, tau[k]), math.Max(hi, tau[k])
	}
	l.n = levels
	if hi > lo && used >= levels+2 {
		l.drift = true
		l.n++
	}
	dof := used - l.n
	if dof < 1 {
		return l, 0, 0, false
	}
	row := func(k int) [3]float64 {
		var z [3]float64
		g := 0
		if levels == 2 && k >= split {
			g = 1
		}
		z[g] = 1
		if l.drift {
			z[l.n-1] = tau[k]
		}
		return z
	}
	var a [3][3]float64
	var r [3]float64
	for k := range d {
		if k >= skipA && k < skipB {
			continue
		}
		z := row(k)
		for i := 0; i < l.n; i++ {
			r[i] += z[i] * d[k] / v[k]
			for j := 0; j < l.n; j++ {
				a[i][j] += z[i] * z[j] / v[k]
			}
		}
	}
	inv, ok := invert(a, l.n)
	if !ok {
		return l, 0, 0, false
	}
	l.cov = inv
	for i := 0; i < l.n; i++ {
		for j := 0; j < l.n; j++ {
			l.c[i] += inv[i][j] * r[j]
		}
	}
	var chi2 float64
	for k := range d {
		if k >= skipA && k < skipB {
			continue
		}
		z := row(k)
		m := 0.0
		for i := 0; i < l.n; i++ {
			m += z[i] * l.c[i]
		}
		chi2 += (d[k] - m) * (d[k] - m) / v[k]
	}
	return l, chi2, dof, true
}

// walkPhases returns the finding on the walks' phase references (nil
// when none is named) and a copy of ps (route order) with each later
// walk's phases referred to the first walk's (see above). With no AC
// repeats it returns ps itself.
func walkPhases(ps []Placed, gap float64) ([]Finding, []Placed) {
	out := append([]Placed(nil), ps...)
	sets := repeatSets(out, gap)
	if len(sets) == 0 {
		return nil, ps
	}
	named := true
	for _, s := range sets {
		for _, p := range s {
			if !p.AC || p.PairNet || !(p.PhaseSigma > 0) {
				return nil, ps
			}
			if p.Walk == "" {
				named = false
			}
		}
	}
	walkOf := map[int]string{}
	walks := map[string]*phaseWalk{}
	for _, s := range sets {
		sort.SliceStable(s, func(a, b int) bool { return s[a].Index < s[b].Index })
		for k, p := range s {
			name := p.Walk
			if !named {
				name = ordinalWalk(k)
			}
			walkOf[p.Index] = name
			w := walks[name]
			if w == nil {
				w = &phaseWalk{name: name, walkTime: walkTime{first: p.Index}, split: -1}
				walks[name] = w
			}
			w.see(p)
		}
	}
	order := make([]*phaseWalk, 0, len(walks))
	for _, w := range walks {
		order = append(order, w)
	}
	sort.Slice(order, func(a, b int) bool { return order[a].before(order[b].walkTime) })
	ref := order[0]
	for _, w := range order {
		w.timed = !w.start.IsZero()
	}
	for _, s := range sets {
		for _, p := range s {
			if p.Start.IsZero() {
				walks[walkOf[p.Index]].timed = false
			}
		}
	}
	// tauOf is a station's place in its walk's own time (seconds from the
	// walk's start), or its chainage when the walk is not timed.
	tauOf := func(p *Placed, w *phaseWalk) float64 {
		if w.timed && !p.Start.IsZero() {
			return p.Start.Sub(w.start).Seconds()
		}
		return p.Chainage
	}
	for _, s := range sets {
		var r *Placed
		seen := map[string]bool{}
		for _, p := range s {
			if walkOf[p.Index] == ref.name {
				r = p
				break
			}
		}
		if r == nil {
			continue
		}
		for _, p := range s {
			w := walks[walkOf[p.Index]]
			if w == ref || seen[w.name] {
				continue
			}
			seen[w.name] = true
			d := wrapDeg(p.Phase - r.Phase)
			if n := len(w.d); n > 0 {
				d = w.d[n-1] + wrapDeg(d-w.d[n-1])
			}
			w.d = append(w.d, d)
			w.v = append(w.v, p.PhaseSigma*p.PhaseSigma+r.PhaseSigma*r.PhaseSigma)
			w.tau = append(w.tau, tauOf(p, w))
			w.at = append(w.at, r)
		}
	}
	var chi2 float64
	dof := 0
	for _, w := range order[1:] {
		if len(w.d) == 0 {
			continue
		}
		f, c, n, ok := fitPhaseLine(w.d, w.v, w.tau, 1, 0, 0, 0)
		if !ok {
			// One repeat: its difference is the offset.
			f = phaseLine{n: 1}
			f.c[0], f.cov[0][0], c, n = w.d[0], w.v[0], 0, 0
		}
		w.fit, w.chi2 = f, c
		chi2 += c
		dof += n
	}
	aligned := dof == 0 || chi2 <= (distuv.ChiSquared{K: float64(dof)}).Quantile(1-walkAlpha)
	if !aligned {
		for _, w := range order[1:] {
			if len(w.d) < 4 {
				continue
			}
			// One change at one place: an offset each side of a split
			// (and the drift), up to phaseLeanOut stations either side
			// of it left out when they read part of the change (a
			// station within a depth or so of the loss sees both sides
			// of it). The model with fewest left out whose chi-square is
			// within its quantile is taken; failing any, the one of
			// least chi-square per degree of freedom, its sigmas widened
			// by its square root (the stations near the change lean
			// towards it beyond their sigmas).
			type splitFit struct {
				j       int
				out     [2]int
				fit     phaseLine
				chi2    float64
				dof     int
				passing bool
			}
			var pass, any *splitFit
			for j := 1; j < len(w.d); j++ {
				for o0 := 0; o0 <= phaseLeanOut; o0++ {
					for o1 := 0; o1 <= phaseLeanOut; o1++ {
						if j-o0 < 1 || j+o1 >= len(w.d) {
							continue
						}
						f, c, n, ok := fitPhaseLine(w.d, w.v, w.tau, 2, j, j-o0, j+o1)
						if !ok {
							continue
						}
						sf := &splitFit{j: j, out: [2]int{o0, o1}, fit: f, chi2: c, dof: n}
						sf.passing = c <= (distuv.ChiSquared{K: float64(n)}).Quantile(1-walkAlpha)
						if sf.passing && (pass == nil || o0+o1 < pass.out[0]+pass.out[1] || (o0+o1 == pass.out[0]+pass.out[1] && c < pass.chi2)) {
							pass = sf
						}
						if any == nil || c/float64(n) < any.chi2/float64(any.dof) {
							any = sf
						}
					}
				}
			}
			best := pass
			if best == nil {
				best = any
				if best == nil {
					continue
				}
				r := best.chi2 / float64(best.dof)
				for i := range best.fit.cov {
					for j := range best.fit.cov[i] {
						best.fit.cov[i][j] *= r
					}
				}
			}
			// The field of current leaving reaches along the route as
			// h^2/(4 d^2) of the change at a distance d from it (a
			// semi-infinite line h below, read straight above;
			// Biot-Savart), so with phases read finely stations well
			// beyond the two beside it lean towards it beyond their
			// sigmas. Those nearer the change than where the lean is one
			// sigma of the differences are left out too, while two sets
			// or more remain either side.
			if d, ok := phaseLeanReach(w, best.j, best.fit); ok {
				xm := (w.at[best.j-1].Chainage + w.at[best.j].Chainage) / 2
				a, b := best.j-best.out[0], best.j+best.out[1]
				for a > 2 && xm-w.at[a-1].Chainage < d {
					a--
				}
				for b < len(w.d)-2 && w.at[b].Chainage-xm < d {
					b++
				}
				if a < best.j-best.out[0] || b > best.j+best.out[1] {
					if f, c, n, ok := fitPhaseLine(w.d, w.v, w.tau, 2, best.j, a, b); ok {
						best = &splitFit{j: best.j, out: [2]int{best.j - a, b - best.j}, fit: f, chi2: c, dof: n}
						best.passing = c <= (distuv.ChiSquared{K: float64(n)}).Quantile(1-walkAlpha)
						if !best.passing {
							r := c / float64(n)
							for i := range best.fit.cov {
								for j := range best.fit.cov[i] {
									best.fit.cov[i][j] *= r
								}
							}
						}
					}
				}
			}
			w.split, w.splitChi2, w.left, w.leaning = best.j, best.chi2, best.out, !best.passing
			w.fit = best.fit
		}
	}
	// Each later walk's stations referred to the first walk's phase: all
	// of a named walk's (those past a change, by the offset after it),
	// the repeats alone when the walks are not named. Where one offset
	// does not hold, the walk's repeats are left out of the combined
	// phase.
	moved := false
	for i := range out {
		p := &out[i]
		if !p.AC {
			continue
		}
		name, ok := walkOf[p.Index]
		if !ok && named {
			name, ok = p.Walk, p.Walk != ""
		}
		w := walks[name]
		if !ok || w == nil || w == ref || len(w.d) == 0 {
			continue
		}
		g := 0
		if w.split > 0 && p.Chainage >= (w.at[w.split-1].Chainage+w.at[w.split].Chainage)/2 {
			g = 1
		}
		off, sig := w.fit.at(tauOf(p, w), g)
		p.Phase = wrapDeg(p.Phase - off)
		p.PhaseSigma = math.Hypot(p.PhaseSigma, sig)
		if !aligned {
			p.phaseOut = true
		}
		moved = true
	}
	if !moved {
		return nil, ps
	}
	f := Finding{Kind: KindWalksDiffer, Severity: SeverityInfo, From: sets[0][0].Chainage, To: sets[len(sets)-1][0].Chainage, Position: sets[0][0].Point}
	for _, s := range sets {
		for _, p := range s {
			f.Keys = append(f.Keys, p.Key)
		}
	}
	what := fmt.Sprintf("the %d %s walked more than once", len(sets), plural(len(sets), "station", "stations"))
	test := fmt.Sprintf("chi-square %.3g on %d %s", chi2, dof, plural(dof, "degree of freedom", "degrees of freedom"))
	var offs []string
	notable := false
	for _, w := range order[1:] {
		if len(w.d) == 0 || w.split > 0 {
			continue
		}
		c, sc := w.fit.c[0], math.Sqrt(w.fit.cov[0][0])
		if math.Abs(wrapDeg(c)) > walkPhaseK*sc {
			notable = true
		}
		o := fmt.Sprintf("%s° for %s", PlusMinus(wrapDeg(c), sc), phaseWalkRef(w, named))
		f.Values = append(f.Values, Value{Name: "phase offset " + w.name, Value: wrapDeg(c), Sigma: sc, Unit: "deg"})
		if w.fit.drift {
			k := w.fit.n - 1
			r, sr := w.fit.c[k], math.Sqrt(w.fit.cov[k][k])
			if math.Abs(r) > walkPhaseK*sr {
				notable = true
			}
			unit, per := "deg/s", "second of its own time"
			if !w.timed {
				unit, per = "deg/m", "metre of chainage"
			}
			o += fmt.Sprintf(" at its start, turning by %s° a %s", PlusMinus(r, sr), per)
			f.Values = append(f.Values, Value{Name: "phase drift " + w.name, Value: r, Sigma: sr, Unit: unit})
		}
		offs = append(offs, o)
	}
	if aligned {
		if !notable {
			return nil, out
		}
		f.Message = fmt.Sprintf("the walks' phase references differ (the phase of a current against each logger's clock moves from day to day, and each day's frequency may be off the one demodulated at by its own amount): over %s, the phases of each later walk are those of %s plus one offset and a steady turn, %s (%s with them taken out); for the steps each later walk's phases are taken less them (their sigma carried), at the reference of %s, before the repeats are combined",
			what, phaseWalkRef(ref, named), joinAnd(offs), test, phaseWalkRef(ref, named))
		return []Finding{f}, out
	}
	f.Severity = SeverityCaution
	f.Values = append(f.Values, Value{Name: "phase chi-square", Value: chi2}, Value{Name: "phase degrees of freedom", Value: float64(dof)})
	var parts []string
	for _, w := range order[1:] {
		if w.split <= 0 {
			continue
		}
		upTo, from := w.at[w.split-1-w.left[0]], w.at[w.split+w.left[1]]
		var between []string
		for k := w.split - w.left[0]; k < w.split+w.left[1]; k++ {
			between = append(between, label(w.at[k]))
		}
		// The offsets either side at the change's time in the walk, and
		// the change with its sigma from the fit's covariance.
		tm := (w.tau[w.split-1] + w.tau[w.split]) / 2
		a, sa := w.fit.at(tm, 0)
		b, sb := w.fit.at(tm, 1)
		ch := b - a
		vch := w.fit.cov[0][0] + w.fit.cov[1][1] - 2*w.fit.cov[0][1]
		chs := math.Sqrt(math.Max(vch, 0))
		part := fmt.Sprintf("%s read %s° from %s up to %s and %s° from %s on (at the change, a steady turn along the walk taken out)",
			phaseWalkRef(w, named), PlusMinus(wrapDeg(a), sa), phaseWalkRef(ref, named), at(upTo, false), PlusMinus(wrapDeg(b), sb), at(from, false))
		if len(between) > 0 {
			part += fmt.Sprintf(" (%s between, reading part of the change)", joinAnd(between))
		}
		if w.leaning {
			part += fmt.Sprintf(" (no one change fits the differences within their sigmas, chi-square %.3g: the stations near it lean towards it, and these sigmas are widened by the misfit)", w.splitChi2)
		}
		part += fmt.Sprintf(": the phase turn between %s and %s changed between the walks by %s°, a loss there that grew or shrank (or a phase reference that moved during a walk)",
			label(upTo), label(from), PlusMinus(ch, chs))
		if len(parts) == 0 {
			f.From, f.To, f.Position = upTo.Chainage, from.Chainage, upTo.Point
		}
		parts = append(parts, part)
		f.Values = append(f.Values,
			Value{Name: "phase offset before " + w.name, Value: wrapDeg(a), Sigma: sa, Unit: "deg"},
			Value{Name: "phase offset after " + w.name, Value: wrapDeg(b), Sigma: sb, Unit: "deg"},
			Value{Name: "phase turn change " + w.name, Value: ch, Sigma: chs, Unit: "deg"})
	}
	msg := fmt.Sprintf("the walks' phases differ along the route, not by one offset and steady turn per walk (%s): ", test)
	if len(parts) > 0 {
		msg += strings.Join(parts, "; ")
		if len(offs) > 0 {
			msg += "; " + joinAnd(offs)
		}
	} else {
		msg += fmt.Sprintf("over %s, the offsets from %s, %s, leave the phases apart beyond their sigmas, and not by one change at one place (a phasor loss that changed between the walks, a phase reference that moved during a walk, or a repeat's fit off)", what, phaseWalkRef(ref, named), joinAnd(offs))
	}
	f.Message = msg + fmt.Sprintf("; for the phasor steps the repeated stations take the phases of %s alone: each walk's losses hold for its own time only (locate each log alone to size its own)", phaseWalkRef(ref, named))
	return []Finding{f}, out
}

// phaseLeanReach returns the distance along the route, m, within which
// stations lean towards a change of the walk w's phase differences (at
// the split j, fitted by f) by more than one sigma of a difference:
// (h/2) sqrt(|change| / sigma), h the median depth of the sets' first
// walk stations (the conductor's depth stands for its distance below the
// sensor, a little short of it) and sigma the median of the differences' sigmas; false when not known.
func phaseLeanReach(w *phaseWalk, j int, f phaseLine) (float64, bool) {
	var hs, ss []float64
	for k, p := range w.at {
		if p.Depth > 0 {
			hs = append(hs, p.Depth)
		}
		ss = append(ss, math.Sqrt(w.v[k]))
	}
	if len(hs) == 0 || f.n < 2 {
		return 0, false
	}
	tm := (w.tau[j-1] + w.tau[j]) / 2
	a, _ := f.at(tm, 0)
	b, _ := f.at(tm, 1)
	sg := medianOf(ss)
	if !(sg > 0) {
		return 0, false
	}
	return medianOf(hs) / 2 * math.Sqrt(math.Abs(b-a)/sg), true
}

// phaseWalkRef names a walk: "day2.csv", "the second walk".
func phaseWalkRef(w *phaseWalk, named bool) string {
	if named {
		return w.name
	}
	return "the " + w.name
}
