package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// TestCalibrationRecordsWhenLogsTaken: a spin logged two years before a
// survey was applied to it without a warning, and the results dated the
// calibration by the file's write date, newer than the survey (found in
// review). calibrate now records the spin's time span (logs_taken),
// --show prints it, and locate warns of the two-year-old spin and dates
// the calibration by it in results.json.
func TestCalibrationRecordsWhenLogsTaken(t *testing.T) {
	dir := t.TempDir()
	survey := simulatedLog(t, dir, "line.csv")
	s, err := ingest.ReadSamples(survey)
	if err != nil {
		t.Fatal(err)
	}
	span := calibrate.SpanOf(s.Time)
	if span == nil {
		t.Fatal("the simulated survey has no absolute times")
	}
	// The spin, two years (730 days) before the survey, one reading a
	// second.
	spinAt := span.First.AddDate(-2, 0, 0)
	spin := filepath.Join(dir, "spin.csv")
	writeSpinLog(t, spin, [3]float64{0, 0, 0}, nil)
	data, err := os.ReadFile(spin)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	for i := 1; i < len(lines); i++ {
		_, rest, _ := strings.Cut(lines[i], ",")
		lines[i] = fmt.Sprintf("%d,%s", spinAt.Unix()+int64(i-1), rest)
	}
	if err := os.WriteFile(spin, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cal := filepath.Join(dir, "cal.json")
	if code, _, errOut := runCmd("calibrate", "--spin", spin, "--reference", "49850", "-o", cal); code != 0 {
		t.Fatalf("calibrate: exit %d: %s", code, errOut)
	}
	c, err := calibrate.Load(cal)
	if err != nil {
		t.Fatal(err)
	}
	last := spinAt.Add(time.Duration(len(lines)-2) * time.Second)
	if c.LogsTaken == nil || !c.LogsTaken.First.Equal(spinAt) || !c.LogsTaken.Last.Equal(last) {
		t.Fatalf("logs_taken %+v, want %s to %s", c.LogsTaken, spinAt, last)
	}
	_, out, _ := runCmd("calibrate", "--show", cal)
	if want := "logs taken  " + spinAt.Format("2006-01-02 15:04:05Z") + " to " + last.Format("2006-01-02 15:04:05Z"); !strings.Contains(out, want) {
		t.Errorf("--show lacks %q:\n%s", want, out)
	}
	res := filepath.Join(dir, "res")
	mustCLI(t, "locate", "--group-by", "group", "--calibration", cal, survey, "-o", res)
	raw, err := os.ReadFile(filepath.Join(res, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Warnings    []string `json:"warnings"`
		Calibration struct {
			Summary string `json:"summary"`
		} `json:"calibration"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	if !containsAll(doc.Warnings, "after the calibration's logs (a spin of "+spinAt.Format("2006-01-02")+"), more than the 365 days") {
		t.Errorf("no warning of the two-year-old spin: %q", doc.Warnings)
	}
	if want := "ellipsoid calibration from a spin of " + spinAt.Format("2006-01-02"); !strings.HasPrefix(doc.Calibration.Summary, want) {
		t.Errorf("calibration summary %q, want it to begin %q", doc.Calibration.Summary, want)
	}
}
