package main

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/report"
)

// BaseGapKind is the kind of the finding about groups whose readings fell
// in a gap of the base-station record.
const BaseGapKind = "base-gap"

// baseGapMark starts the Problem of a group marked for a base gap.
const baseGapMark = report.BaseGapMark

// baseGapUse is a gap of the base record that readings of one survey log
// fell in (calibrate.BaseReport.Gaps), with the groups of those readings.
type baseGapUse struct {
	log    string
	gap    calibrate.BaseGap
	keys   []string       // the groups, in order of first reading
	counts map[string]int // readings per group
	total  map[string]int // the group's readings in this log
}

// noteBaseGaps records the base gaps longer than calibrate.MinGapLimit
// (60 s) that readings of survey log s fell in and returns the warning
// that names them, "" when there are none. A shorter gap is bridged as
// one-minute observatory data are everywhere, a straight line across a
// minute at most (see calibrate.MinGapLimit), and is only counted in the
// base summary: a fast base logger's dropped samples mark no group.
//
// Before, a gap shorter than the limit (five base intervals, 60 to 300 s)
// was bridged by a straight line without a word: in one-minute Boulder
// data a 5-minute gap, bridged across 16:00-16:05 UTC on 1 November 2014
// while the declination moved 1.2 arc-minutes, moved a traverse's fitted
// current by 10 sigma and its depth by 7, with every fit "sound".
func noteBaseGaps(sv *survey, o *locateOptions, s *ingest.Samples, rep *calibrate.BaseReport) string {
	var long []calibrate.BaseGap
	for _, g := range rep.Gaps {
		if g.To-g.From > calibrate.MinGapLimit {
			long = append(long, g)
		}
	}
	if len(long) == 0 {
		return ""
	}
	key := func(i int) string {
		if o.groupBy == "" || s.Group == nil {
			return ""
		}
		return s.Group[i]
	}
	total := map[string]int{}
	for i := range s.Len() {
		total[key(i)]++
	}
	var parts []string
	rows := 0
	for gi, g := range long {
		u := baseGapUse{log: s.Source, gap: g, counts: map[string]int{}, total: total}
		for _, i := range g.Rows {
			k := key(i)
			if o.groupBy != "" && k == "" {
				continue // no group: not fitted
			}
			if u.counts[k] == 0 {
				u.keys = append(u.keys, k)
			}
			u.counts[k]++
		}
		rows += len(g.Rows)
		sv.baseGaps = append(sv.baseGaps, u)
		if gi == 3 {
			parts = append(parts, fmt.Sprintf("and %d more", len(long)-3))
			continue
		}
		if gi > 3 {
			continue
		}
		parts = append(parts, u.describe())
	}
	return fmt.Sprintf("the base record %s is missing readings in %s over a minute long that %s of %s fall in, across which the base correction drew a straight line: %s. A straight line is a guess at the field the base did not record, and its error is in no fit's uncertainty: the groups named are marked for review and not counted sound. Give a base record without the gap (another file of the same station, or a nearby observatory's record for the whole survey) to correct them",
		o.base, plural(len(long), "gap"), plural(rows, "reading"), s.Source, strings.Join(parts, "; "))
}

// describe words one gap: its span, readings, groups and the straight
// line's estimated error.
func (u *baseGapUse) describe() string {
	g := u.gap
	// The span bridged and what is missing in it: "120 s" alone read as
	// two minutes lost where one minute's reading was.
	what := fmt.Sprintf("%s missing", plural(g.Absent, "base reading"))
	if len(g.Missing) > 0 {
		what = fmt.Sprintf("%s missing in %s", strings.Join(g.Missing, " and "), plural(g.Absent, "base reading"))
	}
	groups := ""
	if len(u.keys) > 0 && !(len(u.keys) == 1 && u.keys[0] == "") {
		var gs []string
		for _, k := range u.keys {
			gs = append(gs, fmt.Sprintf("%s (%d of %d)", k, u.counts[k], u.total[k]))
		}
		groups = ", in " + map[bool]string{true: "group ", false: "groups "}[len(gs) == 1] + strings.Join(gs, ", ")
	}
	est := "the base record holds no span as long nearby to tell the straight line's error"
	if g.Spans > 0 {
		of := ""
		if len(g.Missing) > 0 {
			of = " in " + strings.Join(g.Missing, " and ")
		}
		est = fmt.Sprintf("over spans as long within an hour of it the base record departs from a straight line%s by %.2g nT RMS, up to %.2g nT", of, g.LineRMS, g.LineMax)
	}
	return fmt.Sprintf("bridged from %s to %s (%g s, %s; %s%s); %s", fmtGapTime(g.From), fmtGapTime(g.To), math.Round((g.To-g.From)*1e3)/1e3, what, plural(len(g.Rows), "reading"), groups, est)
}

