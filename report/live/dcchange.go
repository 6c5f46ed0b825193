package live

import (
	"fmt"
	"math"
	"sort"
)

// A DC window's estimate is the current of its readings' mean. When the
// current changes within the window (a rectifier switched, a train
// drawing current, a surge) that mean is a current that flowed on average
// but at no moment, and a step split by a window edge reads as two
// half-size changes in consecutive windows, each of which can stay under
// the step alarm's threshold. windowChange finds such a change: the time
// at which the window is best split in two (the largest change of the
// sensors' mean fields, less the part common to all sensors, which the
// background takes, against each sensor's own noise), the currents solved
// from each part's mean readings, and whether they differ by more than
// changeSigmas of their noise. The estimate then shows both parts'
// currents (Estimate.Change), and the step and over-current alarms judge
// them as well as the window's mean.

// changeSigmas is how many standard deviations apart the currents solved
// from the two parts of a DC window must be for the window to hold a
// change. The split is the best of many, so the difference at it is a
// little larger than a Gaussian deviate; at 6 sigma a two-sided Gaussian
// tail is 2e-9.
const changeSigmas = 6

// changeMaxSplits bounds the number of split times tried in a window.
const changeMaxSplits = 400

// changeMinPart is the fewest readings each sensor must have on either
// side of a split.
const changeMinPart = 2

// windowSplit is a DC window split at a time into two parts, each solved.
type windowSplit struct {
	at            float64
	before, after *SolveOutput
	// sigmas is the largest |after - before| over its sigma among the
	// conductors.
	sigmas float64
}

