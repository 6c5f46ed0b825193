package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// objectBesideCableScenario is an invented survey: the demo's settings
// (31 traverses, 500 Hz, 4 nT noise) over one straight 42 A, 50 Hz cable
// 0.9 m down running 3 km either way, so that the infinite-line model is
// exact, and a steel object 0.6 m down 4.1 m beside it at the seventh
// traverse (its field 56 times the noise).
const objectBesideCableScenario = `name = "object-beside-cable"
site = "Copsey Drove (invented)"
seed = 1402
start = "2026-03-14T10:05:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 4.0
sample_rate_hz = 500.0
[survey]
pattern = "traverses"
route = [[0.0, 0.0], [150.0, 0.0]]
count = 31
spacing_m = 5.0
first_at_m = 0.0
length_m = 10.0
speed_m_s = 1.0
turn_s = 12.0
zigzag = true
[[conductor]]
name = "cable"
kind = "polyline"
vertices = [[-3000.0, 0.0, -0.9], [3000.0, 0.0, -0.9]]
currents_a = [42.0]
frequency_hz = 50.0
phase_deg = -25.0
[[conductor]]
name = "steel object"
kind = "dipole"
position = [29.67, 4.1, -0.60]
moment_a_m2 = [0.4, 0.25, -1.1]
frequency_hz = 50.0
phase_deg = -25.0
`

// TestObjectBesideStraightCableKept: the object is found at T07 and kept,
// its depth and the cable's refitted current against the simulated truth.
// On seeds 1 and 5 the search found it (depth 0.901 ± 0.0014 m below the
// sensors, true 0.9) and then dropped it, because the cable's refitted
// current, 41.997 A, differed from its neighbours' 42.003 A by 0.0063 A:
// 4.4 times the reading-noise sigmas, though 0.015% of the current (the
// neighbours read the tail of the object's field). T07 was then reported
// as a 41.58 A poor fit with no object. Seed 2 was always found.
func TestObjectBesideStraightCableKept(t *testing.T) {
	if testing.Short() {
		t.Skip("three 31-traverse AC surveys")
	}
	dir := t.TempDir()
	scen := filepath.Join(dir, "object.toml")
	if err := os.WriteFile(scen, []byte(objectBesideCableScenario), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, seed := range []string{"1", "5", "2"} {
		log := filepath.Join(dir, "object"+seed+".csv")
		mustCLI(t, "simulate", "--seed", seed, scen, "-o", log)
		doc := locateDoc(t, "--freq", "50", "--window", "0.1", "--group-by", "group", "--sensor-height", "0.3", log)
		var found int
		for _, f := range doc.Findings {
			if f.Kind == "poor-fit" && len(f.Groups) == 1 && f.Groups[0] == "T07" && f.Severity != "info" {
				t.Errorf("seed %s: %s", seed, f.Message)
			}
			if f.Kind != "dipole-anomaly" {
				continue
			}
			found++
			if len(f.Groups) != 1 || f.Groups[0] != "T07" {
				t.Errorf("seed %s: object at %v, want T07", seed, f.Groups)
			}
			for _, v := range f.Values {
				if v.Name == "depth below sensors" && !(math.Abs(v.Value-0.9) <= 4*v.Sigma) {
					t.Errorf("seed %s: object %.4f ± %.4f m below the sensors, true 0.9 m", seed, v.Value, v.Sigma)
				}
			}
		}
		if found != 1 {
			t.Errorf("seed %s: %d objects reported, want 1", seed, found)
		}
		for _, g := range doc.Groups {
			if g.Key != "T07" || len(g.Sources) == 0 {
				continue
			}
			// Within 0.05%: the cable's fits beside the object are
			// 0.015% off (the object's tail), its sigma 0.003%.
			if s := g.Sources[0]; math.Abs(math.Abs(s.Current)-42) > 42*5e-4 {
				t.Errorf("seed %s: T07 cable %.4f ± %.4f A, true 42 A", seed, s.Current, s.CurrentSigma)
			}
		}
		if seed == "1" {
			unresolvedNoteCount(t, dir, log, "T07")
		}
	}
}

// unresolvedNoteCount locates the readings of one group of log alone (no
// object search with one group) and checks that its note on lines the fit
// could not resolve counts the lines reported. On T07 of seed 1 the fit
// reports one line (two were passed over, their azimuth not resolved, and
// three refused), and the note read "the readings depart from the 2
// line(s) reported".
func unresolvedNoteCount(t *testing.T, dir, log, key string) {
	t.Helper()
	raw, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	var keep []string
	for i, l := range strings.Split(strings.TrimSpace(string(raw)), "\n") {
		if strings.HasPrefix(l, "#") || strings.HasPrefix(l, "time,") || strings.HasSuffix(l, ","+key) {
			keep = append(keep, l)
		} else if i < 10 && !strings.Contains(l, ",") {
			t.Fatalf("unexpected line %q", l)
		}
	}
	one := filepath.Join(dir, key+".csv")
	if err := os.WriteFile(one, []byte(strings.Join(keep, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	doc := locateDoc(t, "--freq", "50", "--window", "0.1", "--group-by", "group", "--sensor-height", "0.3", one)
	if len(doc.Groups) != 1 {
		t.Fatalf("%d groups, want 1", len(doc.Groups))
	}
	g := doc.Groups[0]
	var seen bool
	for _, n := range g.Notes {
		if !strings.Contains(n, "but not every current is resolved") {
			continue
		}
		seen = true
		want := fmt.Sprintf("depart from the %d line reported", len(g.Sources))
		if len(g.Sources) != 1 {
			want = fmt.Sprintf("depart from the %d lines reported", len(g.Sources))
		}
		if !strings.Contains(n, want) {
			t.Errorf("%s: %d line(s) fitted, note %q", key, len(g.Sources), n)
		}
	}
	if !seen {
		t.Errorf("%s alone: no note on unresolved lines (notes %q); the check has nothing to check", key, g.Notes)
	}
}
