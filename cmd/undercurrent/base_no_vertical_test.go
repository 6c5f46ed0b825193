package main

import (
	"os"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/ingesttest"
)

// TestLocateBaseWithoutVertical: the real Boulder file BOU202005adj.min
// (../shared/data/iaga2002, USGS via INTERMAGNET) reports H and E only,
// its header "Reported HENULNUL" and its Z and F columns BOUNUL. As a
// base record it was refused as having "fewer than two valid values in
// column bz", a column the file does not have. The refusal must say the
// record reports no vertical component, quote the header, and say what
// will do (a record that reports Z, or no --base); no output is written.
func TestLocateBaseWithoutVertical(t *testing.T) {
	iaga := ingesttest.IAGAFile(t, "BOU202005adj.min")
	dir := t.TempDir()
	survey := dir + "/corvid-may.csv"
	// Inside the file's hour, 2020-05-20 16:15 to 17:14 UTC.
	writeZoneSurvey(t, survey, time.Date(2020, 5, 20, 16, 17, 0, 0, time.UTC), time.UTC, time.RFC3339)
	out := dir + "/out"
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--base", iaga, "-o", out, survey)
	if code == 0 {
		t.Fatal("a base record without Z was accepted")
	}
	for _, want := range []string{"BOU202005adj.min reports no vertical component", "Reported HENULNUL", "H and E only", "reports Z", "without --base"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("the refusal lacks %q:\n%s", want, errOut)
		}
	}
	if strings.Contains(errOut, "column bz") {
		t.Errorf("the refusal names a column the file does not have:\n%s", errOut)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("output written for a refused run")
	}
}
