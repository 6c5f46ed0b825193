package calibrate

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
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
	// MaxGap is the longest gap in the base record, s, that rover readings
	// may fall in: they are interpolated linearly across it. The default
	// limit, used when MaxGap is zero, is a time: five base sample
	// intervals, at least MinGapLimit and at most MaxGapCeiling. A
	// positive MaxGap sets the limit, above the default (rows in the
	// longer gaps are interpolated with a warning) or below it, but never
	// below 1.5 base sample intervals (the spacing of a record with no
	// reading missing); a negative value interpolates across any gap. A
	// rover reading in a longer gap is an error, for the same reason as
	// one too far outside the record (MaxHold): a straight line across
	// minutes of missing base record misses the variation in them.
	MaxGap float64
	// MaxHold is the longest time, s, by which a rover row may lie before
	// or after the base record and still be corrected, with the base's
	// nearest value held (and a warning). A row further out is an error:
	// the diurnal variation moves by nanotesla in minutes, and a value held
	// that long is no correction. Zero means the default gap limit (see
	// MaxGap); a negative value holds the nearest value for any time.
	MaxHold float64
	// LeftOut are the indices of base rows whose values were left out as
	// spikes (set to NaN by DespikeBaseColumns). The correction
	// interpolates across them, but they are readings the base station
	// made: they do not make a gap in the record.
	LeftOut []int
}

// MinGapLimit is the least the default gap and hold limits allow, s,
// however fast the base logger samples. The limit is about the field, not
// the logger: a straight line is drawn across 60 s between every two
// readings of one-minute observatory data (IAGA-2002 minute values, the
// commonest base record), so a 60-s gap in a faster record is no worse
// than what a minute base gives everywhere. The diurnal variation is slow
// (its daily range is some tens of nT, a few nT per minute at most: 8 nT
// a minute at Boulder in November 2014, DOMAIN.md), and the straight line
// follows its slope; only its curvature is missed, a small fraction of a
// nanotesla over a minute.
const MinGapLimit = 60.0

// MaxGapCeiling is the most the default gap and hold limits allow, s,
// whatever the base record's own sampling: five intervals of one-minute
// observatory data (the coarsest base record in common use, IAGA-2002
// minute values). Geomagnetic pulsations of class Pc5 have periods of 150
// to 600 s (IAGA classification of continuous pulsations, Jacobs et al.,
// J. Geophys. Res. 69, 1964) and the diurnal variation moves by up to
// 8 nT a minute (Boulder, November 2014, in DOMAIN.md): a straight line
// across a longer gap, or a value held for longer, is no correction.
const MaxGapCeiling = 300.0

// BaseReport says what the base-station correction did.
type BaseReport struct {
	// Reference is the base reference value used, nT ENU.
	Reference [3]float64
	// Covered counts rover rows inside the base record; Outside those
	// before or after it (corrected with the nearest base value held);
	// InGap those inside a base gap longer than the default limit but
	// allowed by MaxGap (interpolated, with a warning).
	Covered, Outside, InGap int
	// Range is the range (max - min) of the departure applied per
	// component and MaxAbs its largest magnitude, nT.
	Range, MaxAbs [3]float64
	// RangeH is the range of the base's horizontal intensity
	// sqrt(E² + N²) over the rover's time span, nT.
	RangeH   float64
	Warnings []string
	// Gaps are the gaps of the base record that rover rows fall in, in
	// time order: every stretch with one base reading or more missing (an
	// interval over 1.5 base sample intervals), however short, across
	// which the correction drew a straight line. The caller reports them
	// with the survey's groups: the straight line is a guess at the field
	// the base did not record, and its error is in no fit's sigma.
	Gaps []BaseGap
}

