package main

import (
	"encoding/json"
	"html"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/report"
)

// A traverse whose readings fell in a gap of the base record, bridged by a
// straight line (--base-hold), fits as well as its neighbours: the
// terminal counts it "marked for a base gap", not among the poor or
// ambiguous fits, and the crew report's table words its Fit cell the same
// way, "sound; marked for review". The survey and its base log are the
// simulated Kestrel Moor survey (testdata/scenarios/kestrel-moor-step.toml);
// 90 s of base readings in the middle of traverse T09 are dropped. Before,
// the table called every group with a problem "poor or ambiguous, used with
// care", so the report called two fits poor that the terminal said were
// not.
func TestBaseGapGroupSoundInReportTable(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	s, err := ingest.ReadSamples(survey)
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := 0.0, 0.0
	for i := range s.Len() {
		if s.Group[i] != "T09" {
			continue
		}
		if lo == 0 || s.Time[i] < lo {
			lo = s.Time[i]
		}
		hi = max(hi, s.Time[i])
	}
	if hi <= lo {
		t.Fatal("no readings of T09: the scenario has changed")
	}
	mid := (lo + hi) / 2
	gapped := filepath.Join(dir, "base-gap.csv")
	writeBaseCSV(t, gapped, base, 1, func(i int) bool { return base.Time[i] < mid-45 || base.Time[i] > mid+45 })
	out := filepath.Join(dir, "out")
	term := mustCLI(t, "locate", "--group-by", "group", "--base", gapped, "--base-hold", "120", survey, "-o", out)

	m := regexp.MustCompile(`(\d+) sound, (\d+) poor or ambiguous, (\d+) marked for a base gap`).FindStringSubmatch(term)
	if m == nil {
		t.Fatalf("terminal summary without a base-gap count:\n%.600s", term)
	}
	poor, _ := strconv.Atoi(m[2])
	marked, _ := strconv.Atoi(m[3])
	if marked == 0 {
		t.Fatalf("no group marked for a base gap: %s", m[0])
	}

	raw, err := os.ReadFile(filepath.Join(out, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc report.Document
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	// The Fit cell of each row of the "Every group" table.
	cells := map[string]string{}
	for _, r := range regexp.MustCompile(`<tr[^>]*><th scope="row" class="stick">([^<]*)</th>.*?<td class="fit">(.*?)</td></tr>`).FindAllStringSubmatch(string(page), -1) {
		cells[html.UnescapeString(r[1])] = html.UnescapeString(r[2])
	}
	if len(cells) != len(doc.Groups) {
		t.Fatalf("%d rows in the table of groups, want %d", len(cells), len(doc.Groups))
	}
	soundMarked, poorRows := 0, 0
	for _, g := range doc.Groups {
		cell := cells[g.Key]
		if strings.Contains(cell, "poor or ambiguous") {
			poorRows++
		}
		if !strings.HasPrefix(g.Problem, report.BaseGapMark) {
			continue
		}
		// The fit itself is not called poor: no poor-fit finding names it.
		for _, f := range doc.Findings {
			if f.Kind == "poor-fit" && f.Severity != report.SeverityInfo && strings.Contains(","+strings.Join(f.Groups, ",")+",", ","+g.Key+",") {
				t.Errorf("%s: a poor-fit finding %q: the gap was meant to fall on a well-fitting traverse", g.Key, f.Message)
			}
		}
		if !strings.Contains(cell, "sound; marked for review") || strings.Contains(cell, "poor or ambiguous") {
			t.Errorf("%s (marked for a base gap, fit sound): Fit cell %q, want it worded sound and marked for review", g.Key, cell)
		}
		soundMarked++
	}
	if soundMarked != marked {
		t.Errorf("%d groups worded sound and marked for review in report.html, the terminal counts %d marked for a base gap", soundMarked, marked)
	}
	if poorRows != poor {
		t.Errorf("%d rows poor or ambiguous in report.html, the terminal counts %d", poorRows, poor)
	}
}
