package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/report"
)

// TestCompareCommand: the Kestrel Moor spur (testdata/scenarios/
// kestrel-moor-step.toml, invented) walked twice with nothing changed but
// the noise (seeds 250 and 7), each located as the README's walk-through
// does. compare matches every station by chainage, flags nothing, keeps
// the cautions in its table and its JSON, writes one CSV row per station
// and exits 0; surveys of different modes are refused (exit 1) naming both
// files and the modes; a directory without results.json and a wrong count
// of arguments are refused too.
func TestCompareCommand(t *testing.T) {
	if testing.Short() {
		t.Skip("locates two surveys")
	}
	_, path := scenario(t, "kestrel-moor-step.toml")
	dir := t.TempDir()
	p := func(n string) string { return filepath.Join(dir, n) }
	for _, w := range []struct{ seed, out string }{{"250", "r1"}, {"7", "r2"}} {
		mustCLI(t, "simulate", path, "--seed", w.seed, "-o", p(w.out+".csv"), "--base-log", p(w.out+"-base.csv"))
		mustCLI(t, "locate", "--base", p(w.out+"-base.csv"), "--group-by", "group", p(w.out+".csv"), "-o", p(w.out))
	}
	out := mustCLI(t, "compare", p("r1"), filepath.Join(p("r2"), "results.json"), "-o", p("changes.csv"))
	if !strings.Contains(out, "21 stations matched") || !strings.Contains(out, "No change beyond the thresholds.") {
		t.Errorf("compare of two walks of an unchanged pipe:\n%s", out)
	}
	for _, c := range report.Cautions {
		if !strings.Contains(out, c) {
			t.Errorf("the table lacks the caution %q", c)
		}
	}
	rows, err := csv.NewReader(strings.NewReader(readFile(t, p("changes.csv")))).ReadAll()
	if err != nil || len(rows) != 22 {
		t.Errorf("changes.csv: %v, %d rows, want a header and 21", err, len(rows))
	}
	// Written again over its own table; a file compare did not write is
	// not replaced.
	mustCLI(t, "compare", p("r1"), p("r2"), "-o", p("changes.csv"))
	if code, _, errOut := cli(t, "compare", p("r1"), p("r2"), "-o", p("r1.csv")); code != 2 || !strings.Contains(errOut, "not replaced") {
		t.Errorf("-o over a log: exit %d, %s", code, errOut)
	}
	js := mustCLI(t, "compare", "--json", p("r1"), p("r2"))
	var c report.Comparison
	if err := json.Unmarshal([]byte(js), &c); err != nil {
		t.Fatal(err)
	}
	if len(c.Cautions) != len(report.Cautions) || c.Matched != 21 || len(c.Changes) != 0 || c.Conductors[0].Ratio == nil || !c.Conductors[0].Ratio.Constant {
		t.Errorf("JSON: cautions %d, %d matched, changes %+v, ratio %+v", len(c.Cautions), c.Matched, c.Changes, c.Conductors[0].Ratio)
	}

	// Modes DC and AC: refused, naming both files.
	var doc map[string]any
	if err := json.Unmarshal([]byte(readFile(t, filepath.Join(p("r2"), "results.json"))), &doc); err != nil {
		t.Fatal(err)
	}
	doc["signal"] = map[string]any{"mode": "ac", "frequency_hz": 50.0, "window_s": 0.1}
	b, _ := json.Marshal(doc)
	ac := p("ac.json")
	if err := os.WriteFile(ac, b, 0o644); err != nil {
		t.Fatal(err)
	}
	code, stdout, errOut := cli(t, "compare", p("r1"), ac)
	if code != 1 || stdout != "" || !strings.Contains(errOut, filepath.Join(p("r1"), "results.json")) || !strings.Contains(errOut, ac) || !strings.Contains(errOut, "OLD is DC and NEW is AC") {
		t.Errorf("DC against AC: exit %d, stdout %q, stderr %s", code, stdout, errOut)
	}
	if code, _, errOut := cli(t, "compare", p("r1"), dir); code != 1 || !strings.Contains(errOut, "without results.json") {
		t.Errorf("a directory without results.json: exit %d, %s", code, errOut)
	}
	if code, _, _ := cli(t, "compare", p("r1")); code != 2 {
		t.Errorf("one argument: exit %d, want 2", code)
	}
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}