// BaseGap is one gap of the base record that rover rows fall in.
type BaseGap struct {
	// From and To are the times of the base readings either side, s.
	From, To float64
	// Missing names the components missing in the gap ("bx", "by", "bz")
	// when not all three are.
	Missing []string
	// Rows are the rover rows in the gap.
	Rows []int
	// Absent is the number of base readings missing in the gap: the
	// base's sample intervals from From to To, less one.
	Absent int
	// LineRMS and LineMax estimate the straight line's error across the
	// gap from the base record itself: the departure of the components
	// missing in the gap (all three, a vector, when Missing is empty)
	// from the straight line between the record's readings To-From apart,
	// over every such span wholly recorded within LineWindow of the gap,
	// RMS and largest, nT. Spans counts those spans; with none, both are
	// NaN.
	LineRMS, LineMax float64
	Spans            int
}

// LineWindow is how far either side of a base gap, s, the record's own
// departures from a straight line over spans of the gap's length are
// measured (BaseGap.LineRMS): an hour, short against the diurnal
// variation's day and long against Pc5 pulsations (150-600 s, IAGA
// classification, Jacobs et al. 1964), so that the estimate reflects the
// field's activity at the time of the gap.
const LineWindow = 3600.0

// lineError measures how far a record with readings at times t (all three
// components vb present) departs from the straight line between readings
// span s apart, over spans starting within LineWindow of [t0, t1] and
// lying wholly outside it with no reading missing (step is the record's
// sample interval): RMS and largest departure at the readings inside the
// spans, of the components comps (a vector, when more than one), and the
// number of spans. Before, all three components were measured whatever
// was missing, and a gap in Z alone in Boulder's one-minute record was
// quoted with the horizontal field's variation, six times too large.
func lineError(t []float64, vb [3][]float64, comps []int, t0, t1, step float64) (rms, worst float64, spans int) {
	span := t1 - t0
	n := int(math.Round(span / step)) // readings from one end to the other
	if n < 2 || len(t) <= n {
		return math.NaN(), math.NaN(), 0
	}
	lo := sort.SearchFloat64s(t, t0-LineWindow)
	hi := sort.SearchFloat64s(t, t1+LineWindow)
	// At most about 600 spans: a fast record has many.
	stride := max(1, (hi-lo)/600)
	var sum float64
	var m int
	for i := lo; i+n < len(t) && i < hi; i += stride {
		j := i + n
		if t[j] > t1+LineWindow || math.Abs(t[j]-t[i]-span) > 0.5*step {
			continue // a reading missing in the span, or past the window
		}
		if t[i] < t1 && t[j] > t0 {
			continue // overlaps the gap itself
		}
		for q := i + 1; q < j; q++ {
			f := (t[q] - t[i]) / (t[j] - t[i])
			d2 := 0.0
			for _, k := range comps {
				d := vb[k][q] - (vb[k][i] + f*(vb[k][j]-vb[k][i]))
				d2 += d * d
			}
			sum += d2
			m++
			worst = math.Max(worst, math.Sqrt(d2))
		}
		spans++
	}
	if m == 0 {
		return math.NaN(), math.NaN(), 0
	}
	return math.Sqrt(sum / float64(m)), worst, spans
}

// baseSeries is one base component without missing values.
type baseSeries struct{ t, v []float64 }

// at interpolates linearly at time x, holding the end values outside.
// It also returns whether x is outside, the length of the bracketing
// interval (0 at a base reading's own time) and the index of the base
// reading that ends it.
func (s baseSeries) at(x float64) (v float64, outside bool, gap float64, end int) {
	n := len(s.t)
	i := sort.SearchFloat64s(s.t, x) // first t >= x
	switch {
	case i < n && s.t[i] == x:
		return s.v[i], false, 0, i
	case i == 0:
		return s.v[0], true, 0, 0
	case i == n:
		return s.v[n-1], true, 0, n
	}
	t0, t1 := s.t[i-1], s.t[i]
	f := (x - t0) / (t1 - t0)
	return s.v[i-1] + f*(s.v[i]-s.v[i-1]), false, t1 - t0, i
}

// baseGap is one gap of a base record that rover rows fall in.
type baseGap struct {
	t0, t1 float64
	axes   [3]bool // the components missing in it
	rows   int     // rover rows in it
}

