package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// TestSpinDriftNote: the Earth's field changing during a spin goes into
// the offsets (the z axis above all, which the spin tips from along the
// field to against it), and the standard errors, from the scatter of |B|
// about the fitted ellipsoid, do not see it: a 10-minute spin of the
// walk-through sensor in an ordinary daytime drift (5, 40, -30 nT/h, |F|
// changing about 42 nT/h) put its z offset several nT off, tens of its
// standard errors. The calibration must say so, with a bound that covers
// the simulated truth (the scenario's own offset).
func TestSpinDriftNote(t *testing.T) {
	sc, path := scenario(t, "kestrel-moor-spin.toml")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	for old, repl := range map[string]string{"drift_nt_per_hour = [-4.0, 25.0, 9.0]": "drift_nt_per_hour = [5.0, 40.0, -30.0]", "duration_s = 240.0": "duration_s = 600.0"} {
		if !strings.Contains(text, old) {
			t.Fatalf("kestrel-moor-spin.toml: no %q to replace", old)
		}
		text = strings.Replace(text, old, repl, 1)
	}
	dir := t.TempDir()
	toml := filepath.Join(dir, "spin.toml")
	if err := os.WriteFile(toml, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	spin := filepath.Join(dir, "spin.csv")
	mustCLI(t, "simulate", toml, "-o", spin)
	var cal calibrate.Calibration
	if err := json.Unmarshal([]byte(mustCLI(t, "calibrate", "--spin", spin, "--reference", "50095.4", "--json")), &cal); err != nil {
		t.Fatal(err)
	}
	re := regexp.MustCompile(`field's own change during the spin's ([0-9.]+) min is not in the standard errors.* up to about ([0-9.]+) nT`)
	var m []string
	for _, n := range cal.Notes {
		if m = re.FindStringSubmatch(n); m != nil {
			break
		}
	}
	if m == nil {
		t.Fatalf("no note of the field's change during the spin: %q", cal.Notes)
	}
	if mins, _ := strconv.ParseFloat(m[1], 64); math.Abs(mins-10) > 0.1 {
		t.Errorf("spin of %s min, the scenario's is 10", m[1])
	}
	bound, _ := strconv.ParseFloat(m[2], 64)
	for k := 0; k < 3; k++ {
		if d := math.Abs(cal.Offset[k] - sc.Sensor.Offset[k]); d > bound+3*cal.OffsetSigma[k] {
			t.Errorf("offset %c is %.2f nT off the scenario's, beyond the note's %.2g nT", "xyz"[k], d, bound)
		}
	}
}
