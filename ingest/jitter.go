package ingest

import (
	"math"
	"sort"
)

// Jittered stamps.
//
// A logger that samples on a steady clock but writes each row's time from
// another clock (a host's, read when the row is written) leaves every
// stamp off its sample's instant by an error of its own: the stamps scatter
// about the straight line of time against row (TimeJitter). A sine fitted
// on such stamps is evaluated at the wrong instants: at ω the amplitude
// shrinks by about exp(-ω²σ²/2) and each window's phase moves by a common
// error along the phase parameter that its residuals do not show, so the
// phase sigma comes out too small (±0.25 ms at 60 Hz: currents one sigma
// low, the phase sigma half what it should be; found in review,
// simulated).
//
// Exact stamps of a sampling whose intervals really vary (a host loop
// taking each sample when it runs) are a different thing: they must be
// kept. The two are told apart by the steps between rows. Errors of the
// written stamps alone make successive steps anticorrelated (the error of
// a stamp enters the step before it with one sign and the one after with
// the other: a lag-one correlation of -1/2) and leave the stamps within a
// bounded band of the line (their scatter about it half the variance of
// the steps); intervals that really vary are uncorrelated and their times
// wander from any line as a random walk.

// TimeJitter describes stamps scattered about a steady clock, as
// RetimeJittered found them.
type TimeJitter struct {
	// Interval is the clock's sample interval, s: the least-squares slope
	// of time against sample number shared by the continuous runs.
	Interval float64
	// Scatter is the root-mean-square distance of the stamps from that
	// line, s, and MaxShift the largest, the most a time is moved.
	Scatter, MaxShift float64
	// StepCorrelation is the lag-one correlation of the steps between
	// rows about the interval (-1/2 for errors of the stamps alone).
	StepCorrelation float64
	// Runs counts the continuous runs of jitterMinRun rows or more (the
	// stretches between group changes, times going back and pauses) and
	// Rows the rows in them.
	Runs, Rows int
	// GroupSigma is, for each group (the key "" when there are none), the
	// one-sigma uncertainty of the rebuilt clock at the middle of the
	// group's rows, s: Scatter over the square root of the rows of its
	// runs (each run's line is placed by the mean of its stamps). The
	// whole group's times share that error: it turns every AC phase found
	// from them by 360·f·GroupSigma degrees alike, which the readings'
	// residuals do not show.
	GroupSigma map[string]float64
}

const (
	// jitterMinSteps is the fewest steps within runs that
	// RetimeJittered wants before it judges the stamps.
	jitterMinSteps = 200
	// jitterMinRun is the fewest rows of a run that counts.
	jitterMinRun = 16
	// jitterPause is the step, in intervals, taken as a pause between
	// runs; shorter steps are missing samples within a run.
	jitterPause = 4.5
	// jitterFloor is the least scatter, as a fraction of the interval,
	// taken as jitter: a finer scatter moves a time by under a two
	// hundredth of an interval (a third of a degree of phase at a
	// sixth of the sampling rate).
	jitterFloor = 0.005
	// jitterMaxCorrelation is the highest lag-one correlation of the
	// steps taken as the errors of stamps (-1/2 for those alone; zero for
	// intervals that vary).
	jitterMaxCorrelation = -0.3
	// jitterMaxBand bounds the stamps' scatter about the line against
	// half the variance of the steps (1 for errors of stamps alone; a
	// random walk of intervals makes it grow with the run).
	jitterMaxBand = 1.6
	// jitterMaxShift bounds the distance of every stamp from the line,
	// in intervals: beyond it a stamp may belong to the sample beside.
	jitterMaxShift = 0.4
)

// RetimeJittered looks for stamps scattered about a steady clock (see
// TimeJitter) in times t (group g, or nil: a change of group starts a new
// run) and, when they are, returns the times rebuilt on that clock: within
// each continuous run, the least-squares line of time against sample
// number (one slope for all runs, each run its own intercept; a step of
// about k intervals, k up to jitterPause, counts k samples, so a missing
// sample keeps its place), pauses, group changes and NaN times kept. It
// returns nil, nil when the stamps are not so scattered, or the scatter
// is too large to be taken back safely (a stamp further than
// jitterMaxShift of an interval from the line). Quantised stamps
// (RetimeQuantised) are to be looked for first.
func RetimeJittered(t []float64, g []string) ([]float64, *TimeJitter) {
	order := groupOrder(g)
	if order == nil {
		return retimeJittered(t, g)
	}
	tt, gg := make([]float64, len(t)), make([]string, len(t))
	for j, i := range order {
		tt[j], gg[j] = t[i], g[i]
	}
	out, tj := retimeJittered(tt, gg)
	if out == nil {
		return nil, nil
	}
	res := make([]float64, len(t))
	for j, i := range order {
		res[i] = out[j]
	}
	return res, tj
}