// baseGapsDocument marks the groups whose readings fell in a base gap
// (their Problem, so that they are not counted sound), adds a finding per
// gap, and lists the gaps in the document's base-station correction.
func baseGapsDocument(doc *report.Document, sv *survey) {
	if len(sv.baseGaps) == 0 {
		return
	}
	byKey := map[string]*report.Group{}
	for i := range doc.Groups {
		byKey[doc.Groups[i].Key] = &doc.Groups[i]
	}
	for _, u := range sv.baseGaps {
		g := u.gap
		bg := report.BaseGap{Log: u.log, From: fmtGapTime(g.From), To: fmtGapTime(g.To), Seconds: math.Round((g.To-g.From)*1e3) / 1e3,
			Missing: g.Missing, BaseReadingsMissing: g.Absent, Readings: len(g.Rows)}
		if g.Spans > 0 {
			rms, worst := g.LineRMS, g.LineMax
			bg.LineErrorRMS, bg.LineErrorMax = &rms, &worst
		}
		f := report.Finding{Kind: BaseGapKind, Severity: report.SeverityCaution}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, k := range u.keys {
			gr := byKey[k]
			if gr == nil {
				continue
			}
			if k != "" {
				bg.Groups = append(bg.Groups, k)
			}
			f.Groups = append(f.Groups, k)
			if gr.Chainage != nil {
				lo, hi = math.Min(lo, *gr.Chainage), math.Max(hi, *gr.Chainage)
			}
			if len(f.Groups) == 1 {
				f.Position = gr.Centroid
				if len(gr.Sources) > 0 {
					f.Position = gr.Sources[0].Point
				}
			}
			why := fmt.Sprintf(baseGapMark+" %d of %d readings corrected by a straight line bridging %g s of the base record (%s missing; ", u.counts[k], u.total[k], bg.Seconds, plural(g.Absent, "base reading"))
			if g.Spans > 0 {
				why += fmt.Sprintf("its error about %.2g nT RMS, in no uncertainty)", g.LineRMS)
			} else {
				why += "its error in no uncertainty)"
			}
			why += ": review"
			if gr.Problem != "" {
				gr.Problem += "; "
			}
			gr.Problem += why
		}
		if !math.IsInf(lo, 0) {
			f.ChainageFrom, f.ChainageTo = lo, hi
		}
		f.Message = "base gap: " + u.describe() + "; the fits of these readings carry an error their uncertainties do not hold: review them, or give a base record without the gap"
		if len(f.Groups) > 0 {
			doc.Findings = append(doc.Findings, f)
		}
		if doc.BaseStation != nil {
			doc.BaseStation.BaseGaps = append(doc.BaseStation.BaseGaps, bg)
		}
	}
}

// fmtGapTime is a base time for messages and the result document: UTC
// RFC 3339 for absolute times (milliseconds only when not whole
// seconds), seconds for relative ones.
func fmtGapTime(t float64) string {
	s := fmtBaseTime(t)
	if strings.HasSuffix(s, ".000Z") {
		return strings.TrimSuffix(s, ".000Z") + "Z"
	}
	return s
}

// baseGapOnlyGroups counts the groups not sound only because their
// readings fell in a base gap (report.Document.BaseGapOnly): the crew
// report's table words the same groups "sound; marked for review".
func baseGapOnlyGroups(doc *report.Document) int {
	n := 0
	for i := range doc.Groups {
		if doc.BaseGapOnly(&doc.Groups[i]) {
			n++
		}
	}
	return n
}
