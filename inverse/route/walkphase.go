package route

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

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
// one fitted offset per walk: the inverse-variance mean of its repeats'
// phase differences from the first walk's repeats (about their circular
// mean, so that a difference near ±180° does not split), its sigma
// carried into each of the walk's stations. When one offset per walk
// leaves the differences within their sigmas (the chi-square within its
// 1-walkAlpha quantile) the walks' phases are combined after it, so a
// loss the walks share is found as each finds it; an offset beyond
// walkPhaseK of its sigma is named in an information (walks-differ).
// When it does not, the phases changed along the route between the
// walks: a phasor loss that grew or shrank, or a phase reference that
// moved during a walk. The walks' phase differences are then tried as one
// change at one place (an offset each side of the best split); the
// caution names where and by how much, and the step search takes the
// first walk's phases alone at the repeated stations (each later walk's
// repeats are left out of the combined phase, their RMS currents still
// combined), so that a loss that changed between the walks is not averaged
// into one neither walk saw.

// phaseLeanOut is the most stations either side of a change of the walks'
// phase differences that may be left out of the offsets either side of
// it, as reading part of the change.
const phaseLeanOut = 2

// walkPhaseK is the multiple of its sigma beyond which a walk's phase
// offset from the first walk is named.
const walkPhaseK = 3.0

