package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"testing"
)

// TestNoiseFreeLogLocated: a log with no noise and no drift (the
// single-line scenario with both set to zero, simulated Biot-Savart truth:
// 25 A at 1.1 m) is located, every traverse at 25 A with no finding.
// Its fits give current sigmas of exactly zero; when the route refused a
// zero sigma, locate failed on it ("station 0 ("T01"): current sigma is
// 0", found in regression review), with no option to give one.
func TestNoiseFreeLogLocated(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := regexp.MustCompile(`(?m)^noise_nt = .*$`).ReplaceAllString(string(b), "noise_nt = 0")
	text = regexp.MustCompile(`(?m)^drift_nt_per_hour = .*$`).ReplaceAllString(text, "drift_nt_per_hour = [0.0, 0.0, 0.0]")
	doc := openLocate(t, "single-line.toml", 1, text)
	if len(doc.Groups) != 7 {
		t.Fatalf("%d groups, want 7", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) == 0 || math.Abs(math.Abs(g.Sources[0].Current)-25) > 1e-3 {
			t.Errorf("%s: ok %v, sources %+v; want 25 A", g.Key, g.OK, g.Sources)
		}
	}
	for _, f := range doc.Findings {
		t.Errorf("finding on a noise-free log of a steady line: %s", f.Message)
	}
}
