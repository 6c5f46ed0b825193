package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPositionSigmaRecorded: locate --position-sigma .2 (one value: both)
// records the values in results.json, as numbers in its settings ("0.2,0.2",
// as --sensor-height's are) and as position_sigma, and every output says
// the sigmas count the positions' uncertainty: results.json's
// uncertainty_note, report.html and the terminal's table. Before, the
// settings kept the flag as typed and every output said the reading noise
// only.
func TestPositionSigmaRecorded(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "line.csv")
	mustCLI(t, "simulate", "--seed", "3", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", log)
	out := filepath.Join(dir, "out")
	table := mustCLI(t, "locate", "--position-sigma", ".2", "--group-by", "group", "--count", "1", "-o", out, log)
	const with = "the reading noise and position uncertainty (0.2 m plan, 0.2 m height)"
	if !strings.Contains(table, "uncertainties count "+with) {
		t.Errorf("the terminal's table does not say what its uncertainties count:\n%s", table)
	}
	raw, err := os.ReadFile(filepath.Join(out, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Settings      map[string]string `json:"settings"`
		PositionSigma *struct {
			Plan float64 `json:"plan_m"`
			Up   float64 `json:"up_m"`
		} `json:"position_sigma"`
		Note string `json:"uncertainty_note"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	if got := doc.Settings["position-sigma"]; got != "0.2,0.2" {
		t.Errorf("results.json settings position-sigma %q, want \"0.2,0.2\"", got)
	}
	if p := doc.PositionSigma; p == nil || p.Plan != 0.2 || p.Up != 0.2 {
		t.Errorf("results.json position_sigma %+v, want 0.2 m plan and up", p)
	}
	if !strings.Contains(doc.Note, with) || strings.Contains(doc.Note, "reading noise only") {
		t.Errorf("results.json uncertainty_note: %s", doc.Note)
	}
	html, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(html), with) || strings.Contains(string(html), "reading noise only") {
		t.Errorf("report.html does not say the sigmas count %s, or still says the reading noise only", with)
	}
}