// retimeJittered is RetimeJittered on rows whose groups are together.
func retimeJittered(t []float64, g []string) ([]float64, *TimeJitter) {
	n := len(t)
	if n < jitterMinSteps {
		return nil, nil
	}
	same := func(i int) bool { return g == nil || g[i] == g[i-1] }
	var steps []float64
	var tmax float64
	for i := 1; i < n; i++ {
		if a := math.Abs(t[i]); a > tmax && !math.IsInf(a, 0) {
			tmax = a
		}
		if s := t[i] - t[i-1]; s > 0 && same(i) {
			steps = append(steps, s)
		}
	}
	if len(steps) < jitterMinSteps {
		return nil, nil
	}
	sort.Float64s(steps)
	dt := steps[len(steps)/2]
	ulp := math.Nextafter(tmax, math.Inf(1)) - tmax
	type run struct{ lo, hi int }
	var runs []run
	k := make([]float64, n) // sample number within its run
	var fit func(dt float64) (slope float64)
	split := func(dt float64) {
		runs = runs[:0]
		start := 0
		for i := 1; i <= n; i++ {
			var c float64
			if i < n {
				c = math.Round((t[i] - t[i-1]) / dt)
			}
			if i == n || !same(i) || !(c >= 1) || c > jitterPause || math.IsNaN(t[i]) {
				if i-start >= jitterMinRun {
					runs = append(runs, run{start, i})
				}
				start = i
				if i < n {
					k[i] = 0
				}
				continue
			}
			k[i] = k[i-1] + c
		}
	}
	fit = func(dt float64) float64 {
		var sxy, sxx float64
		for _, r := range runs {
			var mk, mt float64
			for i := r.lo; i < r.hi; i++ {
				mk += k[i]
				mt += t[i] - t[r.lo]
			}
			m := float64(r.hi - r.lo)
			mk /= m
			mt /= m
			for i := r.lo; i < r.hi; i++ {
				sxy += (k[i] - mk) * (t[i] - t[r.lo] - mt)
				sxx += (k[i] - mk) * (k[i] - mk)
			}
		}
		if !(sxx > 0) {
			return 0
		}
		return sxy / sxx
	}
	split(dt)
	if dt = fit(dt); !(dt > 0) {
		return nil, nil
	}
	split(dt)
	if dt = fit(dt); !(dt > 0) {
		return nil, nil
	}
	// Residuals about each run's line, and the steps about the interval.
	tj := &TimeJitter{Interval: dt}
	out := append([]float64(nil), t...)
	var rr, ee, e1 float64
	var nr, ne int
	rows := map[string]int{}
	for _, r := range runs {
		var a float64
		for i := r.lo; i < r.hi; i++ {
			a += t[i] - t[r.lo] - k[i]*dt
		}
		a /= float64(r.hi - r.lo)
		prev := math.NaN()
		for i := r.lo; i < r.hi; i++ {
			out[i] = t[r.lo] + a + k[i]*dt
			res := t[i] - out[i]
			rr += res * res
			nr++
			tj.MaxShift = math.Max(tj.MaxShift, math.Abs(res))
			if i > r.lo {
				e := (t[i] - t[i-1]) - (k[i]-k[i-1])*dt
				ee += e * e
				ne++
				if !math.IsNaN(prev) {
					e1 += e * prev
				}
				prev = e
			}
		}
		tj.Runs++
		tj.Rows += r.hi - r.lo
		key := ""
		if g != nil {
			key = g[r.lo]
		}
		rows[key] += r.hi - r.lo
	}
	if ne < jitterMinSteps || !(ee > 0) {
		return nil, nil
	}
	tj.Scatter = math.Sqrt(rr / float64(nr))
	tj.StepCorrelation = e1 / ee
	band := (rr / float64(nr)) / (ee / float64(ne) / 2)
	if tj.Scatter < math.Max(jitterFloor*dt, 50*ulp) || tj.StepCorrelation > jitterMaxCorrelation ||
		band > jitterMaxBand || tj.MaxShift > jitterMaxShift*dt {
		return nil, nil
	}
	tj.GroupSigma = map[string]float64{}
	for key, m := range rows {
		tj.GroupSigma[key] = tj.Scatter / math.Sqrt(float64(m))
	}
	return out, tj
}
