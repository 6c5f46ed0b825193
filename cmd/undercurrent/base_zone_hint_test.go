package main

import (
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// rewriteBaseTimes writes the simulated base log at src to dst with its
// Unix-second times written as ISO 8601 without a UTC offset, shifted by
// shift (a zone's local time: UTC+01:00 is +1 h).
func rewriteBaseTimes(t *testing.T, src, dst string, shift time.Duration) {
	t.Helper()
	data, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, line := range strings.Split(strings.TrimRight(string(data), "\n"), "\n") {
		if strings.HasPrefix(line, "#") || strings.HasPrefix(line, "time,") {
			out = append(out, line)
			continue
		}
		f := strings.SplitN(line, ",", 2)
		sec, err := strconv.ParseFloat(f[0], 64)
		if err != nil {
			t.Fatalf("%s: time %q", src, f[0])
		}
		ts := time.Unix(int64(math.Round(sec)), 0).UTC().Add(shift).Format("2006-01-02T15:04:05")
		out = append(out, ts+","+f[1])
	}
	if err := os.WriteFile(dst, []byte(strings.Join(out, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestBaseTimeZoneHints: a base log whose times give no UTC offset. Its
// warning told the user to give "--unit time=UTC", which applies to the
// survey logs only, so the warning stayed; it must name --base-unit. The
// same base in local time of UTC+01:00 (the simulated times moved by the
// one hour a zone puts in) was refused as not overlapping, with no word
// of a zone; the error must say that an hour earlier it would cover the
// survey, and name the zone.
func TestBaseTimeZoneHints(t *testing.T) {
	_, sc := scenario(t, "kestrel-moor-step.toml")
	dir := t.TempDir()
	survey, base := filepath.Join(dir, "survey.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", sc, "-o", survey, "--base-log", base)
	utc, local := filepath.Join(dir, "base-utc.csv"), filepath.Join(dir, "base-local.csv")
	rewriteBaseTimes(t, base, utc, 0)
	rewriteBaseTimes(t, base, local, time.Hour)

	doc := locateGrouped(t, "--base", utc, survey)
	found := false
	for _, w := range doc.Warnings {
		if strings.Contains(w, "give no UTC offset") && strings.Contains(w, "base-utc.csv") {
			found = true
			if !strings.Contains(w, "--base-unit time=UTC") || strings.Contains(w, " --unit time=UTC") {
				t.Errorf("the base log's warning names the survey's flag: %q", w)
			}
		}
	}
	if !found {
		t.Errorf("no warning of the base's times without a UTC offset: %q", doc.Warnings)
	}
	// The flag it names silences it.
	doc = locateGrouped(t, "--base", utc, "--base-unit", "time=UTC", survey)
	if containsAll(doc.Warnings, "give no UTC offset") {
		t.Errorf("--base-unit time=UTC given: %q", doc.Warnings)
	}

	code, _, errOut := cli(t, "locate", "--json", "--group-by", "group", "--base", local, survey)
	if code == 0 {
		t.Fatal("a base record an hour off the survey was accepted")
	}
	for _, want := range []string{"does not overlap", "1 h earlier", "UTC+01:00"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("error lacks %q:\n%s", want, errOut)
		}
	}
}
