package simulate

import (
	"math"
	"strings"
	"testing"
)

// plantRoom is a DC busbar running north through a plant room, 0.8 m below
// the local datum, with fixed sensors where a plant room has them: two on a
// lower tray below the bar, one on the wall level with it, one above it and
// one turned on a bracket beside it (the heights of the reviewer's plant
// room site). No Earth field and no noise, so each reading is the bar's
// field alone.
const plantRoom = `
start = "2026-12-01T06:00:00Z"
[sensor]
sample_rate_hz = 10
[survey]
pattern = "fixed"
duration_s = 1
[[survey.sensor]]
name = "t1"
position = [1.0, 0.5, -1.3]
[[survey.sensor]]
name = "t2"
position = [-0.9, -0.8, -1.25]
[[survey.sensor]]
name = "wall"
position = [-0.6, 0.0, -0.8]
[[survey.sensor]]
name = "w2"
position = [0.0, 0.0, -0.35]
[[survey.sensor]]
name = "bracket"
position = [0.25, 2.0, -0.7]
orientation = [90.0, 0.0, 0.0]
[[conductor]]
name = "bar"
kind = "line"
point = [0.0, 0.0, -0.8]
direction = [0.0, 1.0, 0.0]
current_a = 400
`

// TestFixedSensorsAroundBar checks that fixed sensors below, level with and
// above a conductor are simulated, each reading matching the field of an
// infinite straight wire computed here from the handbook formula,
// B = mu0 I / (2 pi rho) along u x rho-hat (Biot-Savart law for an infinite
// line: Jackson, Classical Electrodynamics, 3rd ed., eq. 5.10), with mu0
// from CODATA 2022 (NIST). Before the fix the scenario was refused: "the
// source reaches up to -0.8 m, not below the sensor height -1.3 m".
func TestFixedSensorsAroundBar(t *testing.T) {
	sc, err := Parse([]byte(plantRoom), "plant.toml")
	if err != nil {
		t.Fatalf("a bar above two fixed sensors and beside others: %v", err)
	}
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	const (
		mu0 = 1.25663706127e-6 // T m / A, CODATA 2022 (NIST)
		cur = 400.0            // A, along +north
		bx  = 0.0              // the bar's east and up, m
		bz  = -0.8
	)
	pos := map[string][3]float64{
		"t1": {1.0, 0.5, -1.3}, "t2": {-0.9, -0.8, -1.25}, "wall": {-0.6, 0, -0.8},
		"w2": {0, 0, -0.35}, "bracket": {0.25, 2.0, -0.7},
	}
	seen := map[string]int{}
	for i := range s.Len() {
		g := s.Group[i]
		p, ok := pos[g]
		if !ok {
			t.Fatalf("row %d: group %q is no sensor of the scenario", i+1, g)
		}
		seen[g]++
		// rho runs from the bar to the sensor across it; u = +north, so
		// u x rho-hat = (rho_up, 0, -rho_east) / |rho|.
		re, ru := p[0]-bx, p[2]-bz
		rho := math.Hypot(re, ru)
		mag := mu0 * cur / (2 * math.Pi * rho) * 1e9 // nT
		want := [3]float64{mag * ru / rho, 0, -mag * re / rho}
		if g == "bracket" {
			// Turned 90 degrees about up: its x axis points north and its
			// y axis west, so it reads (north, -east, up).
			want = [3]float64{want[1], -want[0], want[2]}
		}
		got := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
		for k := range 3 {
			if math.Abs(got[k]-want[k]) > 1e-9*mag {
				t.Fatalf("sensor %s (%.2f m from the bar), axis %d: %.9g nT, want %.9g (mu0 I / (2 pi r) = %.6g nT)", g, rho, k, got[k], want[k], mag)
			}
		}
	}
	for g := range pos {
		if seen[g] != 10 {
			t.Errorf("sensor %s: %d readings, want 1 s x 10 Hz = 10", g, seen[g])
		}
	}
	// The same law as a plain number at t2, 0.9 m across and 0.45 m below
	// the bar: mu0 / (2 pi) = 2e-7 T m / A to 10 digits, r = 1.0062306 m,
	// so |B| = 2e-7 * 400 / 1.0062306 T = 79504.64 nT.
	for i := range s.Len() {
		if s.Group[i] == "t2" {
			if b := math.Sqrt(s.Bx[i]*s.Bx[i] + s.By[i]*s.By[i] + s.Bz[i]*s.Bz[i]); math.Abs(b-79504.64) > 0.01 {
				t.Errorf("t2: |B| %.4f nT, want 79504.64", b)
			}
			break
		}
	}
}

// TestFixedSourceThroughSensor checks that a conductor through a fixed
// sensor, or within a centimetre of one, is refused at its geometry key,
// naming the conductor and the sensor, and that one just clear of the
// limit, or whose segment's extension (not the segment) meets a sensor, is
// accepted.
func TestFixedSourceThroughSensor(t *testing.T) {
	cases := []parseCase{
		{"line through a sensor", "point = [0.0, 0.0, -0.8]", "point = [1.0, 0.0, -1.3]",
			`s.toml:27:9: conductor 1 ("bar"): the line passes 0 m from fixed sensor 1 ("t1" at [1, 0.5, -1.3], line 10), within 0.01 m`},
		{"line 5 mm from a sensor", "point = [0.0, 0.0, -0.8]", "point = [-0.6, 7.0, -0.795]",
			`s.toml:27:9: conductor 1 ("bar"): the line passes 0.005 m from fixed sensor 3 ("wall" at [-0.6, 0, -0.8], line 16)`},
		{"slanting line through a sensor", "direction = [0.0, 1.0, 0.0]", "direction = [0.0, 0.0, 1.0]",
			`conductor 1 ("bar"): the line passes 0 m from fixed sensor 4 ("w2"`},
		{"polyline segment through a sensor", "kind = \"line\"\npoint = [0.0, 0.0, -0.8]\ndirection = [0.0, 1.0, 0.0]",
			"kind = \"polyline\"\nvertices = [[0.0, -5.0, -0.8], [0.0, 0.0, -0.8], [0.0, 0.0, 1.0]]",
			`s.toml:27:12: conductor 1 ("bar"): segment 2 (vertices 2 to 3) passes 0 m from fixed sensor 4 ("w2"`},
		{"dipole at a sensor", "kind = \"line\"\npoint = [0.0, 0.0, -0.8]\ndirection = [0.0, 1.0, 0.0]\ncurrent_a = 400",
			"kind = \"dipole\"\nposition = [0.25, 2.0, -0.705]\nmoment_a_m2 = [0, 0, 1]",
			`s.toml:27:12: conductor 1 ("bar"): the dipole lies 0.005 m from fixed sensor 5 ("bracket"`},
	}
	checkParseErrors(t, plantRoom, cases)
	for _, ok := range []struct{ name, old, new string }{
		{"line 2 cm from a sensor", "point = [0.0, 0.0, -0.8]", "point = [-0.6, 7.0, -0.78]"},
		{"segment ending short of a sensor", "kind = \"line\"\npoint = [0.0, 0.0, -0.8]\ndirection = [0.0, 1.0, 0.0]",
			"kind = \"polyline\"\nvertices = [[0.0, 0.0, -0.8], [0.0, 0.0, -0.5]]"},
	} {
		text := strings.Replace(plantRoom, ok.old, ok.new, 1)
		if text == plantRoom {
			t.Fatalf("%s: the case did not change the scenario", ok.name)
		}
		if _, err := Parse([]byte(text), "s.toml"); err != nil {
			t.Errorf("%s: %v", ok.name, err)
		}
	}
}
