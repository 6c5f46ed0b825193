package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// TestSimulateTotalPeak: simulate's summary gives, beside each core's own
// peak, the peak of a circuit's cores together. In review it printed
// "peak 16099 nT, 1610 times the noise" for each core of a balanced
// trefoil 1 m down, whose three cores together peak at 1451 nT: a crew
// planning a survey was told the circuit is eleven times easier to see
// than it is. The scenario is a balanced trefoil of 100 A cores at 0.94-
// 1.03 m (an invented site); the printed total is the simulator's
// PeakTotalFields, which TestPeakTotalFieldsTrefoil checks against the
// Biot-Savart law, and lies far below each core's own.
func TestSimulateTotalPeak(t *testing.T) {
	text := `name = "hollin-fold-trefoil"
site = "Hollin Fold, invented"
seed = 5
start = "2026-06-11T08:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 10.0
sample_rate_hz = 500
[survey]
route = [[0.0, 0.0], [12.0, 0.0]]
count = 2
spacing_m = 6.0
first_at_m = 3.0
length_m = 6.0
speed_m_s = 1.0
turn_s = 5.0
`
	for _, c := range []struct {
		name  string
		y, z  float64
		phase string
	}{{"L1", 0, -0.9423, "0.0"}, {"L2", -0.05, -1.0289, "-120.0"}, {"L3", 0.05, -1.0289, "120.0"}} {
		text += "[[conductor]]\nname = \"" + c.name + "\"\nkind = \"line\"\npoint = [0.0, " +
			strconv.FormatFloat(c.y, 'g', -1, 64) + ", " + strconv.FormatFloat(c.z, 'g', -1, 64) +
			"]\ndirection = [1.0, 0.0, 0.0]\ncurrent_a = 100\nfrequency_hz = 50.0\nphase_deg = " + c.phase + "\n"
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "trefoil.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	sc, err := simulate.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "simulate", path, "-o", filepath.Join(dir, "log.csv"))
	m := regexp.MustCompile(`all 3 conductors at 50 Hz together: peak 50 Hz field \(RMS\) ([0-9.]+) nT, ([0-9.]+) times the 10 nT reading noise`).FindStringSubmatch(out)
	if m == nil {
		t.Fatalf("simulate's summary gives no peak of the three cores together:\n%s", out)
	}
	total, _ := strconv.ParseFloat(m[1], 64)
	want := sc.PeakTotalFields()[0].Peak
	own := sc.PeakFields()[0]
	if total != float64(int(want+0.5)) || !(total < own/5) {
		t.Errorf("together %g nT printed, the simulator's %.1f nT (a core's own %.0f nT):\n%s", total, want, own, out)
	}
	if strings.Count(out, "together") != 1 {
		t.Errorf("want one total, for the one frequency the cores share:\n%s", out)
	}
}
