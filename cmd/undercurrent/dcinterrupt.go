package main

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strconv"
	"strings"

	"undercurrent/ingest"
	"undercurrent/report"
)

// An interrupted current in a DC run.
//
// Cathodic-protection crews switch a rectifier off and on again on a fixed
// cycle while they survey (4 s on and 1 s off, 12 s and 3 s, 0.8 s and
// 0.2 s), to tell the protection current from other direct currents. The
// field near the conductor then switches between two levels; the base
// station, far from it, does not see it. Fitted as one steady current, such
// a log missed both real losses on a pipe, reported phantom "return"
// conductors beside it and cover above the ground, and called 39 to 41 of
// 41 fits sound (found in review). So a DC run looks for the switches in
// each log: jumps of the readings from one to the next far beyond what
// their neighbours step (a walk over a conductor changes the field
// smoothly), which recur at the same two times in a cycle of one period
// across the whole log. When they do, the run says so, naming the period
// and the time at each level, and the fits of the log are not called
// sound; --interrupted fits the readings of the on state alone.

const (
	// intJump is the multiple of the steps' own robust noise a step must
	// exceed, past what its neighbours step, to count as a switch.
	intJump = 10
	// intJumpFloor is the least switch counted, nT: a noise-free log's
	// smooth steps leave a robust noise near zero.
	intJumpFloor = 1.0
	// intMinSwitches is the fewest switches on the cycle that name it.
	intMinSwitches = 12
	// intMinCycles is the fewest cycles the switches must span.
	intMinCycles = 4
	// intShare is the least share of the switches found that must fall at
	// the cycle's two times: a conductor crossed on every traverse, or a
	// spike, makes jumps at no fixed time in a cycle.
	intShare = 0.7
	// intAlternate is the least share of the switches at the cycle's two
	// times that must step as a field between two levels does (not a
	// recurring bump): away from the run's background at one time and
	// towards it at the other (intLevels), or, of successive switches,
	// in opposite directions.
	intAlternate = 0.7
	// intMinPeriod is the shortest cycle looked for, in reading
	// intervals: the cycle's two times, each a reading either side,
	// then take up under two thirds of it.
	intMinPeriod = 6
)

// interruption is a cycle of two levels found in a DC log (findInterruption).
type interruption struct {
	period float64 // s
	on     float64 // time at the stronger level each cycle, s
	start  float64 // the time of a switch to the stronger level, s (the log's clock)
	// switches are the switches at the cycle's two times, of found
	// jumps, in groups groups (runs of readings between gaps).
	switches, found, groups int
	dt                      float64 // the reading interval, s
}

// off is the time at the weaker level each cycle, s.
func (c interruption) off() float64 { return c.period - c.on }

// inOn says whether time t lies in the on state at least guard from
// either switch.
func (c interruption) inOn(t, guard float64) bool {
	ph := math.Mod(t-c.start, c.period)
	if ph < 0 {
		ph += c.period
	}
	return ph >= guard && ph <= c.on-guard
}

// intJumpAt is a jump found between readings i and i+1 of a log.
type intJumpAt struct {
	t   float64    // s, from the log's first reading
	v   [3]float64 // the jump less its neighbours' steps, nT
	run int
	i   int // the jump is between readings i and i+1 of the log
}

// intRuns returns the runs of s's readings between gaps, group changes
// and readings that are not finite, as [first, last+1) pairs.
func intRuns(s *ingest.Samples, gap float64) [][2]int {
	var runs [][2]int
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	finite := func(i int) bool {
		for k := range cols {
			if v := cols[k][i]; math.IsNaN(v) || math.IsInf(v, 0) {
				return false
			}
		}
		return !math.IsNaN(s.Time[i])
	}
	lo := -1
	for i := 0; i < s.Len(); i++ {
		if !finite(i) {
			if lo >= 0 {
				runs = append(runs, [2]int{lo, i})
			}
			lo = -1
			continue
		}
		if lo < 0 {
			lo = i
			continue
		}
		st := s.Time[i] - s.Time[i-1]
		if !(st > 0) || st > gap || (s.Group != nil && s.Group[i] != s.Group[i-1]) {
			runs = append(runs, [2]int{lo, i})
			lo = i
		}
	}
	if lo >= 0 {
		runs = append(runs, [2]int{lo, s.Len()})
	}
	return runs
}