// windowChange returns the window's best split when the currents of its
// two parts differ by more than changeSigmas, or nil. It needs the
// despiked readings of at least two sensors (reduced.dc).
func (p *processor) windowChange(r *reduced) *windowSplit {
	if p.est == nil || len(r.dc) < 2 || len(r.dc) != len(r.used) {
		return nil
	}
	type sensor struct {
		t     []float64
		cum   [3][]float64 // cumulative sums of the ENU field, cum[k][i] the sum of the first i
		sigma float64      // one reading's noise per component, nT
		// slope is the straight line's slope in time of each ENU
		// component (nT/s), and sxx the sum of the squared times about
		// their mean (s^2): a ramp's fit.
		slope [3]float64
		sxx   float64
	}
	ss := make([]sensor, len(r.dc))
	var ref []float64 // split times: the densest sensor's
	for k, d := range r.dc {
		n := len(d.t)
		if n < 2*changeMinPart {
			return nil
		}
		R := p.rot[d.i]
		s := sensor{t: d.t}
		var diffs [3][]float64
		prev := [3]float64{}
		for c := range 3 {
			s.cum[c] = make([]float64, n+1)
		}
		for i := range n {
			b := [3]float64{d.bx[i], d.by[i], d.bz[i]}
			var e [3]float64
			for row := range 3 {
				e[row] = R[row][0]*b[0] + R[row][1]*b[1] + R[row][2]*b[2]
				s.cum[row][i+1] = s.cum[row][i] + e[row]
				if i > 0 {
					diffs[row] = append(diffs[row], e[row]-prev[row])
				}
			}
			prev = e
		}
		// Each reading's noise: the median absolute deviation of the
		// successive differences (robust to a step or a spike, and to a
		// steady drift), 1.4826 MAD / sqrt 2 for Gaussian noise, the
		// median over the axes; at least the stated noise.
		var axes []float64
		for c := range 3 {
			axes = append(axes, 1.4826*mad(diffs[c])/math.Sqrt2)
		}
		sort.Float64s(axes)
		s.sigma = math.Max(axes[1], p.asset.Noise)
		if !(s.sigma > 0) {
			return nil // readings without noise: nothing to judge a change against
		}
		tm := mean(d.t)
		var sxy [3]float64
		for i, ti := range d.t {
			s.sxx += (ti - tm) * (ti - tm)
			for c := range 3 {
				sxy[c] += (ti - tm) * (s.cum[c][i+1] - s.cum[c][i])
			}
		}
		if s.sxx > 0 {
			for c := range 3 {
				s.slope[c] = sxy[c] / s.sxx
			}
		}
		ss[k] = s
		if len(d.t) > len(ref) {
			ref = d.t
		}
	}
	// The split time maximising the non-uniform part of the change of
	// the sensors' mean fields, each weighted by its variance.
	step := max(1, len(ref)/changeMaxSplits)
	bestT, bestAt := 0.0, math.NaN()
	for i := changeMinPart; i <= len(ref)-changeMinPart; i += step {
		at := ref[i]
		ok := true
		var sumW float64
		var sumD [3]float64
		ds := make([][3]float64, len(ss))
		ws := make([]float64, len(ss))
		for k, s := range ss {
			n1 := sort.SearchFloat64s(s.t, at)
			n := len(s.t)
			if n1 < changeMinPart || n-n1 < changeMinPart {
				ok = false
				break
			}
			for c := range 3 {
				ds[k][c] = (s.cum[c][n]-s.cum[c][n1])/float64(n-n1) - s.cum[c][n1]/float64(n1)
			}
			ws[k] = 1 / (s.sigma * s.sigma * (1/float64(n1) + 1/float64(n-n1)))
			sumW += ws[k]
			for c := range 3 {
				sumD[c] += ws[k] * ds[k][c]
			}
		}
		if !ok {
			continue
		}
		var T float64
		for k := range ss {
			for c := range 3 {
				x := ds[k][c] - sumD[c]/sumW
				T += ws[k] * x * x
			}
		}
		if T > bestT {
			bestT, bestAt = T, at
		}
	}
	if math.IsNaN(bestAt) {
		return nil
	}
	// A two-level split must explain the readings better than a straight
	// line in time: a current ramping evenly (a rectifier turned up
	// slowly) is split best near the middle of the window, at a time the
	// noise picks, with levels many sigma apart, but it has no step. The
	// ramp's chi-square gain over one level, its non-uniform part as T's
	// (the slopes less their weighted mean over the sensors, each weighted
	// by sxx/sigma^2), must be below the split's T. For a ramp without
	// noise the split's gain is three quarters of the line's at most (the
	// squared correlation of a step at mid-window with a line).
	var rw float64
	var rs [3]float64
	for _, s := range ss {
		w := s.sxx / (s.sigma * s.sigma)
		rw += w
		for c := range 3 {
			rs[c] += w * s.slope[c]
		}
	}
	var ramp float64
	if rw > 0 {
		for _, s := range ss {
			w := s.sxx / (s.sigma * s.sigma)
			for c := range 3 {
				x := s.slope[c] - rs[c]/rw
				ramp += w * x * x
			}
		}
	}
	if !(bestT > ramp) {
		return nil
	}
	part := func(before bool) (*SolveOutput, error) {
		in := SolveInput{Points: r.in.Points}
		for _, s := range ss {
			n1 := sort.SearchFloat64s(s.t, bestAt)
			lo, hi := 0, n1
			if !before {
				lo, hi = n1, len(s.t)
			}
			m := float64(hi - lo)
			in.Fields = append(in.Fields, [3]float64{(s.cum[0][hi] - s.cum[0][lo]) / m, (s.cum[1][hi] - s.cum[1][lo]) / m, (s.cum[2][hi] - s.cum[2][lo]) / m})
			in.Sigmas = append(in.Sigmas, s.sigma/math.Sqrt(m))
		}
		return p.solveChangePart(&in, false)
	}
	b, err := part(true)
	if err != nil {
		return nil
	}
	a, err := part(false)
	if err != nil {
		return nil
	}
	sp := &windowSplit{at: bestAt, before: b, after: a}
	for c := range p.names {
		s := math.Hypot(a.CurrentSigma[c], b.CurrentSigma[c])
		if !(s > 0) {
			continue
		}
		if z := math.Abs(a.Current[c]-b.Current[c]) / s; z > sp.sigmas {
			sp.sigmas = z
		}
	}
	if !(sp.sigmas > changeSigmas) {
		return nil
	}
	return sp
}

