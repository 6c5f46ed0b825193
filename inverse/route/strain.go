package route

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Fits the model misses, judged against the noise measured apart from them.
//
// A fit's reduced chi-square is only as good as its yardstick. When the
// noise is estimated from the fits' own residuals, the yardstick was the
// route's typical fit (package report: the median of the groups' noise
// estimates, still so where no noise is measured apart from the fits),
// and a source the model lacks that spoils half the route raises it to
// itself. At a tee (a 40 A feeder losing 15 A to a branch at
// 45 degrees, traverses every 4 m) the branch's field, outside the
// traverses but a few metres off, pulled the fits of the five traverses
// past it 0.3-1.6 A low (1.3-6.4%) with misfits of 9-47 nT RMS against 2 nT
// of sensor noise; the median misfit, 6.4 nT, passed the last two as sound,
// and they set the level of a false 0.84 A fall downstream.
//
// Station.Noise, the noise measured apart from the fit (for DC readings
// from fourth differences of successive readings), gives each fit its own
// yardstick: its misfit ratio RMS / Noise. The route's reference ratio is
// the lower quartile of the usable stations' ratios, and at least 1: slow
// wander of a carried sensor, which the differences do not see, makes
// every fit miss by a few times the measured noise, and the quartile takes
// that as the norm, while it stays at the sound fits' ratio when up to
// three quarters of the stations share a misfit. A station whose ratio
// exceeds the reference by sqrt(MaxReducedChi2) (2 at the default, the
// poor-fit limit on chi-square as a ratio of RMS residuals) is strained:
//
//   - it sets no level of a step unless it brackets the step, as a poor
//     fit sets none (see plateau.go), and steps either side of one are
//     merged across it (acrossPoor);
//   - as a bracketing station its current's sigma is widened by the shift
//     its misfit can make: for a least-squares fit, a field error e moves
//     the current by a.e, with |a| = sigma_I / sigma the current's sigma
//     per unit reading noise, so by at most |a| |e| (Cauchy-Schwarz).
//     Taking |e| from the residuals beyond the reference,
//     sqrt(N (RMS^2 - (ratio_ref Noise)^2)) over the N values fitted,
//
//     shift = sigma_I SigmasPerMisfit sqrt(RMS^2 - (ratio_ref Noise)^2),
//
//     SigmasPerMisfit = sqrt(N) / sigma. The part of e that the
//     fit absorbed leaves no residual, so this is a scale, not a bound: at
//     the tee above it was 0.36-1.9 A where the errors were 0.33-1.6 A and
//     the bound from the whole error field 3.0-7.1 A (TestMisfitShiftBound);
//   - the stations beside a strained one share its cause, less, and so do
//     their neighbours: their own shift (the same formula, zero when their
//     ratio is within the reference) is a bias the plateau's stations
//     share, which does not average away over them, and is added to the
//     sigma of the level they set (the largest on each side, besideShift)
//     rather than to their weights. At the tee, T05 and T09 beside it read
//     0.07 A high and 0.08 A low, and a fall sized from them read 15.282 ±
//     0.071 A;
//   - a step some of whose stations, bracket to bracket, are strained
//     names them, with their ratios and shifts.
//
// The poor-fit findings are not changed: they keep the route's yardstick,
// which package report now takes from the measured noise the same way
// (each group's measured noise times the lower quartile of the groups'
// ratios, at least 1: report yardstick.go).

// strainRef is the quantile of the stations' misfit ratios taken as the
// route's reference ratio.
const strainRef = 0.25

// minStrainStations is the fewest usable stations with a measured noise
// from which the reference ratio is taken.
const minStrainStations = 4

