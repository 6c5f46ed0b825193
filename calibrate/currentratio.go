package calibrate

import (
	"fmt"
	"math"
	"sort"
	"time"
)

// CurrentRatio is a current record's ratio at each survey reading (see
// CurrentRatios).
type CurrentRatio struct {
	// Ratio is I_ref(t_i) / Mean at each reading, in the readings' order.
	Ratio []float64
	// Mean is the record's time average over the survey, A: the current at
	// which the ratio is 1.
	Mean float64
	// Min and Max are the record's lowest and highest current over the
	// survey, A (the samples within it and its ends).
	Min, Max float64
	// From and To are the survey's first and last reading times, s.
	From, To float64
}

// CurrentRatios returns, for each reading time in at (s, any order, none
// NaN), the ratio r = I_ref(t) / mean of I_ref over the survey, for a
// current record of times rt (s, increasing) and currents ri (A). I_ref is
// linear between the record's samples; the mean is its time average from
// the first to the last reading (trapezoidal, exact for the linear
// interpolant). A conductor's field is linear in its current (Biot-Savart),
// so a reading's field is r times the field at the mean current.
//
// An error, naming the record (name), says when the record's times do not
// overlap the readings', when the record does not cover them (it starts
// after the first reading or ends before the last), when a reading has no
// time, or when a current the interpolation uses is missing (NaN) or not
// positive.
func CurrentRatios(name string, rt, ri, at []float64) (*CurrentRatio, error) {
	if len(rt) != len(ri) {
		panic("calibrate: CurrentRatios: times and currents of different lengths")
	}
	if len(at) == 0 {
		return nil, fmt.Errorf("calibrate: current record %s: no survey readings to scale", name)
	}
	from, to := math.Inf(1), math.Inf(-1)
	for _, t := range at {
		if math.IsNaN(t) {
			return nil, fmt.Errorf("calibrate: current record %s: the survey's readings have no times, so no current can be paired with them", name)
		}
		from, to = math.Min(from, t), math.Max(to, t)
	}
	n := len(rt)
	if n == 0 {
		return nil, fmt.Errorf("calibrate: current record %s holds no samples", name)
	}
	for k := 1; k < n; k++ {
		if !(rt[k] > rt[k-1]) {
			return nil, fmt.Errorf("calibrate: current record %s: time %s at sample %d does not follow %s: its times must increase", name, when(rt[k]), k+1, when(rt[k-1]))
		}
	}
	switch {
	case rt[n-1] < from || rt[0] > to:
		return nil, fmt.Errorf("calibrate: current record %s: its times (%s to %s) do not overlap the survey's (%s to %s): a record of another day, or one clock in local time and the other in UTC, or times from the start of each log", name, when(rt[0]), when(rt[n-1]), when(from), when(to))
	case rt[0] > from:
		return nil, fmt.Errorf("calibrate: current record %s does not cover the survey: it starts %.3f s after the first reading (%s); a reading's current is only interpolated between samples", name, rt[0]-from, when(from))
	case rt[n-1] < to:
		return nil, fmt.Errorf("calibrate: current record %s does not cover the survey: it ends %.3f s before the last reading (%s); a reading's current is only interpolated between samples", name, to-rt[n-1], when(to))
	}
	// The samples the interpolation uses: from the last at or before the
	// first reading to the first at or after the last one.
	lo := sort.SearchFloat64s(rt, from)
	if lo == n || rt[lo] > from {
		lo--
	}
	hi := sort.SearchFloat64s(rt, to)
	res := &CurrentRatio{From: from, To: to, Min: math.Inf(1), Max: math.Inf(-1)}
	for k := lo; k <= hi; k++ {
		if !(ri[k] > 0) {
			what := "is missing"
			if !math.IsNaN(ri[k]) {
				what = fmt.Sprintf("is %g A, not positive", ri[k])
			}
			return nil, fmt.Errorf("calibrate: current record %s: the current at %s (sample %d), within the survey's times, %s: the ratio of the field to the current needs a current above 0 throughout (a record with the opposite sign convention: negate it)", name, when(rt[k]), k+1, what)
		}
	}
	interp := func(t float64) float64 {
		k := sort.SearchFloat64s(rt, t)
		if k < n && rt[k] == t {
			return ri[k]
		}
		w := (t - rt[k-1]) / (rt[k] - rt[k-1])
		return ri[k-1] + w*(ri[k]-ri[k-1])
	}
	// Time average of the interpolant over [from, to], trapezoid by trapezoid.
	ia, ib := interp(from), interp(to)
	res.Min, res.Max = math.Min(ia, ib), math.Max(ia, ib)
	if to > from {
		var area float64
		t0, i0 := from, ia
		for k := lo + 1; k <= hi; k++ {
			t1, i1 := rt[k], ri[k]
			if t1 >= to {
				t1, i1 = to, ib
			}
			area += 0.5 * (i0 + i1) * (t1 - t0)
			res.Min, res.Max = math.Min(res.Min, i1), math.Max(res.Max, i1)
			t0, i0 = t1, i1
			if t1 == to {
				break
			}
		}
		res.Mean = area / (to - from)
	} else {
		res.Mean = ia
	}
	res.Ratio = make([]float64, len(at))
	for i, t := range at {
		res.Ratio[i] = interp(t) / res.Mean
	}
	return res, nil
}

// when writes a time for a message: UTC date and time for an absolute time
// (Unix seconds after 1973), seconds otherwise.
func when(t float64) string {
	if t > 1e8 {
		sec, frac := math.Modf(t)
		return time.Unix(int64(sec), int64(frac*1e9)).UTC().Format("2006-01-02 15:04:05.000 UTC")
	}
	return fmt.Sprintf("%.3f s", t)
}
