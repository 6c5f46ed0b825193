package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/ingest"
)

// A base log is the record of one magnetometer left in one place. These
// checks look at what the copy (SHA-256) and moving-position checks of
// baseUnitOptions and checkBaseLog cannot see: a group column (a sensor,
// a traverse) and a survey's own readings without its positions.

// baseGroupSpan is the time span of one value of a base log's group
// column, in the file's order of first appearance.
type baseGroupSpan struct {
	name       string
	start, end float64
	rows       int
}

// checkBaseGroups looks at the group column of the base log read from
// path with opts (nil Group: none). Values whose readings overlap in
// time are several magnetometers logged together, each with its own
// offset: the correction would jump between them, so the log is refused.
// Values one after another are traverses of a survey, or sessions of one
// base station: a warning (an alert, as the answer is wrong in the first
// case) says which is which. Rows without a group are not counted; one
// value is no group at all.
func checkBaseGroups(path string, opts []ingest.Option, base *ingest.Samples) (string, error) {
	if base.Group == nil {
		return "", nil
	}
	index := map[string]int{}
	var spans []baseGroupSpan
	for i, g := range base.Group {
		if g == "" {
			continue
		}
		k, ok := index[g]
		if !ok {
			k = len(spans)
			index[g] = k
			spans = append(spans, baseGroupSpan{name: g, start: math.Inf(1), end: math.Inf(-1)})
		}
		sp := &spans[k]
		sp.rows++
		if t := base.Time[i]; !math.IsNaN(t) {
			sp.start, sp.end = math.Min(sp.start, t), math.Max(sp.end, t)
		}
	}
	if len(spans) < 2 {
		return "", nil
	}
	var names []string
	for i, sp := range spans {
		if i == 3 {
			names = append(names, fmt.Sprintf("and %d more", len(spans)-3))
			break
		}
		names = append(names, fmt.Sprintf("%q", sp.name))
	}
	col := baseGroupColumn(path, opts)
	what := fmt.Sprintf("the base log's group column %s holds %d values (%s)", col, len(spans), strings.Join(names, ", "))
	byStart := append([]baseGroupSpan(nil), spans...)
	sort.SliceStable(byStart, func(a, b int) bool { return byStart[a].start < byStart[b].start })
	latest := 0 // the span reaching furthest so far
	for i := 1; i < len(byStart); i++ {
		a, b := byStart[latest], byStart[i]
		if b.start < a.end {
			return "", fmt.Errorf("%s: %s whose readings overlap in time (%q from %s to %s, %q from %s to %s): several magnetometers logged together, each with its own offset, between which the base correction would jump; a base log is the record of one magnetometer left in one place: give the rows of one of them as the base log (a file of its own)",
				path, what, a.name, fmtBaseTime(a.start), fmtBaseTime(a.end), b.name, fmtBaseTime(b.start), fmtBaseTime(b.end))
		}
		if b.end > a.end {
			latest = i
		}
	}
	return fmt.Sprintf("%s: %s, one after another in time: if they are traverses, this is a survey log and not a base log (a base station stands still), and the correction takes the survey's own anomalies away; if they are sessions of one magnetometer left in one place, the correction is right", path, what), nil
}

// minSurveyShare is the share of the base log's readings that, found
// among a survey log's own readings (the same time, the three field
// values within surveyMatchNT), makes the base log a copy of the survey's
// readings. A base station stands elsewhere, with its own offsets and
// its own orientation: its three axes differ from a survey
// magnetometer's at the same instant by nT at least (a degree of tilt
// turns 870 nT of a 50 000 nT field from one axis to another), so
// agreement to surveyMatchNT on every axis happens only by chance; a
// survey log given as --base without its position columns matches on
// every row, exactly or as rounded by an export.
const minSurveyShare = 0.1

// manyShared says whether same readings, of a log of n, make it hold
// another log's readings: 10 or more, and at least minSurveyShare of n.
func manyShared(same, n int) bool {
	return same >= 10 && float64(same) >= minSurveyShare*float64(n)
}

// surveyMatchNT is the agreement, on each axis, of a base reading and a
// survey reading at the same time that counts them as one reading: an
// export of the survey log rounded to 0.01 or 0.1 nT is caught, and no
// base station elsewhere comes near it.
const surveyMatchNT = 0.5