// intJumps finds the jumps in s's readings (see above) and returns them
// with the reading interval, s.
func intJumps(s *ingest.Samples) ([]intJumpAt, float64, int) {
	fs, gap := dcClock(s)
	if !(fs > 0) || s.Len() < 20 || s.Time == nil {
		return nil, 0, 0
	}
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	runs := intRuns(s, gap)
	type cand struct {
		i   int // the jump is between readings i and i+1
		e   [3]float64
		run int
	}
	var all []cand
	var abs []float64
	nb := make([]float64, 0, 4)
	for r, rn := range runs {
		lo, hi := rn[0], rn[1]
		if hi-lo < 6 {
			continue
		}
		step := func(k, i int) float64 { return cols[k][i+1] - cols[k][i] }
		for i := lo; i < hi-1; i++ {
			var c cand
			c.i, c.run = i, r
			for k := range cols {
				nb = nb[:0]
				for j := i - 2; j <= i+2; j++ {
					if j != i && j >= lo && j < hi-1 {
						nb = append(nb, step(k, j))
					}
				}
				sort.Float64s(nb)
				var med float64
				if n := len(nb); n%2 == 1 {
					med = nb[n/2]
				} else {
					med = 0.5 * (nb[n/2-1] + nb[n/2])
				}
				c.e[k] = step(k, i) - med
				abs = append(abs, math.Abs(c.e[k]))
			}
			all = append(all, c)
		}
	}
	if len(abs) == 0 {
		return nil, 0, 0
	}
	sort.Float64s(abs)
	sigma := 1.4826 * abs[len(abs)/2]
	thr := math.Max(intJump*sigma, intJumpFloor)
	norm := func(e [3]float64) float64 { return math.Sqrt(e[0]*e[0] + e[1]*e[1] + e[2]*e[2]) }
	t0 := s.Time[0]
	var jumps []intJumpAt
	for j, c := range all {
		m := norm(c.e)
		if m <= thr {
			continue
		}
		// The larger of neighbouring candidates in the run, and no
		// spike: a single reading off steps out and back, two jumps
		// side by side of about one size in opposite directions (a
		// switch's neighbour, whose median of steps the switch moves,
		// can pass the threshold the other way, and the switch was
		// lost as a spike).
		spike := false
		larger := true
		for _, d := range []int{-1, 1} {
			n := j + d
			if n < 0 || n >= len(all) || all[n].run != c.run {
				continue
			}
			o := all[n]
			mo := norm(o.e)
			if mo > math.Max(thr, 0.5*m) && (c.e[0]*o.e[0]+c.e[1]*o.e[1]+c.e[2]*o.e[2]) < -0.5*m*mo {
				spike = true
			}
			if mo > m || (mo == m && d < 0) {
				larger = false
			}
		}
		if spike || !larger {
			continue
		}
		t := 0.5*(s.Time[c.i]+s.Time[c.i+1]) - t0
		jumps = append(jumps, intJumpAt{t: t, v: c.e, run: c.run, i: c.i})
	}
	return jumps, 1 / fs, len(runs)
}

// intScore is the coherence of the jumps at frequency f, Hz: the first two
// harmonics' power of the jump times folded at 1/f, summed over runs
// (within) or over the whole log (across), over the jumps' count squared.
// Each jump counts once whatever its direction.
func intScore(jumps []intJumpAt, f float64, within bool) float64 {
	var s1, s2 complex128
	var sum float64
	run := -1
	flush := func() {
		sum += real(s1)*real(s1) + imag(s1)*imag(s1) + real(s2)*real(s2) + imag(s2)*imag(s2)
		s1, s2 = 0, 0
	}
	for _, j := range jumps {
		if within && j.run != run && run >= 0 {
			flush()
		}
		run = j.run
		z := cmplx.Exp(complex(0, 2*math.Pi*f*j.t))
		s1 += z
		s2 += z * z
	}
	flush()
	n := float64(len(jumps))
	return sum / (n * n)
}

