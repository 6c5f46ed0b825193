package main

import (
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// A go-and-return pair losing current part-way along a short route. By
// Kirchhoff's current law the current that leaves the go core is the
// change of the pair's net current (the sum of the two cores' currents)
// along the route, which is what the route follows for a pair. The net
// current a traverse fits comes from the far field across the whole
// traverse, so the change spreads over several traverses; on routes of
// seven to nine traverses the between-station scatter was estimated from
// that spread step itself (0.36 A against fit sigmas of 0.004-0.03 A) and
// the 3 A loss was not reported on seed 1 of the DC circuit below (found
// on seeds 2 and 3 at ± 0.44 A) nor on any seed of the AC one
// (inverse/route/stepscatter.go).

// pairLossText is the invented Rookery Bank DC circuit: cores 0.3 m apart
// at 1.0 m, the go core carrying 10 A to north 27.5 m and 7 A beyond it
// (the leak), the return core -10 A, nine 8 m traverses every 5 m from
// north 5 m, 1 nT noise. With loss false the go core carries 10 A
// throughout (no fault).
func pairLossText(loss bool) string {
	goCore := `kind = "polyline"
vertices = [[-0.15, -200.0, -1.0], [-0.15, 27.5, -1.0], [-0.15, 250.0, -1.0]]
currents_a = [10.0, 7.0]`
	if !loss {
		goCore = `kind = "line"
point = [-0.15, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 10.0`
	}
	return `name = "pair-loss"
site = "Rookery Bank (invented)"
seed = 1
start = "2026-05-10T10:00:00Z"
[earth]
field_nt = [-300.0, 18000.0, -46000.0]
[sensor]
height_m = 0.3
noise_nt = 1.0
[survey]
route = [[0.0, 0.0], [0.0, 50.0]]
count = 9
spacing_m = 5.0
first_at_m = 5.0
length_m = 8.0
speed_m_s = 0.5
turn_s = 5.0
sample_spacing_m = 0.05
[[conductor]]
name = "go core"
` + goCore + `
[[conductor]]
name = "return core"
kind = "line"
point = [0.15, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = -10.0
`
}

// TestOpenPairLossShortRoute: the 3 A loss on nine traverses is one
// current step, its size within three sigma of the 3 A lost, bracketing
// the leak (chainage 22.5 m: north 27.5 m less the first traverse's 5 m),
// on seeds 1-3; the same circuit without the leak (net current 0 A all
// along) gives no step or anomaly.
func TestOpenPairLossShortRoute(t *testing.T) {
	for seed := 1; seed <= 3; seed++ {
		doc := openLocate(t, "pair-loss.toml", seed, pairLossText(true))
		st := stepFindings(doc)
		if len(st) != 1 || st[0].Kind != "current-step" {
			t.Errorf("seed %d: want one current step, got %+v", seed, st)
			continue
		}
		v := st[0].Values[0]
		t.Logf("seed %d: %s", seed, st[0].Message)
		if math.Abs(math.Abs(v.Value)-3) > 3*v.Sigma {
			t.Errorf("seed %d: step %.3f ± %.3f A, want 3 A lost", seed, v.Value, v.Sigma)
		}
		if st[0].From > 22.5 || st[0].To < 22.5 {
			t.Errorf("seed %d: step between %.1f and %.1f m, want it to bracket 22.5 m", seed, st[0].From, st[0].To)
		}
		doc = openLocate(t, "pair-noloss.toml", seed, pairLossText(false))
		for _, f := range stepFindings(doc) {
			t.Errorf("seed %d without the leak: %s %s", seed, f.Kind, f.Message)
		}
	}
}

// TestOpenACPairLossAtTraverse: testdata/scenarios/open/ac-pair-net1A.toml
// with the go core dropping from 10 A to 7 A at a traverse (north 20 m,
// chainage 15 m) and 7 A back: the net current falls from 3 A to 0 over
// seven traverses, and the 3 A loss is reported within three sigma on
// seeds 1-3 (before, "findings: none").
func TestOpenACPairLossAtTraverse(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "open", "ac-pair-net1A.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), `kind = "line"
point = [-0.15, 0.0, -1.5]
direction = [0.0, 1.0, 0.0]
current_a = 10.0`, `kind = "polyline"
vertices = [[-0.15, -200.0, -1.5], [-0.15, 20.0, -1.5], [-0.15, 250.0, -1.5]]
currents_a = [10.0, 7.0]`, 1)
	text = strings.Replace(text, "current_a = -9.0", "current_a = -7.0", 1)
	if strings.Count(text, "currents_a = [10.0, 7.0]") != 1 || strings.Contains(text, "-9.0") {
		t.Fatal("ac-pair-net1A.toml no longer has the go core and return core this test edits")
	}
	for seed := 1; seed <= 3; seed++ {
		dir := t.TempDir()
		path := filepath.Join(dir, "ac-pair-loss.toml")
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		log := filepath.Join(dir, "log.csv")
		mustCLI(t, "simulate", "--seed", strconv.Itoa(seed), path, "-o", log)
		doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
		st := stepFindings(doc)
		if len(st) != 1 || st[0].Kind != "current-step" {
			t.Errorf("seed %d: want one current step, got %+v", seed, st)
			continue
		}
		v := st[0].Values[0]
		t.Logf("seed %d: %s", seed, st[0].Message)
		if math.Abs(math.Abs(v.Value)-3) > 3*v.Sigma {
			t.Errorf("seed %d: step %.3f ± %.3f A, want 3 A lost", seed, v.Value, v.Sigma)
		}
	}
}