// markStrained sets the strain of each usable station of ps whose misfit
// ratio exceeds the route's reference by sqrt(MaxReducedChi2); nothing when
// the poor-fit check is off or fewer than minStrainStations stations carry
// a measured noise.
func markStrained(ps []Placed, set *Settings) {
	maxChi := set.maxReducedChi2()
	if maxChi <= 0 {
		return
	}
	var ratios []float64
	for _, p := range usable(ps) {
		if r := misfitRatio(p); r > 0 {
			ratios = append(ratios, r)
		}
	}
	if len(ratios) < minStrainStations {
		return
	}
	sort.Float64s(ratios)
	// Nearest rank: the smallest ratio at or above the quantile.
	ref := math.Max(1, ratios[int(math.Ceil(strainRef*float64(len(ratios))))-1])
	u := usable(ps)
	shift := func(p *Placed) float64 {
		if r := misfitRatio(p); r > ref && p.SigmasPerMisfit > 0 {
			return unwidened(p) * p.SigmasPerMisfit * math.Sqrt(p.RMS*p.RMS-ref*p.Noise*ref*p.Noise)
		}
		return 0
	}
	for _, p := range u {
		if r := misfitRatio(p); r > math.Sqrt(maxChi)*ref && p.SigmasPerMisfit > 0 && p.CurrentSigma > 0 {
			p.strained, p.shift = true, shift(p)
			p.misfit, p.misfitRef = r, ref
		}
	}
	// The stations beside a strained one share its cause, less: their
	// misfit beyond the reference, small as it is, is the model's error
	// too, not noise.
	for i, p := range u {
		if !p.strained && (i > 0 && u[i-1].strained || i+1 < len(u) && u[i+1].strained) {
			p.shift = shift(p)
		}
	}
}

// unwidened is the station's current sigma before the fit widened it for
// residuals correlated along the readings (Station.Widening): the shift's
// sensitivity |a| = sigma_I / sigma is that of independent readings.
func unwidened(p *Placed) float64 {
	s := p.fitCurrentSigma()
	if p.Widening > 1 && !p.whitened {
		return s / p.Widening
	}
	return s
}

// unwidenPoor takes the sigmas of each poor fit (not clean: a problem, or
// a reduced chi-square over the limit) as they were before the fit widened
// them for residuals correlated along the readings (Station.Widening), for
// the route's own analysis (steps, strain, ends): a poor fit's misfit is
// the model's, which the poor-fit findings name and the route counts
// (misfitSigma, strain.go), and its correlation would be counted twice.
// Past a cable's end the field of the end, fitted as a line 4.9 m deep
// with 74% of the current, had its shortfall of current hidden by a 2.7
// times wider sigma, and the end went unreported. rewidenPoor gives the
// fit's own sigmas back once that analysis is done.
func unwidenPoor(ps []Placed, set *Settings) {
	for i := range ps {
		p := &ps[i]
		if p.Widening > 1 && !clean(p, set) && !p.whitened {
			w := p.Widening
			p.fitSigma = [3]float64{p.CurrentSigma, p.DepthSigma, p.PhaseSigma}
			p.CurrentSigma /= w
			p.DepthSigma /= w
			p.PhaseSigma /= w
			// Widening is kept (a further conductor's station copies
			// this one's Station, with its own widened sigmas).
			p.whitened, p.routeWhite = true, true
		}
	}
}

// rewidenPoor gives each station that unwidenPoor took back its fit's own
// sigmas: the station is published (Route.Stations, and through them the
// report's route, its least cover and plots) as its fit gives it, as the
// report's table of fits does. Before, a poor fit whose sigmas the
// correlation of its residuals had widened 5.7 times gave its cover as
// 1.0814 ± 0.0089 m in the table and 1.0814 ± 0.0016 m as the survey's
// least cover (truth 1.100 m: 2.1 and 11.6 sigma off).
func rewidenPoor(ps []Placed) {
	for i := range ps {
		p := &ps[i]
		if p.whitened {
			p.CurrentSigma, p.DepthSigma, p.PhaseSigma = p.fitSigma[0], p.fitSigma[1], p.fitSigma[2]
			p.whitened = false
		}
	}
}

// fitSigmas are the station's current and depth sigmas as its fit gives
// them, while unwidenPoor has taken them back as well as after.
func fitSigmas(p *Placed) (current, depth float64) {
	if p.whitened {
		return p.fitSigma[0], p.fitSigma[1]
	}
	return p.CurrentSigma, p.DepthSigma
}