// findInterruption looks for a cycle of two levels in the DC log s (see
// above). hint, when above zero, is the period the user gave, s; else the
// period is taken from the intervals between the jumps.
func findInterruption(s *ingest.Samples, hint float64) (interruption, bool) {
	// An alternating field (dcalternating.go) steps from reading to
	// reading in a pattern that recurs with its alias: an AC log located
	// without --freq, which that check names, not a switched current (the
	// AC demo's log and two AC scenarios were taken for one before).
	if _, _, share, ok := alternatingLine(s); ok && share >= altShare {
		return interruption{}, false
	}
	jumps, dt, _ := intJumps(s)
	if len(jumps) < intMinSwitches {
		return interruption{}, false
	}
	span := jumps[len(jumps)-1].t - jumps[0].t
	p0 := hint
	if p0 <= 0 {
		// The commonest interval over two jumps within a run: a whole
		// cycle when none between them was missed.
		var two []float64
		for k := 2; k < len(jumps); k++ {
			if jumps[k].run == jumps[k-2].run {
				two = append(two, jumps[k].t-jumps[k-2].t)
			}
		}
		if len(two) < intMinSwitches/2 {
			return interruption{}, false
		}
		sort.Float64s(two)
		best, bestN := 0.0, 0
		for i, v := range two {
			n := 0
			var sum float64
			for j := i; j < len(two) && two[j] <= v+1.5*dt; j++ {
				n++
				sum += two[j]
			}
			if n > bestN {
				best, bestN = sum/float64(n), n
			}
		}
		p0 = best
	}
	if !(p0 >= intMinPeriod*dt) || span < intMinCycles*p0 {
		return interruption{}, false
	}
	// Within runs first (a smooth peak as wide as a run is long), then
	// across the whole log (a peak as narrow as the log is long, with
	// side lobes where whole runs slip by a cycle).
	runLen := 0.0
	for k, first := 1, jumps[0].t; k <= len(jumps); k++ {
		if k == len(jumps) || jumps[k].run != jumps[k-1].run {
			runLen = math.Max(runLen, jumps[k-1].t-first)
			if k < len(jumps) {
				first = jumps[k].t
			}
		}
	}
	runLen = math.Max(runLen, 2*p0)
	f0 := 1 / p0
	search := func(lo, hi, step float64, within bool) float64 {
		best, bestS := f0, -1.0
		step = math.Min(step, (hi-lo)/16)
		for f := lo; f <= hi+step/2; f += step {
			if sc := intScore(jumps, f, within); sc > bestS {
				best, bestS = f, sc
			}
		}
		return best
	}
	width := 2 * dt / (p0 * p0) // the period from the intervals, within 2 readings
	if hint > 0 {
		width = 0.02 / p0 // a period given, within 2%
	}
	f1 := search(f0-width, f0+width, 1/(8*runLen), true)
	f := f1
	if span > 1.5*runLen {
		w := math.Min(0.4/runLen, width)
		f = search(f1-w, f1+w, 1/(16*span), false)
	}
	period := 1 / f
	// The two times in the cycle: the commonest phase, then the commonest
	// at least two readings from it.
	ph := make([]float64, len(jumps))
	for k, j := range jumps {
		ph[k] = math.Mod(j.t, period)
	}
	near := func(a, b float64) float64 { // circular distance, s
		d := math.Abs(a - b)
		return math.Min(d, period-d)
	}
	tol := 1.01 * dt // a switch's jump lies within half a reading of it
	centre := func(skip float64, skipOK bool) (float64, int) {
		best, bestN := 0.0, 0
		for _, a := range ph {
			if skipOK && near(a, skip) <= tol {
				continue
			}
			n := 0
			var z complex128
			for _, b := range ph {
				if near(a, b) <= tol && !(skipOK && near(b, skip) <= tol) {
					n++
					z += cmplx.Exp(complex(0, 2*math.Pi*b/period))
				}
			}
			if n > bestN {
				c := cmplx.Phase(z) / (2 * math.Pi) * period
				if c < 0 {
					c += period
				}
				best, bestN = c, n
			}
		}
		return best, bestN
	}
	ca, na := centre(0, false)
	cb, nb := centre(ca, true)
	if nb < intMinSwitches/4 || na+nb < intMinSwitches || float64(na+nb) < intShare*float64(len(jumps)) {
		return interruption{}, false
	}
	// The period and the two times by least squares over the switches
	// at them, each numbered by its cycle.
	{
		var sn, st, snn, snt [2]float64
		var cnt [2]float64
		for k, j := range jumps {
			x, c := -1, 0.0
			if near(ph[k], ca) <= tol {
				x, c = 0, ca
			} else if near(ph[k], cb) <= tol {
				x, c = 1, cb
			}
			if x < 0 {
				continue
			}
			n := math.Round((j.t - c) / period)
			cnt[x]++
			sn[x] += n
			st[x] += j.t
			snn[x] += n * n
			snt[x] += n * j.t
		}
		var num, den float64
		for x := range 2 {
			num += snt[x] - sn[x]*st[x]/cnt[x]
			den += snn[x] - sn[x]*sn[x]/cnt[x]
		}
		if den > 0 {
			p := num / den
			if math.Abs(p-period) < tol {
				period = p
				ca = math.Mod((st[0]-p*sn[0])/cnt[0]+100*p, p)
				cb = math.Mod((st[1]-p*sn[1])/cnt[1]+100*p, p)
				for k, j := range jumps {
					ph[k] = math.Mod(j.t, period)
				}
				na, nb = 0, 0
				for k := range jumps {
					if near(ph[k], ca) <= tol {
						na++
					} else if near(ph[k], cb) <= tol {
						nb++
					}
				}
			}
		}
	}
	// The switches step as a field between two levels does. The
	// conductor's field at a reading is its distance from the background
	// (B - bg), and a switch scales it: towards the stronger level the
	// jump points along it, towards the weaker against it, wherever the
	// reading lies. So one of the cycle's two times holds switches that
	// move the field away from the run's background, the other switches
	// that move it back (intLevels). Successive switches stepping in
	// opposite directions, the test before, holds only where they lie
	// close together: at 12 s on and 3 s off an on-switch and the next
	// off-switch lie 9.6 m apart, often either side of a pipe, where its
	// field points the other way, and the cycle was missed at 18 of 30
	// phases (review rv27b). Either test passing names the cycle; a
	// cycle the user gives (hint) needs only its switches at two times.
	which := func(k int) int {
		switch {
		case near(ph[k], ca) <= tol:
			return 0
		case near(ph[k], cb) <= tol:
			return 1
		}
		return -1
	}
	pairs, opposite := 0, 0
	groups := map[int]bool{}
	for k := range jumps {
		if which(k) >= 0 {
			groups[jumps[k].run] = true
		}
		if k == 0 || jumps[k].run != jumps[k-1].run {
			continue
		}
		a, b := which(k-1), which(k)
		if a < 0 || b < 0 || a == b {
			continue
		}
		pairs++
		u, v := jumps[k-1].v, jumps[k].v
		if u[0]*v[0]+u[1]*v[1]+u[2]*v[2] < 0 {
			opposite++
		}
	}
	alternate := pairs >= intMinSwitches/4 && float64(opposite) >= intAlternate*float64(pairs)
	levels, counted := intLevels(s, jumps, which)
	if hint <= 0 && !alternate && !(counted >= intMinSwitches && float64(levels) >= intAlternate*float64(counted)) {
		return interruption{}, false
	}
	// The stronger level: the one at which the field varies more along
	// the traverses (the conductor's own anomaly, larger with its
	// current), readings within a reading of a switch left out.
	c := interruption{period: period, start: ca, on: math.Mod(cb-ca+period, period), dt: dt,
		switches: na + nb, found: len(jumps), groups: len(groups)}
	_, gap := dcClock(s)
	var varOn, varOff float64
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	t0 := s.Time[0]
	alt := interruption{period: period, start: cb, on: period - c.on}
	for _, rn := range intRuns(s, gap) {
		var n [2]float64
		var sum, sq [2][3]float64
		for i := rn[0]; i < rn[1]; i++ {
			t := s.Time[i] - t0
			st := -1
			if c.inOn(t, dt) {
				st = 0
			} else if alt.inOn(t, dt) {
				st = 1
			}
			if st < 0 {
				continue
			}
			n[st]++
			for k := range cols {
				sum[st][k] += cols[k][i]
				sq[st][k] += cols[k][i] * cols[k][i]
			}
		}
		for st := range 2 {
			if n[st] < 3 {
				continue
			}
			var v float64
			for k := range 3 {
				m := sum[st][k] / n[st]
				v += sq[st][k]/n[st] - m*m
			}
			if st == 0 {
				varOn += v
			} else {
				varOff += v
			}
		}
	}
	if varOff > varOn {
		c.start, c.on = cb, period-c.on
	}
	c.start += t0
	return c, true
}