// describeGaps words the gaps rover rows fall in for messages: the first
// three in time, and how many more; ft formats a time.
func describeGaps(gaps []*baseGap, ft func(float64) string) string {
	sort.Slice(gaps, func(a, b int) bool { return gaps[a].t0 < gaps[b].t0 })
	var parts []string
	for i, g := range gaps {
		if i == 3 {
			parts = append(parts, fmt.Sprintf("and %d more", len(gaps)-3))
			break
		}
		what := ""
		if !(g.axes[0] && g.axes[1] && g.axes[2]) {
			var names []string
			for k, ok := range g.axes {
				if ok {
					names = append(names, fieldNames[k])
				}
			}
			what = ", in " + strings.Join(names, " and ")
		}
		parts = append(parts, fmt.Sprintf("from %s to %s (%g s%s; %d rover %s)", ft(g.t0), ft(g.t1), math.Round((g.t1-g.t0)*1e3)/1e3, what, g.rows, map[bool]string{true: "reading", false: "readings"}[g.rows == 1]))
	}
	return strings.Join(parts, ", ")
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
	// A row repeated exactly (a common logger artefact) is left out; a
	// time repeated with other values is refused.
	dups, err := RepeatedBaseRows(baseName, bt, bb)
	if err != nil {
		return nil, err
	}
	skip := make([]bool, len(bt))
	for _, i := range dups {
		skip[i] = true
	}
	for i, prev := 1, 0; i < len(bt); i++ {
		if skip[i] {
			continue
		}
		if !(bt[i] > bt[prev]) {
			return nil, fmt.Errorf("calibrate: base correction: %s: data row %d (counting from 1): time %s does not follow %s; put the base log in time order (locate --time-order any)", baseName, i+1, fmtTime(bt[i]), fmtTime(bt[prev]))
		}
		prev = i
	}
	spiked := make([]bool, len(bt))
	for _, i := range bs.LeftOut {
		if i >= 0 && i < len(bt) {
			spiked[i] = true
		}
	}
	// series holds the values the correction interpolates; present the
	// times the base station read, spikes left out included, for the gaps.
	var series, present [3]baseSeries
	for k := 0; k < 3; k++ {
		for i, t := range bt {
			if skip[i] || math.IsNaN(t) {
				continue
			}
			x := bb[k][i]
			ok := !math.IsNaN(x) && !math.IsInf(x, 0)
			if ok {
				series[k].t = append(series[k].t, t)
				series[k].v = append(series[k].v, x)
			}
			if ok || spiked[i] {
				present[k].t = append(present[k].t, t)
				present[k].v = append(present[k].v, 0)
			}
		}
		if len(series[k].t) < 2 {
			return nil, fmt.Errorf("calibrate: base correction: %s: fewer than two valid values in column %s", baseName, fieldNames[k])
		}
	}
	rep := &BaseReport{}
	if len(dups) > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("base record %s repeats %d %s exactly (the same time and values), the first at %s: the repeats were left out", baseName, len(dups), map[bool]string{true: "row", false: "rows"}[len(dups) == 1], fmtTime(bt[dups[0]])))
	}
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
	// The default gap limit: five base sample intervals, at least
	// MinGapLimit and at most MaxGapCeiling.
	d := make([]float64, 0, len(present[0].t)-1)
	for i := 1; i < len(present[0].t) && i < 10000; i++ {
		d = append(d, present[0].t[i]-present[0].t[i-1])
	}
	step := median(d, nil)
	ft := func(t float64) string { return fmtTimeSub(t, step < 1) }
	stepS := math.Round(step*1e6) / 1e6
	defGap, defWhy := 5*step, fmt.Sprintf("five base sample intervals of %g s", stepS)
	switch {
	case defGap > MaxGapCeiling:
		defGap, defWhy = MaxGapCeiling, fmt.Sprintf("the default ceiling, whatever the base's own sampling interval, here %g s", stepS)
	case defGap < MinGapLimit:
		defGap, defWhy = MinGapLimit, fmt.Sprintf("the default, however fast the base samples, here every %g s", stepS)
	}
	maxGap, why := defGap, defWhy
	switch {
	case bs.MaxGap < 0:
		maxGap = math.Inf(1)
	case bs.MaxGap > 0 && bs.MaxGap < 1.5*step:
		maxGap, why = 1.5*step, "1.5 base sample intervals, the least limit: no reading missing"
	case bs.MaxGap > 0 && bs.MaxGap != defGap:
		maxGap, why = bs.MaxGap, "the limit given"
	}
	maxHold := bs.MaxHold
	if maxHold == 0 {
		maxHold = defGap
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
		return nil, &BaseNoOverlapError{Msg: fmt.Sprintf("calibrate: base correction: base record %s (%s to %s) does not overlap rover log %s (%s to %s)",
			baseName, ft(blo), ft(bhi), roverName, ft(rlo), ft(rhi))}
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
		return nil, fmt.Errorf("calibrate: base correction: base record %s (%s to %s) does not cover the rover log %s (%s to %s): %d of %d readings, the first at %s, lie more than %g s outside it, where the base's nearest value held is no correction; give a base record that covers the survey (locate --base may be given more than once: observatory files hold one day each, and a survey across midnight UTC needs both days), or allow the hold (locate --base-hold SECONDS)",
			baseName, ft(blo), ft(bhi), roverName, ft(rlo), ft(rhi), far, len(rt), ft(rt[first]), math.Round(maxHold*1e6)/1e6)
	}

	// Rover rows in gaps longer than the limit are refused before any row
	// is changed.
	type gapKey struct{ t0, t1 float64 }
	long, allowed := map[gapKey]*baseGap{}, 0
	var inLong []int
	bridged := map[gapKey]*BaseGap{}
	for i, t := range rt {
		in, wide := false, false
		seen := map[gapKey]bool{}
		for k := 0; k < 3; k++ {
			_, _, g, end := present[k].at(t)
			if g > defGap {
				wide = true
			}
			if g > 1.5*step {
				// A base reading or more is missing: bridged.
				key := gapKey{present[k].t[end-1], present[k].t[end]}
				bg := bridged[key]
				if bg == nil {
					bg = &BaseGap{From: key.t0, To: key.t1}
					bridged[key] = bg
				}
				if !slices.Contains(bg.Missing, fieldNames[k]) {
					bg.Missing = append(bg.Missing, fieldNames[k])
				}
				if n := len(bg.Rows); n == 0 || bg.Rows[n-1] != i {
					bg.Rows = append(bg.Rows, i)
				}
			}
			if g <= maxGap {
				continue
			}
			in = true
			key := gapKey{present[k].t[end-1], present[k].t[end]}
			bg := long[key]
			if bg == nil {
				bg = &baseGap{t0: key.t0, t1: key.t1}
				long[key] = bg
			}
			bg.axes[k] = true
			if !seen[key] {
				seen[key] = true
				bg.rows++
			}
		}
		if in {
			inLong = append(inLong, i)
		} else if wide {
			allowed++
		}
	}
	if len(inLong) > 0 {
		gaps := make([]*baseGap, 0, len(long))
		for _, g := range long {
			gaps = append(gaps, g)
		}
		return nil, fmt.Errorf("calibrate: base correction: base record %s has %s longer than %g s (%s) while the rover log %s was recorded: %d of %d readings, from %s to %s, fall in the %s %s. A straight line across the gap is no correction (the diurnal variation and pulsations move the field by nanotesla in minutes); give a base record without the gap, or allow interpolation across it (locate --base-hold SECONDS)",
			baseName, map[bool]string{true: "a gap", false: "gaps"}[len(gaps) == 1], math.Round(maxGap*1e6)/1e6, why, roverName,
			len(inLong), len(rt), ft(rt[inLong[0]]), ft(rt[inLong[len(inLong)-1]]), map[bool]string{true: "gap", false: "gaps"}[len(gaps) == 1], describeGaps(gaps, ft))
	}

	var lo, hi [3]float64
	for k := range lo {
		lo[k], hi[k] = math.Inf(1), math.Inf(-1)
	}
	for i, t := range rt {
		out := false
		for k := 0; k < 3; k++ {
			v, o, _, _ := series[k].at(t)
			out = out || o
			d := v - rep.Reference[k]
			rb[k][i] -= d
			lo[k], hi[k] = math.Min(lo[k], d), math.Max(hi[k], d)
		}
		if out {
			rep.Outside++
		} else {
			rep.Covered++
		}
	}
	rep.InGap = allowed
	if len(bridged) > 0 {
		// The record with all three components, for the straight line's
		// error measured on the record itself.
		var ft3 []float64
		var fb [3][]float64
		for i, t := range bt {
			if skip[i] || math.IsNaN(t) || !finite(bb[0][i]) || !finite(bb[1][i]) || !finite(bb[2][i]) {
				continue
			}
			ft3 = append(ft3, t)
			for k := 0; k < 3; k++ {
				fb[k] = append(fb[k], bb[k][i])
			}
		}
		for _, g := range bridged {
			comps := []int{0, 1, 2}
			if len(g.Missing) == 3 {
				g.Missing = nil
			} else {
				comps = comps[:0]
				for k, name := range fieldNames {
					if slices.Contains(g.Missing, name) {
						comps = append(comps, k)
					}
				}
			}
			g.Absent = max(1, int(math.Round((g.To-g.From)/step))-1)
			g.LineRMS, g.LineMax, g.Spans = lineError(ft3, fb, comps, g.From, g.To, step)
			rep.Gaps = append(rep.Gaps, *g)
		}
		sort.Slice(rep.Gaps, func(a, b int) bool { return rep.Gaps[a].From < rep.Gaps[b].From })
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
			baseName, ft(blo), ft(bhi), roverName, ft(rlo), ft(rhi), rep.Outside, len(rt)))
	}
	if rep.InGap > 0 && maxGap > defGap {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf(
			"%d rover rows fall in gaps of base record %s longer than %g s (%s), up to %g s: interpolated across the gaps, as allowed", rep.InGap, baseName, math.Round(defGap*1e6)/1e6, defWhy, math.Round(maxGap*1e6)/1e6))
	}
	return rep, nil
}