// RouteSigma is the station's current sigma as the route's steps take it:
// for a poor fit whose residuals are correlated along the readings, as
// before the fit widened it for them (unwidenPoor; Station.Widening),
// else CurrentSigma. A caller weighing a change of current between
// stations as the steps do takes this, not CurrentSigma, which is the
// fit's own.
func (p *Placed) RouteSigma() float64 {
	if p.routeWhite {
		return unwidened(p)
	}
	return p.fitCurrentSigma()
}

// fitCurrentSigma is the station's current sigma before the route
// widened it for the model's error or a step nearby (modelerr.go); the
// bend's widening (bend.go) is kept.
func (p *Placed) fitCurrentSigma() float64 {
	switch {
	case p.Model != nil:
		return p.Model.FitCurrentSigma
	case p.StepNear != nil:
		return p.StepNear.FitCurrentSigma
	}
	return p.CurrentSigma
}

// NoiseSigma is the station's current sigma for the reading noise: at a
// strained station, whose misfit the route takes for the model's error
// (and counts by its shift), the sigma before the fit widened it for
// residuals correlated along the readings, a correlation that is the
// misfit's (Station.Widening); else RouteSigma.
func (p *Placed) NoiseSigma() float64 {
	if p.strained {
		return unwidened(p)
	}
	return p.RouteSigma()
}

// WhiteSigma is the station's current sigma for independent readings: as
// before the fit widened it for residuals correlated along the readings
// (Station.Widening).
func (p *Placed) WhiteSigma() float64 { return unwidened(p) }

// misfitRatio is the station's RMS residual over its measured noise, 0
// when either is unknown.
func misfitRatio(p *Placed) float64 {
	if p.Noise > 0 && p.RMS > 0 && finite(p.Noise) && finite(p.RMS) {
		return p.RMS / p.Noise
	}
	return 0
}

// levelSound reports whether a station may set a level of a step beyond
// bracketing it: a clean fit that is not strained.
func levelSound(p *Placed, set *Settings) bool {
	return clean(p, set) && !p.strained
}

// besideShift returns the shift (strain.go) that the stations that may
// set a level on one side of a step share: from the bracketing station
// u[i] (when it is not strained: a strained bracket carries its own shift
// in its sigma, misfitSigma) towards u[end] in direction dir (-1 or 1),
// over as many sound stations as plateau takes.
//
// A shift is a field error, the misfit beyond the route's reference
// (sqrt(RMS^2 - (ratio_ref Noise)^2)), carried to the current by the
// station's own sensitivity sigma_I SigmasPerMisfit. The error the side's
// stations share is the largest of theirs; it moves the level by the
// level's sensitivity, the stations' sensitivities averaged with the
// weights that set the level (1/misfitSigma^2). Where the stations are
// alike this is the largest shift, as it was. Taken as the largest shift
// itself, a go-and-return pair's station beside two magnetised objects
// (its net current 10.6 ± 1.8 A, weight a ten-thousandth of each of the
// five sound stations past it, 12.04 ± 0.011 A) lent the level its shift
// of 12.9 A, and a 13 A loss with levels clear on five stations each side
// went unreported (review rg26a, obj-s1-single-20 seed 2).
func besideShift(u []*Placed, set *Settings, i, end, dir int, clear bool) float64 {
	var worst, field, sw, swa float64
	n := 0
	for k := i; k*dir <= end*dir && k >= 0 && k < len(u) && n < plateauStations+maxTransition; k += dir {
		p := u[k]
		if k != i && !levelSound(p, set) {
			continue
		}
		if k != i {
			n++
		}
		a := unwidened(p) * p.SigmasPerMisfit
		if !p.strained {
			worst = math.Max(worst, p.shift)
			if p.shift > 0 && a > 0 {
				field = math.Max(field, p.shift/a)
			}
		}
		if s := misfitSigma(p, set); a > 0 && s > 0 && finite(s) {
			sw += 1 / (s * s)
			swa += a / (s * s)
		}
	}
	// Only where the levels either side each rest on two sound
	// single-conductor stations or more (clear) does a side shed the
	// largest shift: beside a steep bore exit the level before a misfit
	// run rested on one sound but wrong fit (10.4 A where 20 A ran) and a
	// pair's net current, the level past it on six sound fits, and a
	// change the model's error accounts for (an info) became an earth
	// fault warning once the six shed theirs (review rg26c, steep79 seed
	// 1).
	if field > 0 && sw > 0 && clear {
		return math.Min(worst, field*swa/sw)
	}
	return worst
}