// intLevels judges each jump at one of the cycle's two times (which gives
// 0 or 1, or -1 for neither) against the run's background, the median of
// each component over the run: a jump moves the field away from it when
// |B(i+1) - bg| > |B(i) - bg|, that is when the jump's dot product with
// B(i) + B(i+1) - 2 bg is above zero. It returns the switches that agree
// with the better of the two assignments (time 0 away and time 1 back, or
// the reverse), and the switches judged.
func intLevels(s *ingest.Samples, jumps []intJumpAt, which func(k int) int) (agree, counted int) {
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	_, gap := dcClock(s)
	runs := intRuns(s, gap)
	bg := make(map[int][3]float64)
	var away [2][2]int // [time][0 back, 1 away]
	buf := make([]float64, 0, 256)
	for k, j := range jumps {
		x := which(k)
		if x < 0 || j.run < 0 || j.run >= len(runs) || j.i+1 >= s.Len() {
			continue
		}
		b, ok := bg[j.run]
		if !ok {
			rn := runs[j.run]
			for c := range cols {
				buf = append(buf[:0], cols[c][rn[0]:rn[1]]...)
				sort.Float64s(buf)
				b[c] = buf[len(buf)/2]
			}
			bg[j.run] = b
		}
		var d float64
		for c := range cols {
			d += j.v[c] * (cols[c][j.i] + cols[c][j.i+1] - 2*b[c])
		}
		switch {
		case d > 0:
			away[x][1]++
		case d < 0:
			away[x][0]++
		default:
			continue
		}
		counted++
	}
	agree = max(away[0][1]+away[1][0], away[0][0]+away[1][1])
	return agree, counted
}