// phaseWalk is one walk's repeats, for walkPhases.
type phaseWalk struct {
	name  string
	start time.Time
	first int
	// d and v are the phase differences from the first walk's repeats at
	// the sets both hold (route order), degrees, and their variances;
	// at is the set's station of the first walk.
	d, v []float64
	at   []*Placed
	// offset and sigma are the fitted offset, degrees; chi2 the
	// differences' chi-square about it.
	offset, sigma, chi2 float64
	// split, when the differences are one change at one place, is the
	// index in d of the first set after it, with the offsets before
	// (offset, sigma) and after (after, afterSigma); -1 otherwise.
	split             int
	after, afterSigma float64
	splitChi2         float64
	// left counts the sets before and after the split left out of the
	// offsets (reading part of the change); leaning is true when no
	// model of one change fits within its sigmas (see walkPhases).
	left    [2]int
	leaning bool
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
				w = &phaseWalk{name: name, first: p.Index, split: -1}
				walks[name] = w
			}
			w.first = min(w.first, p.Index)
			if !p.Start.IsZero() && (w.start.IsZero() || p.Start.Before(w.start)) {
				w.start = p.Start
			}
		}
	}
	order := make([]*phaseWalk, 0, len(walks))
	for _, w := range walks {
		order = append(order, w)
	}
	sort.Slice(order, func(a, b int) bool {
		x, y := order[a], order[b]
		if !x.start.IsZero() && !y.start.IsZero() && !x.start.Equal(y.start) {
			return x.start.Before(y.start)
		}
		return x.first < y.first
	})
	ref := order[0]
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
			w.d = append(w.d, wrapDeg(p.Phase-r.Phase))
			w.v = append(w.v, p.PhaseSigma*p.PhaseSigma+r.PhaseSigma*r.PhaseSigma)
			w.at = append(w.at, r)
		}
	}
	var chi2 float64
	dof := 0
	for _, w := range order[1:] {
		if len(w.d) == 0 {
			continue
		}
		w.offset, w.sigma, w.chi2 = phaseOffset(w.d, w.v)
		chi2 += w.chi2
		dof += len(w.d) - 1
	}
	aligned := dof == 0 || chi2 <= (distuv.ChiSquared{K: float64(dof)}).Quantile(1-walkAlpha)
	if !aligned {
		for _, w := range order[1:] {
			if len(w.d) < 3 || w.chi2 <= (distuv.ChiSquared{K: float64(len(w.d) - 1)}).Quantile(1-walkAlpha) {
				continue
			}
			// One change at one place: an offset each side of a split,
			// up to phaseLeanOut stations either side of it left out
			// when they read part of the change (a station within a
			// depth or so of the loss sees both sides of it). The model
			// with fewest left out whose chi-square is within its
			// quantile is taken; failing any, the one of least
			// chi-square per degree of freedom, its offsets' sigmas
			// widened by its square root (the stations near the change
			// lean towards it beyond their sigmas).
			type splitFit struct {
				j       int
				out     [2]int
				a, sa   float64
				b, sb   float64
				chi2    float64
				dof     int
				passing bool
			}
			var pass, any *splitFit
			for j := 1; j < len(w.d); j++ {
				for o0 := 0; o0 <= phaseLeanOut; o0++ {
					for o1 := 0; o1 <= phaseLeanOut; o1++ {
						end, start := j-o0, j+o1
						if end < 1 || start >= len(w.d) {
							continue
						}
						dof := end + len(w.d) - start - 2
						if dof < 1 {
							continue
						}
						oa, ea, ca := phaseOffset(w.d[:end], w.v[:end])
						ob, eb, cb := phaseOffset(w.d[start:], w.v[start:])
						c := &splitFit{j: j, out: [2]int{o0, o1}, a: oa, sa: ea, b: ob, sb: eb, chi2: ca + cb, dof: dof}
						c.passing = c.chi2 <= (distuv.ChiSquared{K: float64(dof)}).Quantile(1-walkAlpha)
						if c.passing && (pass == nil || o0+o1 < pass.out[0]+pass.out[1] || (o0+o1 == pass.out[0]+pass.out[1] && c.chi2 < pass.chi2)) {
							pass = c
						}
						if any == nil || c.chi2/float64(c.dof) < any.chi2/float64(any.dof) {
							any = c
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
				r := math.Sqrt(best.chi2 / float64(best.dof))
				best.sa, best.sb = best.sa*r, best.sb*r
			}
			w.split, w.splitChi2, w.left, w.leaning = best.j, best.chi2, best.out, !best.passing
			w.offset, w.sigma, w.after, w.afterSigma = best.a, best.sa, best.b, best.sb
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
		off, sig := w.offset, w.sigma
		if w.split > 0 && p.Chainage >= (w.at[w.split-1].Chainage+w.at[w.split].Chainage)/2 {
			off, sig = w.after, w.afterSigma
		}
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
	named3 := false
	for _, w := range order[1:] {
		if len(w.d) == 0 {
			continue
		}
		if w.split > 0 {
			continue
		}
		if math.Abs(w.offset) > walkPhaseK*w.sigma {
			named3 = true
		}
		offs = append(offs, fmt.Sprintf("%s° for %s", PlusMinus(w.offset, w.sigma), phaseWalkRef(w, named)))
		f.Values = append(f.Values, Value{Name: "phase offset " + w.name, Value: w.offset, Sigma: w.sigma, Unit: "deg"})
	}
	if aligned {
		if !named3 {
			return nil, out
		}
		f.Message = fmt.Sprintf("the walks' phase references differ (the phase of a current against each logger's clock moves from day to day): over %s, the phases of each later walk are those of %s plus one offset, %s (%s with the offsets taken out); for the steps each later walk's phases are taken less its offset (its sigma carried), at the reference of %s, before the repeats are combined",
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
		ch, chs := w.after-w.offset, math.Hypot(w.sigma, w.afterSigma)
		part := fmt.Sprintf("%s read %s° from %s up to %s and %s° from %s on",
			phaseWalkRef(w, named), PlusMinus(w.offset, w.sigma), phaseWalkRef(ref, named), at(upTo, false), PlusMinus(w.after, w.afterSigma), at(from, false))
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
			Value{Name: "phase offset before " + w.name, Value: w.offset, Sigma: w.sigma, Unit: "deg"},
			Value{Name: "phase offset after " + w.name, Value: w.after, Sigma: w.afterSigma, Unit: "deg"},
			Value{Name: "phase turn change " + w.name, Value: ch, Sigma: chs, Unit: "deg"})
	}
	msg := fmt.Sprintf("the walks' phases differ along the route, not by one offset per walk (%s): ", test)
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

// phaseOffset returns the inverse-variance mean of the phase differences
// d, degrees (variances v), taken about their circular mean, its sigma
// and the chi-square of d about it.
func phaseOffset(d, v []float64) (off, sigma, chi2 float64) {
	var ss, sc float64
	for k := range d {
		r := d[k] * math.Pi / 180
		ss += math.Sin(r) / v[k]
		sc += math.Cos(r) / v[k]
	}
	c := math.Atan2(ss, sc) * 180 / math.Pi
	var sw, swd float64
	for k := range d {
		sw += 1 / v[k]
		swd += (c + wrapDeg(d[k]-c)) / v[k]
	}
	off = swd / sw
	for k := range d {
		e := c + wrapDeg(d[k]-c) - off
		chi2 += e * e / v[k]
	}
	return wrapDeg(off), math.Sqrt(1 / sw), chi2
}

// phaseWalkRef names a walk: "day2.csv", "the second walk".
func phaseWalkRef(w *phaseWalk, named bool) string {
	if named {
		return w.name
	}
	return "the " + w.name
}
