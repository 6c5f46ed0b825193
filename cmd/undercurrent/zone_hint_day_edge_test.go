package main

import (
	"testing"
	"time"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// TestZoneHintNotForMissingDays: found in review, a walk from 21:30 to
// 01:58 UTC given only the first day's file (bou20141101vmin.min,
// ../shared/data/iaga2002, USGS via INTERMAGNET) was rightly refused, but
// the hint then said the survey logger was on UTC+02:00, though 57% of the
// walk lay inside the record and any shift from 2 to about 20 h would have
// covered it. No zone hint when the logs overlap in part, when the survey
// runs past a day file's end at 00:00 UTC, or when shifts hours apart
// would all do (a survey the day before a day file); a record an hour off
// a short survey still draws one.
func TestZoneHintNotForMissingDays(t *testing.T) {
	day, err := ingest.ReadSamples(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	at := func(s string) float64 {
		v, err := time.Parse(time.RFC3339, s)
		if err != nil {
			t.Fatal(err)
		}
		return float64(v.Unix())
	}
	rover := func(a, b string) *ingest.Samples {
		return &ingest.Samples{Time: []float64{at(a), at(b)}, Source: "walk.csv"}
	}
	for _, c := range []struct {
		name  string
		base  *ingest.Samples
		rover *ingest.Samples
	}{
		{"across midnight, the first day only", day, rover("2014-11-01T21:30:00Z", "2014-11-02T01:58:00Z")},
		{"the next day, past the file's end", day, rover("2014-11-02T00:10:00Z", "2014-11-02T02:00:00Z")},
		{"the day before, before the file's start", day, rover("2014-10-31T22:00:00Z", "2014-10-31T23:30:00Z")},
		{"many offsets would do", &ingest.Samples{Time: []float64{at("2014-11-01T06:00:00Z"), at("2014-11-02T05:59:00Z")}, NaiveTime: true},
			rover("2014-11-02T07:00:00Z", "2014-11-02T08:00:00Z")},
	} {
		if h := zoneShiftHint(c.base, c.rover); h != "" {
			t.Errorf("%s: zone hint %q", c.name, h)
		}
	}
	// A base log of an hour, an hour late, and a survey of ten minutes:
	// one zone.
	base := &ingest.Samples{Time: []float64{at("2014-11-01T14:00:00Z"), at("2014-11-01T15:00:00Z")}, NaiveTime: true}
	if h := zoneShiftHint(base, rover("2014-11-01T13:20:00Z", "2014-11-01T13:30:00Z")); h == "" {
		t.Error("a base record an hour late drew no zone hint")
	}
}
