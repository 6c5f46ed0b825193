package main

import (
	"fmt"
	"os"
	"slices"

	"undercurrent/ingest"
)

// A survey log given twice, or two logs holding the same readings (a log
// and its conversion to Parquet, both matched by "locate survey.*"), is
// fitted twice: every reading counts double, and every sigma comes out
// smaller by the square root of 2, without a sign. These checks refuse it,
// as a base log that holds a survey log's readings is refused.

// checkSurveyCopies refuses, before any log is read, a survey log named
// twice (the same file under one or two names) or two survey logs with
// the same content (the same size and SHA-256, as results.json records
// the inputs).
func checkSurveyCopies(logs []string) error {
	sums := map[int]string{}
	sum := func(i int) string {
		if s, ok := sums[i]; ok {
			return s
		}
		sums[i] = fileInput("survey", logs[i], 0).SHA256
		return sums[i]
	}
	for j := range logs {
		for i := range j {
			a, b := logs[i], logs[j]
			if sameFile(a, b) {
				return usageErrorf("the survey log %s is given twice (as %s and %s): its readings would be fitted twice, and every uncertainty would come out smaller by the square root of 2", a, a, b)
			}
			ai, err1 := os.Stat(a)
			bi, err2 := os.Stat(b)
			if err1 != nil || err2 != nil || ai.Size() != bi.Size() {
				continue
			}
			if sa := sum(i); sa != "" && sa == sum(j) {
				return usageErrorf("the survey logs %s and %s have the same content (SHA-256 %s): one is a copy of the other, whose readings would be fitted twice, and every uncertainty would come out smaller by the square root of 2; give one of them", a, b, sa[:12])
			}
		}
	}
	return nil
}

// surveyReadings keeps the times and field of the survey logs read so far,
// as read (before any correction), for checkSurveyRepeats.
type surveyReadings struct {
	logs []*ingest.Samples
}

// check refuses the survey log at path (s, as read) when it holds the
// readings of a log read before it, in either direction: at least a tenth
// of either log's readings (and 10 or more) are the other's, at the same
// time, with the same field within surveyMatchNT on all three axes and,
// when both logs have positions, at the same place within surveyMatchM
// on x, y and z (sharedReadings; checkBaseNotSurvey applies the test
// without positions to a base log). A log converted to another format, or
// cut into parts that overlap, is caught where the SHA-256 of
// checkSurveyCopies is not. The positions tell apart what the field and
// time alone do not: two sensors of one cart logging at the same times
// over a straight cable, or a flat field, read the same field to well
// within surveyMatchNT, as do two traverses logged in files of their own
// with the logger's clock restarting at 0. Then, when more is set, it
// keeps s's readings for the logs after it (more is false for the last
// log, and for induction-coil logs: voltages read as nT agree within
// surveyMatchNT whenever two coils log at the same times).
func (r *surveyReadings) check(path string, s *ingest.Samples, more bool) error {
	for _, p := range r.logs {
		// In either direction: a part of a log holds the readings of
		// the whole, and a tenth of the whole's are the part's.
		for _, c := range []struct {
			aPath, bPath string
			a, b         *ingest.Samples
		}{{p.Source, path, p, s}, {path, p.Source, s, p}} {
			same, first := sharedReadings(c.a, c.b, true)
			if !manyShared(same, c.a.Len()) {
				continue
			}
			what := fmt.Sprintf("the same time, position within %g cm on x, y and z, and field within %g nT on all three axes", surveyMatchM*100, surveyMatchNT)
			if p.X == nil || s.X == nil {
				what = fmt.Sprintf("the same time and field, within %g nT on all three axes", surveyMatchNT)
			}
			return fmt.Errorf("%s holds the readings of the survey log %s: %d of the %d readings of %s are readings of %s (%s, the first at %s): one is a copy or a conversion of the other, or they overlap, and those readings would be fitted twice, every uncertainty coming out smaller by the square root of 2; give each reading once (one of the two logs, or logs that do not overlap)",
				c.bPath, c.aPath, same, c.a.Len(), c.aPath, c.bPath, what, fmtBaseTime(c.b.Time[first]))
		}
	}
	if more {
		r.logs = append(r.logs, &ingest.Samples{
			Source: path, NoTime: s.NoTime,
			Time: slices.Clone(s.Time), Bx: slices.Clone(s.Bx), By: slices.Clone(s.By), Bz: slices.Clone(s.Bz),
			X: slices.Clone(s.X), Y: slices.Clone(s.Y), Z: slices.Clone(s.Z),
		})
	}
	return nil
}