type changeSolveError struct{}

func (changeSolveError) Error() string { return "the split window's fit gave no usable currents" }

var errChangeSolve = changeSolveError{}

// solveChangePart solves one part of a window split at a change: the
// median of the readings' sigmas as the solve's, the output checked for a
// current (and, for AC, a phase) per conductor, and a part the model misses
// by more than its noise has its sigmas widened by its Birge ratio, as a
// degraded window's are (AC phase sigmas at most 180 degrees).
func (p *processor) solveChangePart(in *SolveInput, ac bool) (*SolveOutput, error) {
	sorted := append([]float64(nil), in.Sigmas...)
	sort.Float64s(sorted)
	in.Sigma = sorted[len(sorted)/2]
	out, err := p.est.Solve(in)
	if err == nil && (len(out.Current) != len(p.names) || len(out.CurrentSigma) != len(p.names) || (ac && len(out.Phase) != len(p.names)) || nonFiniteOutput(out) != "") {
		err = errChangeSolve
	}
	if err != nil {
		return nil, err
	}
	if out.DOF > 0 && out.Chi2 > float64(out.DOF) {
		f := math.Sqrt(out.Chi2 / float64(out.DOF))
		for c := range out.CurrentSigma {
			out.CurrentSigma[c] *= f
			if ac {
				out.PhaseSigma[c] = math.Min(180, out.PhaseSigma[c]*f)
			}
		}
	}
	return out, nil
}

// mad is the median absolute deviation of v about its median (0 for none).
func mad(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	m := s[len(s)/2]
	for i := range s {
		s[i] = math.Abs(s[i] - m)
	}
	sort.Float64s(s)
	return s[len(s)/2]
}