// fmtTime shows Unix times as UTC and small (relative) times as seconds.
func fmtTime(t float64) string { return fmtTimeSub(t, false) }

// fmtTimeSub is fmtTime, with milliseconds when sub is set (a record
// sampled faster than once a second, whose gaps and spikes last fractions
// of a second).
func fmtTimeSub(t float64, sub bool) string {
	if t > 1e8 && t < 1e11 {
		if sub {
			return time.UnixMilli(int64(math.Round(t * 1e3))).UTC().Format("2006-01-02T15:04:05.000Z")
		}
		sec, frac := math.Modf(t)
		return time.Unix(int64(sec), int64(frac*1e9)).UTC().Format("2006-01-02T15:04:05Z")
	}
	return fmt.Sprintf("%g s", t)
}

// BaseRepeatError is a time repeated in a base record with other values:
// Row (0-based, in the columns given) has the time of the row before.
type BaseRepeatError struct {
	Name       string
	Row        int
	Time       float64
	Prev, This [3]float64
}

func (e *BaseRepeatError) Error() string {
	return fmt.Sprintf("calibrate: base correction: %s: data row %d (counting from 1): time %s repeats the time of the row before with other values (%g, %g, %g nT against %g, %g, %g nT): a base station reads one field at a time; remove the wrong row",
		e.Name, e.Row+1, fmtTime(e.Time), e.This[0], e.This[1], e.This[2], e.Prev[0], e.Prev[1], e.Prev[2])
}

