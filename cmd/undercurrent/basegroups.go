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
// among a survey log's own readings (the same time and the same three
// field values), makes the base log a copy of the survey's readings. Two
// magnetometers read the same field to the last digit on all three axes
// at the same instant only by chance (their offsets differ by nT); a
// survey log given as --base without its position columns matches on
// every row.
const minSurveyShare = 0.1

// checkBaseNotSurvey refuses a base log that holds the readings of the
// survey log at path (s, as read, before any correction): the copy check
// by SHA-256 misses a survey log with its columns cut or reordered, and
// the moving-position check one without positions. Such a base takes the
// survey's own anomaly away as the diurnal variation.
func checkBaseNotSurvey(basePath string, base *ingest.Samples, path string, s *ingest.Samples) error {
	if base.NoTime || base.Len() == 0 {
		return nil
	}
	type reading struct{ t, x, y, z float64 }
	have := make(map[reading]struct{}, base.Len())
	for i := range base.Len() {
		have[reading{base.Time[i], base.Bx[i], base.By[i], base.Bz[i]}] = struct{}{}
	}
	same, first := 0, -1
	for i := range s.Len() {
		if _, ok := have[reading{s.Time[i], s.Bx[i], s.By[i], s.Bz[i]}]; ok {
			same++
			if first < 0 {
				first = i
			}
		}
	}
	if same < 10 || float64(same) < minSurveyShare*float64(len(have)) {
		return nil
	}
	return fmt.Errorf("%s: %d of the base log's %d readings are readings of the survey log %s (the same time and field on all three axes, the first at %s): it holds the survey's own readings, and would take the survey's anomaly away as the diurnal variation; the base log is the record of a second magnetometer left in one place during the survey",
		basePath, same, len(have), path, fmtBaseTime(s.Time[first]))
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
