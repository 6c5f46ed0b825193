package calibrate

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
)

// A calibration file recorded only when it was written: a spin logged on
// 2024-01-10 and applied to a survey of 2026-04-21 drew no warning, and
// the summary read "calibration of 2026-12-05", newer than the survey
// (found in review). The file now records when its logs were taken
// (LogsTaken), the summary dates the calibration by them, and Check warns
// of a survey long after them, or before them.

func day(y int, m time.Month, d, h int) time.Time { return time.Date(y, m, d, h, 0, 0, 0, time.UTC) }

func takenCal(first, last time.Time) *Calibration {
	return &Calibration{
		Version: Version, Method: MethodEllipsoid, Created: day(2026, 12, 5, 9),
		Inputs:    []Input{{Role: "spin", File: "spin-old.csv", SHA256: strings.Repeat("0", 64), Samples: 2401}},
		Matrix:    identity3(),
		LogsTaken: &TimeSpan{First: first, Last: last},
	}
}

func TestSpanOf(t *testing.T) {
	t0 := float64(day(2024, 1, 10, 8).Unix())
	p := SpanOf([]float64{t0 + 240.5, t0, math.NaN()}, []float64{t0 + 60})
	if p == nil || !p.First.Equal(day(2024, 1, 10, 8)) || !p.Last.Equal(day(2024, 1, 10, 8).Add(241*time.Second)) {
		t.Errorf("SpanOf = %+v, want 2024-01-10 08:00:00 to 08:04:01", p)
	}
	// Times from the log's own start have no date; no times, no span.
	for name, ts := range map[string][]float64{"relative": {0, 1, 2}, "none": nil, "NaN": {math.NaN()}} {
		if p := SpanOf(ts); p != nil {
			t.Errorf("%s times: SpanOf = %+v, want nil", name, p)
		}
	}
}

func TestCheckTaken(t *testing.T) {
	spin := takenCal(day(2024, 1, 10, 8), day(2024, 1, 10, 9))
	for _, tc := range []struct {
		name        string
		first, last time.Time
		want        string // "" for no warning
	}{
		{"the review's survey, 27 months later", day(2026, 4, 21, 9), day(2026, 4, 21, 15), "the readings end 2026-04-21, 832 days after the calibration's logs (a spin of 2024-01-10), more than the 365 days"},
		{"eleven months later", day(2024, 12, 10, 9), day(2024, 12, 10, 15), ""},
		{"the same morning, before the spin", day(2024, 1, 10, 6), day(2024, 1, 10, 7), ""},
		{"the day before", day(2024, 1, 9, 7), day(2024, 1, 9, 16), ""},
		{"the survey ending two days before", day(2024, 1, 8, 7), day(2024, 1, 8, 7), "the readings end 2024-01-08, 2 days before"},
		{"a month before", day(2023, 12, 10, 9), day(2023, 12, 10, 15), "the readings end 2023-12-10, 30 days before the calibration's logs (a spin of 2024-01-10)"},
	} {
		w := spin.CheckTaken(tc.first, tc.last)
		switch {
		case tc.want == "" && len(w) > 0:
			t.Errorf("%s: warnings %q, want none", tc.name, w)
		case tc.want != "" && (len(w) != 1 || !strings.Contains(w[0], tc.want)):
			t.Errorf("%s: warnings %q, want one saying %q", tc.name, w, tc.want)
		}
	}
	// A file without logs_taken (logs without times, or written before
	// they were recorded) has nothing to compare.
	old := takenCal(time.Time{}, time.Time{})
	old.LogsTaken = nil
	if w := old.CheckTaken(day(2030, 1, 1, 0), day(2030, 1, 1, 1)); len(w) != 0 {
		t.Errorf("no logs_taken: warnings %q", w)
	}
}

// TestCheckWarnsOfOldCalibration: Check, which locate applies, compares
// the survey log's own times with the calibration's logs, naming the log.
func TestCheckWarnsOfOldCalibration(t *testing.T) {
	t0 := float64(day(2026, 4, 21, 9).Unix())
	s := &ingest.Samples{Source: "kestrel.csv", Time: []float64{t0, t0 + 1, t0 + 2}, Bx: []float64{17000, 17000, 17000}, By: []float64{0, 0, 0}, Bz: []float64{-46000, -46000, -46000}}
	w := takenCal(day(2024, 1, 10, 8), day(2024, 1, 10, 9)).Check(s)
	if len(w) != 1 || !strings.HasPrefix(w[0], "kestrel.csv: the readings end 2026-04-21, 832 days after") {
		t.Errorf("warnings %q, want one for the 832-day-old spin", w)
	}
	// A survey timed from its own start has no date to compare.
	s.Time = []float64{0, 1, 2}
	if w := takenCal(day(2024, 1, 10, 8), day(2024, 1, 10, 9)).Check(s); len(w) != 0 {
		t.Errorf("relative times: warnings %q", w)
	}
}

func TestSummaryDatesByLogs(t *testing.T) {
	c := takenCal(day(2024, 1, 10, 8), day(2024, 1, 10, 9))
	if got := c.Summary(); !strings.HasPrefix(got, "ellipsoid calibration from a spin of 2024-01-10, logged in spin-old.csv (sha256 000000000000)") || strings.Contains(got, "2026") {
		t.Errorf("summary %q: want it dated by the spin, 2024-01-10, not by the file (2026-12-05)", got)
	}
	flip := takenCal(day(2026, 4, 20, 23), day(2026, 4, 21, 1))
	flip.Method = MethodFlip
	if got := flip.Summary(); !strings.HasPrefix(got, "flip calibration from a flip pair of 2026-04-20 to 2026-04-21") {
		t.Errorf("summary %q", got)
	}
	c.LogsTaken = nil
	if got := c.Summary(); !strings.HasPrefix(got, "ellipsoid calibration of 2026-12-05 from spin-old.csv") {
		t.Errorf("without logs_taken: summary %q, want the file's date as before", got)
	}
}

// TestLogsTakenSavedAndLoaded: logs_taken survives Save and Load; a file
// without it (as written before) loads with none; a span whose last time
// precedes its first is refused.
func TestLogsTakenSavedAndLoaded(t *testing.T) {
	dir := t.TempDir()
	c := takenCal(day(2024, 1, 10, 8), day(2024, 1, 10, 9))
	p := filepath.Join(dir, "cal.json")
	if err := c.Save(p); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(data), `"logs_taken": {`) || !strings.Contains(string(data), `"first": "2024-01-10T08:00:00Z"`) {
		t.Errorf("saved file lacks logs_taken:\n%s", data)
	}
	back, err := Load(p)
	if err != nil || back.LogsTaken == nil || !back.LogsTaken.Last.Equal(day(2024, 1, 10, 9)) {
		t.Fatalf("Load: %v, logs_taken %+v", err, back)
	}
	c.LogsTaken = nil
	if err := c.Save(p); err != nil {
		t.Fatal(err)
	}
	if back, err := Load(p); err != nil || back.LogsTaken != nil {
		t.Errorf("file without logs_taken: %v, %+v", err, back)
	}
	bad := strings.Replace(string(data), `"first": "2024-01-10T08:00:00Z"`, `"first": "2024-01-11T08:00:00Z"`, 1)
	if err := os.WriteFile(p, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(p); err == nil || !strings.Contains(err.Error(), "logs_taken is 2024-01-11T08:00:00Z to 2024-01-10T09:00:00Z") {
		t.Errorf("last before first: err %v", err)
	}
}