// RepeatedBaseRows finds the rows of a base record (times bt, field
// columns bb) that repeat the row before exactly, the same time and the
// same values (missing values repeating missing ones): a logger artefact
// that holds no contradiction, to be left out. A row with the time of the
// row before and other values is a *BaseRepeatError.
func RepeatedBaseRows(name string, bt []float64, bb [3][]float64) ([]int, error) {
	same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
	var dups []int
	for i := 1; i < len(bt); i++ {
		if bt[i] != bt[i-1] {
			continue
		}
		if same(bb[0][i], bb[0][i-1]) && same(bb[1][i], bb[1][i-1]) && same(bb[2][i], bb[2][i-1]) {
			dups = append(dups, i)
			continue
		}
		return nil, &BaseRepeatError{Name: name, Row: i, Time: bt[i],
			Prev: [3]float64{bb[0][i-1], bb[1][i-1], bb[2][i-1]}, This: [3]float64{bb[0][i], bb[1][i], bb[2][i]}}
	}
	return dups, nil
}

// BaseSpikes says what DespikeBaseColumns took out of a base record.
type BaseSpikes struct {
	// Rows are the indices of the rows taken out, in order.
	Rows []int
	// Runs words them as runs of consecutive readings with their times,
	// the first five runs and how many more, for messages.
	Runs string
}

