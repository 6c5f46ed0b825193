package calibrate

import (
	"fmt"
	"math"
	"sort"
	"time"
)

// BaseSettings controls the base-station correction. A nil *BaseSettings
// or a zero field takes the default.
type BaseSettings struct {
	// Reference is the base value departures are taken from, nT ENU. Nil
	// uses RefMode.
	Reference *[3]float64
	// RefMode is "median" (default: the median of each base component over
	// the whole base record) or "first" (the first valid value).
	RefMode string
	// MaxGap is the longest stretch of base record, s, interpolated across
	// without a warning. Zero means five base sample intervals.
	MaxGap float64
	// MaxHold is the longest time, s, by which a rover row may lie before
	// or after the base record and still be corrected, with the base's
	// nearest value held (and a warning). A row further out is an error:
	// the diurnal variation moves by nanotesla in minutes, and a value held
	// that long is no correction. Zero means MaxGap; a negative value holds
	// the nearest value for any time.
	MaxHold float64
}

// BaseReport says what the base-station correction did.
type BaseReport struct {
	// Reference is the base reference value used, nT ENU.
	Reference [3]float64
	// Covered counts rover rows inside the base record; Outside those
	// before or after it (corrected with the nearest base value held);
	// InGap those inside a base gap longer than MaxGap (interpolated).
	Covered, Outside, InGap int
	// Range is the range (max - min) of the departure applied per
	// component and MaxAbs its largest magnitude, nT.
	Range, MaxAbs [3]float64
	// RangeH is the range of the base's horizontal intensity
	// sqrt(E² + N²) over the rover's time span, nT.
	RangeH   float64
	Warnings []string
}

// baseSeries is one base component without missing values.
type baseSeries struct{ t, v []float64 }

func cleanSeries(t, v []float64) baseSeries {
	var s baseSeries
	for i := range t {
		if x := v[i]; !math.IsNaN(x) && !math.IsInf(x, 0) && !math.IsNaN(t[i]) {
			s.t = append(s.t, t[i])
			s.v = append(s.v, x)
		}
	}
	return s
}

// at interpolates linearly at time x, holding the end values outside.
// It also returns whether x is outside and the bracketing interval.
func (s baseSeries) at(x float64) (v float64, outside bool, gap float64) {
	n := len(s.t)
	i := sort.SearchFloat64s(s.t, x) // first t >= x
	switch {
	case i == 0:
		return s.v[0], x < s.t[0], 0
	case i == n:
		return s.v[n-1], true, 0
	}
	t0, t1 := s.t[i-1], s.t[i]
	f := (x - t0) / (t1 - t0)
	return s.v[i-1] + f*(s.v[i]-s.v[i-1]), false, t1 - t0
}