// checkBaseNotSurvey refuses a base log that holds the readings of the
// survey log at path (s, as read, before any correction): the copy check
// by SHA-256 misses a survey log with its columns cut or reordered, or
// its values rounded, and the moving-position check one without
// positions. Such a base takes the survey's own anomaly away as the
// diurnal variation. A base reading is the survey's when a survey
// reading at the same time (within half the base log's median interval,
// for times rounded by an export) agrees with it to surveyMatchNT on all
// three axes. Positions are not compared: a base log has none, or one
// fixed position.
func checkBaseNotSurvey(basePath string, base *ingest.Samples, path string, s *ingest.Samples) error {
	same, first := sharedReadings(base, s, false)
	if !manyShared(same, base.Len()) {
		return nil
	}
	return fmt.Errorf("%s: %d of the base log's %d readings are readings of the survey log %s (the same time and field, within %g nT on all three axes, the first at %s): it holds the survey's own readings, and would take the survey's anomaly away as the diurnal variation; the base log is the record of a second magnetometer left in one place during the survey",
		basePath, same, base.Len(), path, surveyMatchNT, fmtBaseTime(s.Time[first]))
}

// baseGroupColumn returns the name of the base log's group column, as
// ingest mapped it (opts: the base log's read options), or "group".
func baseGroupColumn(path string, opts []ingest.Option) string {
	r, err := ingest.Open(path, append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))...)
	if err != nil {
		return ingest.ColGroup
	}
	defer r.Release()
	for _, m := range ingest.Mappings(r) {
		if m.Column == ingest.ColGroup && m.Source != "" {
			return m.Source
		}
	}
	return ingest.ColGroup
}

// surveyMatchM is the agreement, on each of x, y and z, of the positions
// of two survey readings at the same time that counts them as one
// reading (when both logs have positions): an export rounding positions
// to the centimetre is caught, and two sensors of one cart, or a
// traverse beside another, are told apart however alike their fields.
const surveyMatchM = 0.01

// sharedReadings counts the readings of a that are readings of b: a
// reading of b at the same time (within half a's median interval, for
// times rounded by an export, and at least a millisecond) agrees with it
// to surveyMatchNT on all three field axes and, when positions is set,
// to surveyMatchM on x, y and z. Each reading of a is counted once.
// first is the index in b of the first reading matched, -1 for none.
// Logs without times share none.
func sharedReadings(a, b *ingest.Samples, positions bool) (same, first int) {
	first = -1
	if a.NoTime || a.Len() == 0 || b.NoTime || b.Len() == 0 {
		return 0, -1
	}
	positions = positions && a.X != nil && a.Y != nil && a.Z != nil && b.X != nil && b.Y != nil && b.Z != nil
	// a's readings in time order (a base log was put in time order,
	// but times may hold NaN, and a survey log read with --time-order
	// any or per-group is not in order).
	var order []int
	for i, t := range a.Time {
		if !math.IsNaN(t) {
			order = append(order, i)
		}
	}
	if len(order) == 0 {
		return 0, -1
	}
	sort.SliceStable(order, func(p, q int) bool { return a.Time[order[p]] < a.Time[order[q]] })
	tol := 1e-3 // s: a logger's time resolution
	if len(order) > 1 {
		steps := make([]float64, 0, len(order)-1)
		for k := 1; k < len(order); k++ {
			if d := a.Time[order[k]] - a.Time[order[k-1]]; d > 0 {
				steps = append(steps, d)
			}
		}
		if len(steps) > 0 {
			sort.Float64s(steps)
			tol = math.Max(tol, steps[len(steps)/2]/2)
		}
	}
	near := func(u, v, within float64) bool { return math.Abs(u-v) <= within }
	same1 := func(j, i int) bool {
		if !near(a.Bx[j], b.Bx[i], surveyMatchNT) || !near(a.By[j], b.By[i], surveyMatchNT) || !near(a.Bz[j], b.Bz[i], surveyMatchNT) {
			return false
		}
		return !positions || near(a.X[j], b.X[i], surveyMatchM) && near(a.Y[j], b.Y[i], surveyMatchM) && near(a.Z[j], b.Z[i], surveyMatchM)
	}
	matched := make([]bool, a.Len())
	for i := range b.Len() {
		t := b.Time[i]
		if math.IsNaN(t) {
			continue
		}
		k := sort.Search(len(order), func(k int) bool { return a.Time[order[k]] >= t-tol })
		for ; k < len(order) && a.Time[order[k]] <= t+tol; k++ {
			j := order[k]
			if matched[j] || !same1(j, i) {
				continue
			}
			matched[j] = true
			same++
			if first < 0 {
				first = i
			}
			break
		}
	}
	return same, first
}