// DespikeBaseColumns finds spikes in a base record (times bt in seconds,
// increasing; field columns bb in nT) with the median (Hampel) filter of
// FindSpikes (DespikeSettings.Median)
// and sets all three field values of each spiked row to NaN, in place, so
// that the base correction interpolates across them from the readings
// either side. A base station stands still in a field that changes
// smoothly: a reading far off the running median of its neighbours is a
// disturbance at the base (a passing vehicle, a logger glitch) that would
// otherwise be subtracted from every rover reading taken at that moment.
// Missing values are not spikes. It returns nil when there are none.
func DespikeBaseColumns(bt []float64, bb [3][]float64, set *DespikeSettings) (*BaseSpikes, error) {
	for k := 0; k < 3; k++ {
		if len(bb[k]) != len(bt) {
			return nil, fmt.Errorf("calibrate: base despike: field column %d has %d rows, time has %d", k, len(bb[k]), len(bt))
		}
	}
	// A record in time at one place: the median filter (DespikeSettings).
	var ds DespikeSettings
	if set != nil {
		ds = *set
	}
	ds.Median = true
	flag, _, _, err := FindSpikes([][]float64{bb[0], bb[1], bb[2]}, &ds)
	if err != nil {
		return nil, err
	}
	var rows []int
	for i, f := range flag {
		if f && finite(bb[0][i]) && finite(bb[1][i]) && finite(bb[2][i]) {
			rows = append(rows, i)
		}
	}
	if len(rows) == 0 {
		return nil, nil
	}
	for _, i := range rows {
		bb[0][i], bb[1][i], bb[2][i] = math.NaN(), math.NaN(), math.NaN()
	}
	var d []float64
	for i := 1; i < len(bt) && i < 10000; i++ {
		if x := bt[i] - bt[i-1]; x > 0 {
			d = append(d, x)
		}
	}
	sub := len(d) > 0 && median(d, nil) < 1
	fmtTime := func(t float64) string { return fmtTimeSub(t, sub) }
	var runs []string
	nRuns := 0
	for a := 0; a < len(rows); {
		b := a
		for b+1 < len(rows) && rows[b+1] == rows[b]+1 {
			b++
		}
		nRuns++
		if nRuns <= 5 {
			if a == b {
				runs = append(runs, fmtTime(bt[rows[a]]))
			} else {
				runs = append(runs, fmt.Sprintf("%s to %s (%d readings)", fmtTime(bt[rows[a]]), fmtTime(bt[rows[b]]), b-a+1))
			}
		}
		a = b + 1
	}
	if nRuns > 5 {
		runs = append(runs, fmt.Sprintf("and %d more", nRuns-5))
	}
	return &BaseSpikes{Rows: rows, Runs: strings.Join(runs, ", ")}, nil
}

// BaseNoOverlapError is BaseCorrect's error for a rover log that lies
// wholly outside the base record: nothing of it can be corrected, and
// nothing was changed. A caller merging several rover logs, of which the
// base record covers only some, can leave this one uncorrected and say so.
type BaseNoOverlapError struct {
	Msg string
}

func (e *BaseNoOverlapError) Error() string { return e.Msg }