// interruptedWarning names the cycle c found in the DC log at path.
func interruptedWarning(path string, c interruption) string {
	return fmt.Sprintf("%s: the field switches between two levels on a fixed cycle, every %.4g s: %.3g s at the stronger level and %.3g s at the weaker (%d switches in %s fall at those two times in the cycle, of %d found), as a current interrupted on and off (a rectifier's cycle) makes; the readings were fitted as one steady current, which they are not, so the currents, depths, losses and further conductors found are not to be trusted: give --interrupted %s to fit the readings of the on state alone",
		path, c.period, c.on, c.off(), c.switches, plural(c.groups, "run"), c.found, intFlagValue(c))
}

// intFlagValue is the --interrupted value that names cycle c.
func intFlagValue(c interruption) string {
	return fmt.Sprintf("%.3g,%.3g", c.on, c.off())
}

// interruptedProblem is the reason a fit of an interrupted log is not
// sound.
const interruptedProblem = "the readings switch between two levels on a cycle (a current interrupted on and off, see the warnings) and were fitted as one steady current"

// parseInterrupted reads --interrupted: "" for none, auto, or ON,OFF
// seconds.
func parseInterrupted(text string) (on, off float64, auto bool, err error) {
	t := strings.ToLower(strings.TrimSpace(text))
	switch t {
	case "":
		return 0, 0, false, nil
	case "auto":
		return 0, 0, true, nil
	}
	a, b, found := strings.Cut(t, ",")
	if found {
		on, err = strconv.ParseFloat(strings.TrimSpace(a), 64)
		if err == nil {
			off, err = strconv.ParseFloat(strings.TrimSpace(b), 64)
		}
	}
	if !found || err != nil || !(on > 0) || !(off > 0) || math.IsInf(on+off, 0) {
		return 0, 0, false, usageErrorf("--interrupted %q: want auto, or the cycle's on and off times in seconds, ON,OFF (for example 4,1)", text)
	}
	return on, off, false, nil
}

