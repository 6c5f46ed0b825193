package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// writeZoneSurvey writes a one-traverse survey log of 60 readings, one a
// second from the UTC time t0, to path, its times written with layout in
// the zone loc (a layout without an offset leaves them as that zone's
// local times read as UTC); the field is about the Boulder observatory's
// (BOU20200101vsec.sec: H 20827 nT, Z 46875 nT down).
func writeZoneSurvey(t *testing.T, path string, t0 time.Time, loc *time.Location, layout string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,group\n")
	for i := 0; i < 60; i++ {
		ts := t0.Add(time.Duration(i) * time.Second).In(loc).Format(layout)
		fmt.Fprintf(&b, "%s,%.2f,0,1,%.2f,%.2f,%.2f,T01\n", ts, 0.5*float64(i),
			-80+3*math.Sin(float64(i)/5), 20826+5*math.Cos(float64(i)/7), -46874+2*math.Sin(float64(i)/3))
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// writeZoneBase writes the base record s as a CSV of its times (Unix
// seconds when layout is "", else text in layout, in loc) and field.
func writeZoneBase(t *testing.T, path string, s *ingest.Samples, loc *time.Location, layout string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i, v := range s.Time {
		ts := fmt.Sprintf("%.0f", v)
		if layout != "" {
			ts = time.Unix(int64(v), 0).In(loc).Format(layout)
		}
		fmt.Fprintf(&b, "%s,%.2f,%.2f,%.2f\n", ts, s.Bx[i], s.By[i], s.Bz[i])
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestZoneHintNamesTheLocalLog: a survey logged in Boulder's local civil
// time (MST, UTC-07:00, the zone's standard time in January: from memory)
// without its offset, against the real Boulder second file
// BOU20200101vsec.sec (../shared/data/iaga2002, USGS via INTERMAGNET),
// whose times are UTC by the IAGA-2002 format. The hint told the user to
// write +07:00 into the observatory's times: the wrong file and the wrong
// sign. It must name the survey, the zone UTC-07:00 and the survey's own
// time with that offset; with the base's times in seconds since 1970
// (UTC by definition) too, and never ask for an offset in them. With both
// logs' times written without an offset, either can be the local one:
// the hint names both.
func TestZoneHintNamesTheLocalLog(t *testing.T) {
	iaga := ingesttest.IAGAFile(t, "BOU20200101vsec.sec")
	bou, err := ingest.ReadSamples(iaga)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	mst := time.FixedZone("MST", -7*3600)
	t0 := time.Date(2020, 1, 1, 0, 0, 20, 0, time.UTC) // inside the file's 00:00-00:15 UTC
	survey := filepath.Join(dir, "corvid.csv")
	writeZoneSurvey(t, survey, t0, mst, "2006-01-02T15:04:05")
	epoch := filepath.Join(dir, "base-epoch.csv")
	writeZoneBase(t, epoch, bou, time.UTC, "")
	naive := filepath.Join(dir, "base-naive.csv")
	writeZoneBase(t, naive, bou, time.UTC, "2006-01-02T15:04:05")

	refused := func(base string) string {
		t.Helper()
		code, _, errOut := cli(t, "locate", "--json", "--group-by", "group", "--base", base, survey)
		if code == 0 {
			t.Fatalf("--base %s: a survey 7 h off the base record was accepted", base)
		}
		return errOut
	}
	for _, c := range []struct {
		base, why string
	}{
		{iaga, "IAGA-2002 file's times are UTC by the format"},
		{epoch, "seconds since 1970"},
	} {
		msg := refused(c.base)
		for _, want := range []string{"does not overlap", "corvid.csv's times the local times of a zone UTC-07:00", "2019-12-31T17:00:20-07:00", c.why} {
			if !strings.Contains(msg, want) {
				t.Errorf("--base %s: the error lacks %q:\n%s", filepath.Base(c.base), want, msg)
			}
		}
		// The base's times are UTC: no offset is to be written into them.
		if strings.Contains(msg, "+07:00") || strings.Contains(msg, "base record's times the local times") {
			t.Errorf("--base %s: the hint asks for an offset in the base's times:\n%s", filepath.Base(c.base), msg)
		}
	}
	msg := refused(naive)
	for _, want := range []string{"corvid.csv's times the local times of a zone UTC-07:00", "base record's times the local times of a zone UTC+07:00", "either"} {
		if !strings.Contains(msg, want) {
			t.Errorf("both logs without an offset: the error lacks %q:\n%s", want, msg)
		}
	}
}