// BaseCorrectColumns subtracts from the rover field columns (nT, ENU, in
// place) the base station's departure from its reference, linearly
// interpolated to the rover times (s). baseName and roverName are used in
// messages. Base times must increase; missing base values (NaN) are
// skipped. A base record that does not overlap the rover at all is an
// error; partial coverage is a warning.
func BaseCorrectColumns(roverName string, rt []float64, rb [3][]float64, baseName string, bt []float64, bb [3][]float64, set *BaseSettings) (*BaseReport, error) {
	var bs BaseSettings
	if set != nil {
		bs = *set
	}
	for k := 0; k < 3; k++ {
		if len(rb[k]) != len(rt) {
			return nil, fmt.Errorf("calibrate: base correction: %s: field column %d has %d rows, time has %d", roverName, k, len(rb[k]), len(rt))
		}
		if len(bb[k]) != len(bt) {
			return nil, fmt.Errorf("calibrate: base correction: %s: field column %d has %d rows, time has %d", baseName, k, len(bb[k]), len(bt))
		}
	}
	for i := 1; i < len(bt); i++ {
		if !(bt[i] > bt[i-1]) {
			return nil, fmt.Errorf("calibrate: base correction: %s: row %d: time %s does not follow %s", baseName, i, fmtTime(bt[i]), fmtTime(bt[i-1]))
		}
	}
	var series [3]baseSeries
	for k := 0; k < 3; k++ {
		series[k] = cleanSeries(bt, bb[k])
		if len(series[k].t) < 2 {
			return nil, fmt.Errorf("calibrate: base correction: %s: fewer than two valid values in column %s", baseName, fieldNames[k])
		}
	}
	rep := &BaseReport{}
	switch {
	case bs.Reference != nil:
		rep.Reference = *bs.Reference
	case bs.RefMode == "" || bs.RefMode == "median":
		for k := 0; k < 3; k++ {
			rep.Reference[k] = median(series[k].v, make([]float64, 0, len(series[k].v)))
		}
	case bs.RefMode == "first":
		for k := 0; k < 3; k++ {
			rep.Reference[k] = series[k].v[0]
		}
	default:
		return nil, fmt.Errorf("calibrate: base correction: reference mode %q, want \"median\" or \"first\"", bs.RefMode)
	}
	maxGap := bs.MaxGap
	if maxGap == 0 {
		d := make([]float64, 0, len(series[0].t)-1)
		for i := 1; i < len(series[0].t) && i < 10000; i++ {
			d = append(d, series[0].t[i]-series[0].t[i-1])
		}
		maxGap = 5 * median(d, nil)
	}

	maxHold := bs.MaxHold
	if maxHold == 0 {
		maxHold = maxGap
	}

	rlo, rhi := math.Inf(1), math.Inf(-1)
	for i, t := range rt {
		if math.IsNaN(t) || math.IsInf(t, 0) {
			return nil, fmt.Errorf("calibrate: base correction: %s: row %d: time is %g", roverName, i, t)
		}
		rlo, rhi = math.Min(rlo, t), math.Max(rhi, t)
	}
	if len(rt) == 0 {
		return rep, nil
	}
	blo := math.Max(series[0].t[0], math.Max(series[1].t[0], series[2].t[0]))
	bhi := math.Min(series[0].t[len(series[0].t)-1], math.Min(series[1].t[len(series[1].t)-1], series[2].t[len(series[2].t)-1]))
	if rhi < blo || rlo > bhi {
		return nil, fmt.Errorf("calibrate: base correction: base record %s (%s to %s) does not overlap rover log %s (%s to %s)",
			baseName, fmtTime(blo), fmtTime(bhi), roverName, fmtTime(rlo), fmtTime(rhi))
	}
	if maxHold >= 0 && (rlo < blo-maxHold || rhi > bhi+maxHold) {
		far, first := 0, -1
		for i, t := range rt {
			if t < blo-maxHold || t > bhi+maxHold {
				far++
				if first < 0 {
					first = i
				}
			}
		}
		return nil, fmt.Errorf("calibrate: base correction: base record %s (%s to %s) does not cover the rover log %s (%s to %s): %d of %d readings, the first at %s, lie more than %g s outside it, where the base's nearest value held is no correction; give a base record that covers the survey, or allow the hold (locate --base-hold SECONDS)",
			baseName, fmtTime(blo), fmtTime(bhi), roverName, fmtTime(rlo), fmtTime(rhi), far, len(rt), fmtTime(rt[first]), math.Round(maxHold*1e6)/1e6)
	}

	var lo, hi [3]float64
	for k := range lo {
		lo[k], hi[k] = math.Inf(1), math.Inf(-1)
	}
	for i, t := range rt {
		out, inGap := false, false
		for k := 0; k < 3; k++ {
			v, o, g := series[k].at(t)
			out = out || o
			inGap = inGap || g > maxGap
			d := v - rep.Reference[k]
			rb[k][i] -= d
			lo[k], hi[k] = math.Min(lo[k], d), math.Max(hi[k], d)
		}
		switch {
		case out:
			rep.Outside++
		case inGap:
			rep.InGap++
			rep.Covered++
		default:
			rep.Covered++
		}
	}
	for k := 0; k < 3; k++ {
		rep.Range[k] = hi[k] - lo[k]
		rep.MaxAbs[k] = math.Max(math.Abs(lo[k]), math.Abs(hi[k]))
	}
	hlo, hhi := math.Inf(1), math.Inf(-1)
	for i, t := range bt {
		if t < rlo || t > rhi {
			continue
		}
		h := math.Hypot(bb[0][i], bb[1][i])
		if !math.IsNaN(h) && !math.IsInf(h, 0) {
			hlo, hhi = math.Min(hlo, h), math.Max(hhi, h)
		}
	}
	if hhi >= hlo {
		rep.RangeH = hhi - hlo
	}
	if rep.Outside > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf(
			"base record %s (%s to %s) does not cover the rover log %s (%s to %s): %d of %d rows corrected with the nearest base value held",
			baseName, fmtTime(blo), fmtTime(bhi), roverName, fmtTime(rlo), fmtTime(rhi), rep.Outside, len(rt)))
	}
	if rep.InGap > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf(
			"%d rover rows fall in gaps of base record %s longer than %g s: interpolated across the gap", rep.InGap, baseName, maxGap))
	}
	return rep, nil
}

// fmtTime shows Unix times as UTC and small (relative) times as seconds.
func fmtTime(t float64) string {
	if t > 1e8 && t < 1e11 {
		sec, frac := math.Modf(t)
		return time.Unix(int64(sec), int64(frac*1e9)).UTC().Format("2006-01-02T15:04:05Z")
	}
	return fmt.Sprintf("%g s", t)
}