// interruptedReadings looks for a cycle of two levels in the DC log s at
// path. Without --interrupted it returns a warning naming the cycle found
// (interruptedWarning), s unchanged. With it, it keeps the readings of
// the on state more than a guard from either switch, and returns a note
// saying so; a log in which no cycle (or not the one given) is found is
// an error.
func interruptedReadings(o *locateOptions, path string, s *ingest.Samples) (*ingest.Samples, string, string, error) {
	if s.Time == nil || s.Len() == 0 {
		if o.interruptedText != "" {
			return s, "", "", fmt.Errorf("%s: --interrupted needs the readings' times, and this log has none", path)
		}
		return s, "", "", nil
	}
	if o.interruptedText == "" {
		c, ok := findInterruption(s, 0)
		if !ok {
			return s, "", "", nil
		}
		return s, interruptedWarning(path, c), "", nil
	}
	given := o.intOn + o.intOff
	c, ok := findInterruption(s, given)
	if !ok {
		what := "a cycle of two levels"
		if given > 0 {
			what = fmt.Sprintf("a %g s cycle of two levels", given)
		}
		return nil, "", "", fmt.Errorf("%s: --interrupted %s: no switching on %s was found in the readings (a switch shows as a jump of the field from one reading to the next, recurring at the same two times in every cycle); leave --interrupted out to fit the readings as they are", path, o.interruptedText, what)
	}
	if given > 0 {
		// The user's on and off times decide which level is on.
		tolOn := math.Max(2*c.dt, 0.05*given)
		switch {
		case math.Abs(c.on-o.intOn) <= tolOn:
		case math.Abs(c.off()-o.intOn) <= tolOn:
			c.start, c.on = c.start+c.on, c.off()
		default:
			return nil, "", "", fmt.Errorf("%s: --interrupted %s: the readings switch on a %.4g s cycle, %.3g s at the stronger level and %.3g s at the weaker, not %g s on and %g s off; give --interrupted %s, or auto", path, o.interruptedText, c.period, c.on, c.off(), o.intOn, o.intOff, intFlagValue(c))
		}
	}
	guard := math.Max(intGuardReadings*c.dt, intGuard)
	keep := make([]bool, s.Len())
	kept := 0
	for i, t := range s.Time {
		if keep[i] = c.inOn(t, guard); keep[i] {
			kept++
		}
	}
	if kept < 3 {
		return nil, "", "", fmt.Errorf("%s: --interrupted %s: the on state, %.3g s a cycle, holds no readings more than %.2g s from a switch", path, o.interruptedText, c.on, guard)
	}
	total := s.Len()
	keepSampleRows(s, keep)
	note := fmt.Sprintf("%s: the current is interrupted on a %.4g s cycle, %.3g s on and %.3g s off (its period and phase found from %d switches in the readings); only the readings of the on state more than %.2g s from a switch were fitted, %d of %d, so the currents are those flowing while it is on (with the protection current, any other direct current on the conductor)",
		path, c.period, c.on, c.off(), c.switches, guard, kept, total)
	return s, "", note, nil
}

const (
	// intGuard and intGuardReadings set the time left out either side of
	// each switch, s: the larger of intGuard and intGuardReadings reading
	// intervals (a switch falls between two readings, and the cycle's
	// times are known to a fraction of one).
	intGuard         = 0.1
	intGuardReadings = 1.0
)

// interruptedDocument marks the groups of the logs in which a cycle of two
// levels was found and fitted as it is (their Problem, so that they are
// not counted sound), and puts the notes of on-state fits among the
// document's notes.
func interruptedDocument(doc *report.Document, sv *survey) {
	doc.Notes = append(doc.Notes, sv.intNotes...)
	if len(sv.interrupted) == 0 {
		return
	}
	problemOnLogs(doc, sv, func(log string) (string, bool) {
		return interruptedProblem, sv.interrupted[log]
	})
}

// problemOnLogs adds to the problem of every group of doc what why gives
// for the log the group was read from (when its ok is true), so that the
// group is not counted sound.
func problemOnLogs(doc *report.Document, sv *survey, why func(log string) (string, bool)) {
	from := map[string]string{}
	for _, g := range sv.groups {
		from[g.key] = g.from
	}
	for i := range doc.Groups {
		g := &doc.Groups[i]
		w, ok := why(from[g.Key])
		if !ok {
			continue
		}
		if g.Problem != "" {
			g.Problem += "; "
		}
		g.Problem += w
	}
}