// strainedText says which of the stations ps (a step's, from its bracket
// to its bracket) are strained, with their misfit ratios and shifts, as a
// clause; "" when none are.
func strainedText(ps []*Placed) string {
	var names, ratios, shifts []string
	ref := 0.0
	for _, p := range ps {
		if !p.strained {
			continue
		}
		names = append(names, label(p))
		ratios = append(ratios, strconv.FormatFloat(p.misfit, 'g', 2, 64))
		shifts = append(shifts, strconv.FormatFloat(p.shift, 'g', 2, 64))
		ref = p.misfitRef
	}
	if len(names) == 0 {
		return ""
	}
	verb, them, its := "misses", "it", "its current"
	if len(names) > 1 {
		verb, them, its = "miss", "them", "their currents"
	}
	return fmt.Sprintf("%s %s the readings by %s times the noise measured from %s (a quarter of the route's fits by %.1f times or less): what the model lacks there (a tee, a bend, a second conductor) may shift %s by up to %s A",
		andList(names), verb, andList(ratios), them, ref, its, andList(shifts))
}

// allStrained reports whether the stations u[i], i in idx, are all
// strained.
func allStrained(u []*Placed, idx []int) bool {
	for _, i := range idx {
		if !u[i].strained {
			return false
		}
	}
	return true
}

// andList joins words as "a", "a and b", "a, b and c".
func andList(w []string) string {
	if len(w) <= 1 {
		return strings.Join(w, "")
	}
	return strings.Join(w[:len(w)-1], ", ") + " and " + w[len(w)-1]
}

// withheld returns the finding for a run (bracketing station indices in
// u) whose levels, pl, do not differ by StepK sigma once its strained
// stations' shifts are counted, when some of its stations are strained and
// the change between its bracketing stations exceeds StepK of their
// sigmas and MinStep of the current: the currents changed as a step
// would, but a fit the model misses may account for it, and the crew is
// told so rather than left with nothing (past the tee, a real loss of
// 1.5 A a few traverses on is seen only so). ok is false otherwise.
func withheld(u []*Placed, run [2]int, pl levels, set *Settings) (f Finding, ok bool) {
	a, b := u[run[0]], u[run[1]]
	raw, rawSigma := b.Current-a.Current, math.Hypot(a.CurrentSigma, b.CurrentSigma)
	level := math.Max(math.Abs(a.Current), math.Abs(b.Current))
	if !(math.Abs(raw) > set.stepK()*rawSigma) || math.Abs(raw) < set.minStep()*level {
		return f, false
	}
	var keys []string
	var pos [3]float64
	for _, p := range u[run[0] : run[1]+1] {
		if p.strained {
			keys = append(keys, p.Key)
			pos = p.Point
		}
	}
	if len(keys) == 0 {
		return f, false
	}
	verb := "falls"
	if raw*math.Copysign(1, a.Current+b.Current) > 0 {
		verb = "rises"
	}
	msg := fmt.Sprintf("the current %s by %s A between %s (chainage %.1f m) and %s (%.1f m), which is not reported as current leaving or joining: %s; with that counted, the levels either side differ by %s A, within %s sigma, and a change of current there cannot be told from the model's error",
		verb, pm(math.Abs(raw), rawSigma), label(a), a.Chainage, label(b), b.Chainage, strainedText(u[run[0]:run[1]+1]),
		pm(pl.step, pl.sigma), strconv.FormatFloat(set.stepK(), 'g', 3, 64))
	return Finding{
		Kind:     KindPoorFit,
		Severity: SeverityInfo,
		From:     a.Chainage,
		To:       b.Chainage,
		Position: pos,
		Keys:     keys,
		Message:  msg,
		Values: []Value{
			{Name: "change between bracketing stations", Value: raw, Sigma: rawSigma, Unit: "A"},
			{Name: "step", Value: pl.step, Sigma: pl.sigma, Unit: "A"},
		},
	}, true
}
