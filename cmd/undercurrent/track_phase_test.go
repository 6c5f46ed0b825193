package main

import (
	"encoding/json"
	"fmt"
	"html"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestLocateFurtherConductorPhase: three 50 Hz circuits side by side
// (testdata/scenarios/open/three-circuits-ac.toml, the invented Orrin Quay:
// 40 A at 10°, 25 A at -110° read east, 6 A at 130°). Before, the
// further conductors' summaries in the terminal and report.html gave
// their currents with no phase and nothing of their relation to
// conductor 1, which for AC is the distinguishing result (found in
// review). Each further conductor's summary now gives its phase at its
// first and last station and its phase from conductor 1's; checked
// against the simulated truth (the scenario's phases less the 40 A
// feeder's, -120° and +120°) within 4 sigma, against results.json's
// phase_from_conductor_1_deg (the same value, to the digits printed) and
// against report.html (the same sentence).
func TestLocateFurtherConductorPhase(t *testing.T) {
	sc, path := scenario(t, filepath.Join("open", "three-circuits-ac.toml"))
	// The truth: each circuit's phase read along east (the scenario's
	// direction turned to east adds 180°), less the strongest one's.
	var ref float64
	var want []float64
	top := 0.0
	along := func(i int) float64 {
		c := sc.Conductors[i]
		p := c.Phase
		if c.Direction != nil && c.Direction[0] < 0 {
			p += 180
		}
		return p
	}
	for i, c := range sc.Conductors {
		if c.Current > top {
			top, ref = c.Current, along(i)
		}
	}
	for i, c := range sc.Conductors {
		if c.Current != top {
			want = append(want, math.Remainder(along(i)-ref, 360))
		}
	}
	dir := t.TempDir()
	log := filepath.Join(dir, "log.csv")
	res := filepath.Join(dir, "res")
	mustCLI(t, "simulate", path, "-o", log)
	out := mustCLI(t, "locate", "--group-by", "group", "--reference-z", "0", "--freq", "50", "-o", res, log)
	raw, err := os.ReadFile(filepath.Join(res, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Conductors []struct {
			Number     int      `json:"number"`
			Phase      *float64 `json:"phase_from_conductor_1_deg"`
			PhaseSigma *float64 `json:"phase_from_conductor_1_sigma_deg"`
		} `json:"conductors"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(res, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	text := html.UnescapeString(string(page))
	rel := regexp.MustCompile(`its phase (-?[0-9.]+) ± ([0-9.]+)° from conductor 1's`)
	at := regexp.MustCompile(`A ∠-?[0-9.]+ ± [0-9.]+° at T`)
	seen := 0
	for _, line := range strings.Split(out, "\n") {
		var n int
		if _, err := fmt.Sscanf(line, "Conductor %d was followed", &n); err != nil {
			continue
		}
		seen++
		if len(at.FindAllString(line, -1)) != 2 {
			t.Errorf("conductor %d: no phase at its first and last station: %s", n, line)
		}
		m := rel.FindStringSubmatch(line)
		if m == nil {
			t.Errorf("conductor %d: no phase from conductor 1: %s", n, line)
			continue
		}
		v, _ := strconv.ParseFloat(m[1], 64)
		s, _ := strconv.ParseFloat(m[2], 64)
		best := math.Inf(1)
		for _, w := range want {
			best = math.Min(best, math.Abs(math.Remainder(v-w, 360)))
		}
		if !(s > 0) || best > 4*s {
			t.Errorf("conductor %d: phase from conductor 1 %s ± %s°, truth one of %v", n, m[1], m[2], want)
		}
		found := false
		for _, c := range doc.Conductors {
			if c.Number == n && c.Phase != nil && c.PhaseSigma != nil {
				found = true
				if math.Abs(*c.Phase-v) > 0.5*math.Pow(10, -float64(len(m[1])-strings.Index(m[1], ".")-1)) {
					t.Errorf("conductor %d: printed %s°, results.json %g°", n, m[1], *c.Phase)
				}
			}
		}
		if !found {
			t.Errorf("conductor %d: results.json gives no phase_from_conductor_1_deg", n)
		}
		if !strings.Contains(text, m[0]) {
			t.Errorf("conductor %d: report.html lacks %q", n, m[0])
		}
	}
	if seen != len(want) {
		t.Errorf("%d further conductors summarised, want %d:\n%s", seen, len(want), out)
	}
}