// currentAlarms raises conductor i's over-current and step alarms for a
// window whose mean current is cur, and keeps the currents the next
// window's step is judged from. Without a change in the window (split
// nil) these judge the mean, against the previous window's, as always,
// unless the previous window held a change: that change was judged
// whole there, and the mean is compared with the level it ended at (its
// part after the change), so that one step raises one alarm. With a
// change in the window they judge the levels the current went through as
// well: the mean against the previous window's (a ramp, changing within
// every window, is judged as before), the part before the change against
// the level the previous window ended at, and the part after the change
// against the part before. Over-current takes the largest level, the
// step alarm the largest change, so a step anywhere in a window is judged
// whole. total, when above 0, is an AC conductor's total RMS current
// with its harmonics (ConductorEstimate.CurrentTotal): over-current
// judges it too, since a conductor's heating, and so its rating, goes
// with the total RMS; steps are the fundamental's. gap, when above 0, is
// the time in seconds since the previous window with currents ended (a
// data outage between them): step alarms say so. misfit, when above 0,
// is a degraded window's misfit (the square root of its reduced
// chi-square): its step alarms, and those judged against a degraded
// previous window (prevMisfit), are raised marked Degraded and say that
// the change may belong to a neighbouring conductor (a model that misses
// the field lets the fit trade current between conductors close
// together) and its size is uncertain. They are not held back for a sound
// window to confirm: a misfit that lasts (an enclosure, a bar the model
// does not describe) degrades every window, and would silence every step.
func (p *processor) currentAlarms(w *window, i int, name string, cur, total float64, split *windowSplit, gap, misfit float64) []Alarm {
	a := p.asset
	var out []Alarm
	peak, what := cur, ""
	if split != nil {
		for _, v := range []float64{split.before.Current[i], split.after.Current[i]} {
			if math.Abs(v) > math.Abs(peak) {
				peak, what = v, fmt.Sprintf(" for part of the window (%.4g A on average)", cur)
			}
		}
	}
	if total > math.Abs(peak) {
		// An AC conductor's total RMS with its harmonics, which heats it.
		peak, what = total, fmt.Sprintf(" RMS with its harmonics (the fundamental %.4g A)", cur)
	}
	p.setLevel(AlarmOverCurrent, name, peak)
	if t, own := a.conductorLimit(name, "max_current"); t > 0 && math.Abs(peak) > t {
		msg := fmt.Sprintf("conductor %s carries %.4g A%s, above %.4g A", name, peak, what, t)
		if own {
			msg += fmt.Sprintf(" (its own max_current; the asset's is %.4g A)", a.Alarms.MaxCurrent)
		}
		out = append(out, p.alarm(w, AlarmOverCurrent, name, peak, t, msg))
	}
	prev, ok := p.prev[name]
	end, okEnd := p.prevEnd[name]
	if !okEnd {
		end = prev
	}
	if limit, own := a.conductorLimit(name, "step"); limit > 0 {
		var step float64
		var msg string
		within := false // the change is within this window
		switch {
		case ok && okEnd && split == nil:
			// The previous window's change was judged whole there: a
			// steady window after it is compared with where it ended.
			step, msg = cur-end, fmt.Sprintf("conductor %s changed by %.4g A since the end of the previous window (%.4g A after its change)", name, cur-end, end)
		case ok:
			step, msg = cur-prev, fmt.Sprintf("conductor %s changed by %.4g A since the previous window", name, cur-prev)
		}
		if split != nil {
			b, af := split.before.Current[i], split.after.Current[i]
			if d := af - b; math.Abs(d) > math.Abs(step) {
				within = true
				step, msg = d, fmt.Sprintf("conductor %s changed by %.4g A within the window, from %.4g A to %.4g A at %.3f s", name, d, b, af, split.at)
			}
			if d := b - end; ok && math.Abs(d) > math.Abs(step) {
				within = false
				step, msg = d, fmt.Sprintf("conductor %s changed by %.4g A from the end of the previous window to the start of this one (%.4g A until %.3f s, then %.4g A)", name, d, b, split.at, af)
			}
		}
		if msg != "" && gap > 0 && !within {
			// The previous window with currents ended gap seconds
			// before this one began: the change may have come
			// gradually in between (a load ramp through an outage).
			msg += fmt.Sprintf(", which ended %.4g s before this window began (no estimate in between): a change across a gap, which may have come gradually during it, not necessarily a step", gap)
		}
		if msg != "" && math.Abs(step) > limit {
			if own {
				msg += fmt.Sprintf(" (above its own step limit, %.4g A)", limit)
			}
			deg := degradedStep(misfit, p.prevMisfit, within, len(p.names) > 1)
			msg += deg
			al := p.alarm(w, AlarmStep, name, step, limit, msg)
			al.Degraded = deg != ""
			out = append(out, al)
		}
	}
	p.prev[name] = cur
	if split != nil {
		if p.prevEnd == nil {
			p.prevEnd = map[string]float64{}
		}
		p.prevEnd[name] = split.after.Current[i]
	} else {
		delete(p.prevEnd, name)
	}
	return out
}

// degradedStep is what a step alarm adds when the window it is judged in
// is degraded (misfit, the square root of its reduced chi-square, above
// 0) or, for a change since the previous window (within false), when
// that one was (prev): "" when neither. several says the asset has more
// than one conductor.
func degradedStep(misfit, prev float64, within, several bool) string {
	var what string
	switch {
	case misfit > 0 && prev > 0 && !within:
		what = fmt.Sprintf("this window and the previous one are degraded (the readings miss the held geometry by %.3g and %.3g times their noise)", misfit, prev)
	case misfit > 0:
		what = fmt.Sprintf("the window is degraded (the readings miss the held geometry by %.3g times their noise)", misfit)
	case prev > 0 && !within:
		what = fmt.Sprintf("the previous window, which it is compared with, is degraded (the readings missed the held geometry by %.3g times their noise)", prev)
	default:
		return ""
	}
	if several {
		return "; " + what + ": the fit may have moved current between conductors, so the change may belong to a neighbouring conductor and its size is uncertain; a window that is not degraded confirms it"
	}
	return "; " + what + ": the change's size is uncertain; a window that is not degraded confirms it"
}
