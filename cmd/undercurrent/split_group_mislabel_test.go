package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSplitGroupNamesMislabel: the Kestrel Moor step scenario
// (testdata/scenarios/kestrel-moor-step.toml: traverses every 20 m along
// a gas spur, simulated truth) with traverse T14's rows relabelled T13 is
// fitted with an alert naming T13, its two places 20 m apart and the
// likely mislabel; the log as simulated draws no such alert. Before, the
// merged group was fitted as one poor traverse whose stated causes (a
// tee, a bend, drift) left out the label (found in review).
func TestSplitGroupNamesMislabel(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "kes.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "kestrel-moor-step.toml"), "-o", log)
	b, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), ",T14\n") {
		t.Fatal("the scenario has no traverse T14")
	}
	merged := filepath.Join(dir, "kes-merge.csv")
	if err := os.WriteFile(merged, []byte(strings.ReplaceAll(string(b), ",T14\n", ",T13\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "locate", "--group-by", "group", "--reference-z", "0", merged)
	var alert string
	for _, l := range strings.Split(out, "\n") {
		if strings.Contains(l, "mislabel") {
			alert = l
		}
	}
	if !strings.Contains(alert, "T13 holds") || !strings.Contains(alert, "2 places") {
		t.Fatalf("no alert naming T13's two places and the mislabel in:\n%s", out)
	}
	// The traverses are 20 m apart (the scenario's spacing).
	if !strings.Contains(alert, "20.0 m apart") && !strings.Contains(alert, "19.9 m apart") && !strings.Contains(alert, "20.1 m apart") {
		t.Errorf("alert %q: want the places about 20 m apart", alert)
	}
	if out := mustCLI(t, "locate", "--group-by", "group", "--reference-z", "0", log); strings.Contains(out, "mislabel") {
		t.Errorf("the log as simulated draws a mislabel alert:\n%s", out)
	}
}

// TestGroupPlaces: positions of one traverse walked out and back, and one
// with a gap in it along its line, are one place (or in line, not side by
// side); two traverses 5 m apart, each walked at 0.1 m a reading, are two.
func TestGroupPlaces(t *testing.T) {
	line := func(e0, n0, n1 float64, step float64) [][3]float64 {
		var p [][3]float64
		if n1 >= n0 {
			for n := n0; n <= n1; n += step {
				p = append(p, [3]float64{e0, n, 0.3})
			}
		} else {
			for n := n0; n >= n1; n -= step {
				p = append(p, [3]float64{e0, n, 0.3})
			}
		}
		return p
	}
	outBack := append(line(0, -5, 5, 0.1), line(0.2, 5, -5, 0.1)...)
	if p, _ := groupPlaces(outBack); p != nil {
		t.Errorf("out and back: %d places, want one", len(p))
	}
	gap := append(line(0, -5, -1, 0.1), line(0, 3, 7, 0.1)...)
	p, _ := groupPlaces(gap)
	if len(p) != 2 {
		t.Fatalf("gap along the line: %d places, want 2 (in line)", len(p))
	}
	sv := &survey{groups: []*group{{key: "T01", points: gap}}}
	if w := splitGroupsWarning(sv); w != "" {
		t.Errorf("a gap along the line drew %q", w)
	}
	two := append(line(0, -5, 5, 0.1), line(5, 5, -5, 0.1)...)
	sv = &survey{groups: []*group{{key: "T02", points: two}}}
	if w := splitGroupsWarning(sv); !strings.Contains(w, "T02 holds 202 readings in 2 places up to 5.0 m apart") {
		t.Errorf("two traverses 5 m apart: warning %q", w)
	}
}
