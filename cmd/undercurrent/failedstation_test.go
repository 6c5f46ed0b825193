package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// weakPipe is a 0.25 A DC pipe 1.5 m down, under eleven 8 m traverses with
// 20 nT readings (an invented site): about 4 sigmas of current per
// traverse, so that two traverses of this seed (T01, T10) find no
// significant current and their lines are fitted where they mean nothing.
const weakPipe = `name = "weak-pipe"
site = "Wetherby Carr (invented)"
seed = 1
start = "2026-05-10T09:00:00Z"
[earth]
field_nt = [-300.0, 18000.0, -46000.0]
[sensor]
height_m = 0.3
noise_nt = 20
[survey]
route = [[0.0, 0.0], [100.0, 0.0]]
count = 11
spacing_m = 5.0
first_at_m = 0.0
length_m = 8
speed_m_s = 0.5
sample_spacing_m = 0.05
turn_s = 10.0
[[conductor]]
name = "line"
kind = "line"
point = [0.0, 0.4, -1.5]
direction = [1.0, 0.0, 0.0]
current_a = 0.25
`

// TestLocateFailedStationKeepsOut: a traverse whose fit found no current
// neither places nor orients the route. Before, its meaningless fitted
// point started the route's chain: the traverse 20 m along took chainage
// 0, the next station's current was turned to -0.86 A, and a "current
// rises by 1.880 A" was reported on a constant 1 A pipe. The chainages
// must follow the traverses, every sound current must be the pipe's
// 0.25 A (within four sigmas) and no step reported.
func TestLocateFailedStationKeepsOut(t *testing.T) {
	log := simulateText(t, t.TempDir(), "weak", weakPipe, ".csv")
	doc := locateDoc(t, "--group-by", "group", "--reference-z", "0", log)
	failed := 0
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) == 0 {
			failed++
			continue
		}
		s := g.Sources[0]
		if math.Abs(s.Current-0.25) > kSigma*s.CurrentSigma {
			t.Errorf("%s: %.4g ± %.2g A, want the pipe's 0.25 A", g.Key, s.Current, s.CurrentSigma)
		}
	}
	if failed == 0 {
		t.Fatal("no traverse failed: the scenario no longer tests a failed station")
	}
	// Traverses T01.. lie every 5 m along the pipe, in order.
	for i, g := range doc.Groups {
		want := 5 * float64(i)
		if g.Chainage == nil {
			t.Errorf("%s: no chainage", g.Key)
		} else if math.Abs(*g.Chainage-want) > 0.5 {
			t.Errorf("%s: chainage %.3g m, want about %g m", g.Key, *g.Chainage, want)
		}
	}
	for _, f := range doc.Findings {
		if strings.Contains(f.Message, "current rises") || strings.Contains(f.Message, "current falls") || f.Kind == "current-step" {
			t.Errorf("false finding: %s", f.Message)
		}
	}
}

// simulateText writes the scenario text as dir/name.toml, simulates it into
// dir/name+ext with the CLI and returns the log's path.
func simulateText(t *testing.T, dir, name, text, ext string) string {
	t.Helper()
	scen := filepath.Join(dir, name+".toml")
	if err := os.WriteFile(scen, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, name+ext)
	mustCLI(t, "simulate", scen, "-o", log)
	return log
}

// spinLog simulates the walk-through's spin (kestrel-moor-spin.toml) into
// dir/spin.csv and returns its path.
func spinLog(t *testing.T, dir string) string {
	t.Helper()
	_, path := scenario(t, "kestrel-moor-spin.toml")
	spin := filepath.Join(dir, "spin.csv")
	mustCLI(t, "simulate", path, "-o", spin)
	return spin
}
