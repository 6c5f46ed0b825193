package live

import (
	"encoding/csv"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
)

// TestHistoryCSVChangeMissingSpikes: the CSV history carries what the
// JSON history says of a window beyond its mean currents: a change within
// the window (its time and size, each conductor's currents and sigmas
// before and after it and, for AC, their phases), the sensors left out or
// short of samples with why (where "saturated" lands), the spikes left
// out and the implausible reasons, and the AC frequency its phases refer
// to. Before, a window whose current stepped from 200 A to 100 A read as
// a steady 150 A row with nothing saying it changed, nor which sensor was
// left out. The columns come after the ones the history always had, which
// keep their places. The estimates are invented fixtures; what is checked
// is the project's own format (README), no outside value.
func TestHistoryCSVChangeMissingSpikes(t *testing.T) {
	pb, pa := 10.0, 12.5
	ests := []Estimate{
		{Asset: "a", Window: 7, Start: 70, End: 80, Mode: "ac", Frequency: 50.1, FrequencySigma: 0.0004,
			Conductors: []ConductorEstimate{{Name: "go", Current: 150, CurrentSigma: 0.01}, {Name: "return", Current: 149, CurrentSigma: 0.01}},
			Quality:    "partial", Sensors: 4,
			Missing:     map[string]string{"s5": "saturated", "s3": "131 of 500 samples"},
			Spikes:      map[string]int{"s2": 3},
			Implausible: []string{"first; reason", "second"},
			Change: &WindowChange{At: 75, Sigmas: 900, Conductors: []ChangeLevel{
				{Name: "go", Before: 200, BeforeSigma: 0.02, After: 100, AfterSigma: 0.03, PhaseBefore: &pb, PhaseAfter: &pa},
				{Name: "return", Before: 199, BeforeSigma: 0.02, After: 99, AfterSigma: 0.03}}}},
		{Asset: "a", Window: 8, Start: 80, End: 90, Mode: "dc",
			Conductors: []ConductorEstimate{{Name: "go", Current: 100, CurrentSigma: 0.01}}, Quality: "good", Sensors: 5},
	}
	rec := httptest.NewRecorder()
	writeEstimatesCSV(rec, ests)
	rows, err := csv.NewReader(strings.NewReader(rec.Body.String())).ReadAll()
	if err != nil || len(rows) != 4 {
		t.Fatalf("%v\n%s", err, rec.Body.String())
	}
	// The columns the history had before keep their places.
	before := []string{"asset", "window", "start", "end", "conductor", "current_a", "current_sigma_a", "phase_deg", "phase_sigma_deg", "rms_nt", "chi2", "dof", "quality", "sensors", "revision",
		"current_sigma_geometry_a", "phase_sigma_geometry_deg", "sigma_scale", "data_lost"}
	if len(rows[0]) < len(before) || !slices.Equal(rows[0][:len(before)], before) {
		t.Fatalf("header %v: the earlier columns moved", rows[0])
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	get := func(row int, name string) string {
		i, ok := col[name]
		if !ok {
			t.Fatalf("no column %s in %v", name, rows[0])
		}
		return rows[row][i]
	}
	want := []struct {
		row        int
		name, want string
	}{
		{1, "change_at", "75"}, {1, "change_sigmas", "900"},
		{1, "current_before_a", "200"}, {1, "current_before_sigma_a", "0.02"},
		{1, "current_after_a", "100"}, {1, "current_after_sigma_a", "0.03"},
		{1, "phase_before_deg", "10"}, {1, "phase_after_deg", "12.5"},
		{2, "change_at", "75"}, {2, "current_before_a", "199"}, {2, "current_after_a", "99"}, {2, "phase_before_deg", ""},
		{1, "missing", "s3: 131 of 500 samples; s5: saturated"}, {2, "missing", "s3: 131 of 500 samples; s5: saturated"},
		{1, "spikes", "s2: 3"}, {1, "implausible", "first; reason | second"},
		{1, "frequency_hz", "50.1"}, {1, "frequency_sigma_hz", "0.0004"},
		// A steady DC window leaves them empty.
		{3, "change_at", ""}, {3, "current_before_a", ""}, {3, "missing", ""}, {3, "spikes", ""}, {3, "implausible", ""}, {3, "frequency_hz", ""},
	}
	for _, w := range want {
		if got := get(w.row, w.name); got != w.want {
			t.Errorf("row %d, %s: %q, want %q", w.row, w.name, got, w.want)
		}
	}
}

// TestHistoryCSVTimesInFull: the history CSV gives window and change
// times in full. Written to ten significant digits, a change at Unix time
// 1796104830.5 came out as 1796104830, the start of its one-second window,
// while the JSON history said 1796104830.5. The estimate is an invented
// fixture; what is checked is the project's own format (README).
func TestHistoryCSVTimesInFull(t *testing.T) {
	ests := []Estimate{{Asset: "a", Window: 1796104830, Start: 1796104830, End: 1796104831.25, Mode: "dc",
		Conductors: []ConductorEstimate{{Name: "go", Current: 150, CurrentSigma: 0.01}}, Quality: "good", Sensors: 4,
		Change: &WindowChange{At: 1796104830.5, Sigmas: 900, Conductors: []ChangeLevel{{Name: "go", Before: 200, BeforeSigma: 0.02, After: 100, AfterSigma: 0.03}}}}}
	rec := httptest.NewRecorder()
	writeEstimatesCSV(rec, ests)
	rows, err := csv.NewReader(strings.NewReader(rec.Body.String())).ReadAll()
	if err != nil || len(rows) != 2 {
		t.Fatalf("%v\n%s", err, rec.Body.String())
	}
	for i, name := range rows[0] {
		want, ok := map[string]string{"start": "1796104830", "end": "1796104831.25", "change_at": "1796104830.5"}[name]
		if ok && rows[1][i] != want {
			t.Errorf("%s: %q, want %q", name, rows[1][i], want)
		}
	}
}
