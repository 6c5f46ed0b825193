package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestRobustCaveatInSummaryAndCSV: with --robust the sigmas are Huber's
// large-sample ones, and the caveat that they are approximate was only in
// results.json's notes and report.html. The terminal summary and every row
// of results.csv (column uncertainty_note) must carry it too, and neither
// may without --robust. Readings: the single-line scenario (simulated
// truth, testdata/scenarios/single-line.toml).
func TestRobustCaveatInSummaryAndCSV(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "line.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", log)
	for _, robust := range []bool{true, false} {
		out := filepath.Join(dir, map[bool]string{true: "robust", false: "plain"}[robust])
		args := []string{"locate", "--group-by", "group", "--reference-z", "0", "-o", out, log}
		if robust {
			args = append(args, "--robust")
		}
		summary := mustCLI(t, args...)
		if got := strings.Contains(summary, inverse.RobustNote); got != robust {
			t.Errorf("--robust %v: summary names the caveat %v, want %v:\n%s", robust, got, robust, summary)
		}
		f, err := os.Open(filepath.Join(out, "results.csv"))
		if err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(f).ReadAll()
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		col := -1
		for i, h := range rows[0] {
			if h == "uncertainty_note" {
				col = i
			}
		}
		if col < 0 {
			t.Fatalf("results.csv has no uncertainty_note column: %q", rows[0])
		}
		if len(rows) < 2 {
			t.Fatal("results.csv has no rows")
		}
		for _, r := range rows[1:] {
			want := ""
			if robust {
				want = inverse.RobustNote
			}
			if r[col] != want {
				t.Errorf("--robust %v: group %s uncertainty_note %q, want %q", robust, r[2], r[col], want)
			}
		}
	}
}
