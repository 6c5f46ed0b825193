package main

import (
	"os"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/ingesttest"
)

// TestLocateBaseIAGAAllMissing: an IAGA-2002 base record whose H is 99999
// (the format's missing value) on every row of the survey's time was
// refused as having "fewer than two valid values in column bx", a column
// the file does not have. The refusal must name the file's own columns and
// say the others are missing values. The record is the real Boulder file
// bou20141101vmin.min (../shared/data/iaga2002, USGS via INTERMAGNET),
// cut to 10:00-10:10 UTC with its H column overwritten by 99999.00.
func TestLocateBaseIAGAAllMissing(t *testing.T) {
	data, err := os.ReadFile(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for _, ln := range strings.SplitAfter(string(data), "\n") {
		switch {
		case !strings.HasPrefix(ln, "2014-"):
			b.WriteString(ln)
		case ln[11:16] >= "10:00" && ln[11:16] <= "10:10":
			// DATE TIME DOY take 31 characters; H is the next ten.
			b.WriteString(ln[:31] + "  99999.00" + ln[41:])
		}
	}
	dir := t.TempDir()
	base := dir + "/bou-missing.min"
	if err := os.WriteFile(base, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	survey := dir + "/corvid.csv"
	writeZoneSurvey(t, survey, time.Date(2014, 11, 1, 10, 2, 0, 0, time.UTC), time.UTC, time.RFC3339)
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--base", base, "-o", dir+"/out", survey)
	if code == 0 {
		t.Fatal("a base record with no H was accepted")
	}
	for _, want := range []string{"bou-missing.min: 0 of its 11 rows", "BOUH, BOUD, BOUZ", "99999 or 88888", "without --base"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("the refusal lacks %q:\n%s", want, errOut)
		}
	}
	if strings.Contains(errOut, "column bx") {
		t.Errorf("the refusal names a column the file does not have:\n%s", errOut)
	}
}
