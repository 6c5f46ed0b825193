package simulate

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"
	"gonum.org/v1/gonum/spatial/r3"

	"undercurrent/ingest"
	"undercurrent/ingest/broker"
)

// fixedPair is the go and return cores of the Fenwick Lane feeder (the
// site file's fenwick-lane asset) seen by three fixed sensors: one level,
// the site's fl-n1 turned 90 degrees about up, and one tipped about all
// three axes. No noise; the return current drops from 200 A to 180 A half
// way through.
const fixedPair = `
start = "2026-12-01T06:00:00Z"
[earth]
field_nt = [-150, 19200, -45100]
drift_nt_per_hour = [36, -72, 18]
[sensor]
sample_rate_hz = 1000
[survey]
pattern = "fixed"
duration_s = 1
[[survey.sensor]]
name = "fl-w2"
position = [-1.5, 0.0, 0.3]
[[survey.sensor]]
name = "fl-n1"
position = [0.0, 4.0, 0.3]
orientation = [90.0, 0.0, 0.0]
[[survey.sensor]]
name = "tipped_3"
position = [0.7, -2.0, 0.5]
orientation = [-30.0, 20.0, -40.0]
[[conductor]]
name = "go"
kind = "line"
point = [-0.15, 0.0, -0.8]
direction = [0.0, 1.0, 0.0]
current_a = 200
frequency_hz = 50
phase_deg = 20
[[conductor]]
name = "return"
kind = "line"
point = [0.15, 0.0, -0.8]
direction = [0.0, 1.0, 0.0]
current_a = -200
frequency_hz = 50
phase_deg = 20
change_at_s = 0.5
current_after_a = -180
`

// wireNorth is the field, nT, at r of an infinite straight wire along +y
// through (x0, 0, z0) carrying current i, A: the Biot-Savart result
// B = mu0 I / (2 pi rho) in the direction u x rho (Jackson, Classical
// Electrodynamics, 3rd ed.), with u = +y and
// rho = (x - x0, 0, z - z0), so u x rho = (z - z0, 0, -(x - x0)).
// TestFixedReadings first checks it against the project's published check
// value (../shared/DOMAIN.md).
func wireNorth(r [3]float64, x0, z0, i float64) [3]float64 {
	const mu0 = 1.25663706127e-6 // CODATA 2022 (NIST)
	dx, dz := r[0]-x0, r[2]-z0
	k := mu0 * i / (2 * math.Pi * (dx*dx + dz*dz)) * 1e9
	return [3]float64{k * dz, 0, -k * dx}
}

// TestFixedReadings checks every reading of the fixed pattern against the
// Biot-Savart field of the two cores plus the Earth field and its drift,
// expressed in each sensor's axes by rotations made independently here:
// by hand for the sensor turned 90 degrees about up (its x axis points
// north, its y axis west), and with gonum's spatial/r3 quaternion
// rotations for the others, b_sensor = Rx(-roll) Ry(-pitch) Rz(-yaw) b_ENU,
// the inverse of the site file's b_ENU = Rz(yaw) Ry(pitch) Rx(roll)
// b_sensor. It also checks the layout replay wants: sensor frame, no
// positions, rows interleaved in time, the group column naming the sensor.
func TestFixedReadings(t *testing.T) {
	// DOMAIN.md: 10 A along +y through (0, 0, -1), sensor at (1, 0, 0):
	// Bx = +9.99999999868e-7 T, Bz = -9.99999999868e-7 T.
	if b := wireNorth([3]float64{1, 0, 0}, 0, -1, 10); !relClose(b[0], 999.999999868, 1e-11) || b[1] != 0 || !relClose(b[2], -999.999999868, 1e-11) {
		t.Fatalf("wireNorth check value: %v nT, want (999.999999868, 0, -999.999999868)", b)
	}
	sc := parse(t, fixedPair)
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	names := []string{"fl-w2", "fl-n1", "tipped_3"}
	pos := [][3]float64{{-1.5, 0, 0.3}, {0, 4, 0.3}, {0.7, -2, 0.5}}
	if s.Len() != 3000 || sc.Rows() != 3000 {
		t.Fatalf("%d readings (Rows %d), want 3 sensors x 1 s x 1000 Hz = 3000", s.Len(), sc.Rows())
	}
	if s.Frame != ingest.FrameSensor || s.X != nil || s.Y != nil || s.Z != nil {
		t.Errorf("frame %v, positions present %v: want the sensor frame and no positions", s.Frame, s.X != nil)
	}
	if s.Meta["pattern"] != "fixed" {
		t.Errorf("meta pattern %q, want fixed", s.Meta["pattern"])
	}
	if c := sc.Crossings(); len(c) != 0 {
		t.Errorf("fixed sensors cross nothing, got %d crossings", len(c))
	}
	const d = math.Pi / 180
	t0 := sc.StartTime()
	changed := 0
	for i := range s.Len() {
		k, si := i/3, i%3
		if s.Group[i] != names[si] {
			t.Fatalf("row %d: group %q, want %q", i+1, s.Group[i], names[si])
		}
		// Unix times near 1.8e9 s carry about 2.4e-7 s (float64).
		dt := s.Time[i] - t0 // exact: both near 1.8e9
		if math.Abs(dt-float64(k)/1000) > 1e-6 {
			t.Fatalf("row %d at %g s, want %g", i+1, dt, float64(k)/1000)
		}
		// 50 Hz from a whole second: 2 pi f t = 2 pi f dt modulo 2 pi.
		w := math.Sqrt2 * math.Cos(2*math.Pi*50*dt+20*d)
		ret := -200.0
		if dt >= 0.5 {
			ret = -180
			changed++
		}
		r := pos[si]
		g, b := wireNorth(r, -0.15, -0.8, 200), wireNorth(r, 0.15, -0.8, ret)
		h := dt / 3600
		enu := [3]float64{
			-150 + 36*h + w*(g[0]+b[0]),
			19200 - 72*h,
			-45100 + 18*h + w*(g[2]+b[2]),
		}
		var want [3]float64
		switch si {
		case 0:
			want = enu
		case 1:
			// x north, y west, z up.
			want = [3]float64{enu[1], -enu[0], enu[2]}
		case 2:
			v := r3.Vec{X: enu[0], Y: enu[1], Z: enu[2]}
			v = r3.NewRotation(30*d, r3.Vec{Z: 1}).Rotate(v) // -yaw
			v = r3.NewRotation(-20*d, r3.Vec{Y: 1}).Rotate(v)
			v = r3.NewRotation(40*d, r3.Vec{X: 1}).Rotate(v) // -roll
			want = [3]float64{v.X, v.Y, v.Z}
		}
		got := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
		for a := range 3 {
			if math.Abs(got[a]-want[a]) > 1e-6 {
				t.Fatalf("row %d (%s, %.3f s): B = %v nT, want %v", i+1, names[si], dt, got, want)
			}
		}
	}
	if changed != 1500 {
		t.Errorf("%d readings after the change at 0.5 s, want 1500", changed)
	}
}

// TestFixedRotationUndone: the pipeline turns a sensor's reading back to
// east-north-up with b_ENU = Rz(yaw) Ry(pitch) Rx(roll) b_sensor (the site
// file's convention); made here with gonum's quaternion rotations, it
// recovers the ENU field from fixedRotation's sensor reading.
func TestFixedRotationUndone(t *testing.T) {
	const d = math.Pi / 180
	enu := [3]float64{-150, 19200, -45100}
	for _, o := range [][3]float64{{0, 0, 0}, {90, 0, 0}, {-30, 20, -40}, {200, -85, 170}} {
		b := toSensor(enu, fixedRotation(o))
		v := r3.Vec{X: b[0], Y: b[1], Z: b[2]}
		v = r3.NewRotation(o[2]*d, r3.Vec{X: 1}).Rotate(v)
		v = r3.NewRotation(o[1]*d, r3.Vec{Y: 1}).Rotate(v)
		v = r3.NewRotation(o[0]*d, r3.Vec{Z: 1}).Rotate(v)
		if math.Abs(v.X-enu[0]) > 1e-9 || math.Abs(v.Y-enu[1]) > 1e-9 || math.Abs(v.Z-enu[2]) > 1e-9 {
			t.Errorf("orientation %v: reading %v turned back to (%g, %g, %g), want %v", o, b, v.X, v.Y, v.Z, enu)
		}
	}
}

// TestFixedLogReplays writes a noisy fixed log as CSV, reads it back with
// the ingest package (which refuses time going backwards: the interleaved
// rows must not) and splits it into sensor batches as the replay command
// does: every batch is one sensor's, in time order, and every sensor is
// there with all its readings.
func TestFixedLogReplays(t *testing.T) {
	text := strings.Replace(fixedPair, "[sensor]\n", "[sensor]\nnoise_nt = 2.0\n", 1)
	s, err := Simulate(parse(t, text))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "fixed.csv")
	if err := ingest.WriteSamples(path, s); err != nil {
		t.Fatal(err)
	}
	back, err := ingest.ReadSamples(path)
	if err != nil {
		t.Fatalf("reading the log back: %v", err)
	}
	if back.Len() != 3000 || back.Group == nil {
		t.Fatalf("read back %d rows, group column %v", back.Len(), back.Group != nil)
	}
	batches, err := broker.SplitSamples(back, "fenwick-lane", "", 0.1)
	if err != nil {
		t.Fatal(err)
	}
	count := map[string]int{}
	for _, b := range batches {
		count[b.Sensor] += len(b.Time)
	}
	for _, n := range []string{"fl-w2", "fl-n1", "tipped_3"} {
		if count[n] != 1000 {
			t.Errorf("sensor %s: %d readings in the batches, want 1000", n, count[n])
		}
	}
	if len(count) != 3 {
		t.Errorf("batches for sensors %v, want the three", count)
	}
}

// TestFixedErrors checks that mistakes in a fixed scenario are reported
// with the file, the line and column, and what is wrong.
func TestFixedErrors(t *testing.T) {
	if _, err := Parse([]byte(fixedPair), "s.toml"); err != nil {
		t.Fatalf("good scenario: %v", err)
	}
	cases := []parseCase{
		{"no sensors", "[[survey.sensor]]\nname = \"fl-w2\"\nposition = [-1.5, 0.0, 0.3]\n[[survey.sensor]]\nname = \"fl-n1\"\nposition = [0.0, 4.0, 0.3]\norientation = [90.0, 0.0, 0.0]\n[[survey.sensor]]\nname = \"tipped_3\"\nposition = [0.7, -2.0, 0.5]\norientation = [-30.0, 20.0, -40.0]\n", "",
			`s.toml:9:11: pattern "fixed" needs at least one [[survey.sensor]] table`},
		{"duplicate name", `name = "tipped_3"`, `name = "fl-w2"`,
			`s.toml:19:8: sensor 3 ("fl-w2"): name "fl-w2" is also sensor 1's`},
		{"bad name", `name = "tipped_3"`, `name = "tipped 3"`,
			`s.toml:19:8: sensor 3 ("tipped 3"): name "tipped 3": character 7 (' ')`},
		{"empty name", `name = "tipped_3"`, `name = ""`, `sensor 3 (""): name "": want 1 to 64`},
		{"orientation out of range", "orientation = [-30.0, 20.0, -40.0]", "orientation = [-30.0, 20.0, 400.0]",
			`s.toml:21:15: sensor 3 ("tipped_3"): roll 400 degrees must be a number in [-360, 360]`},
		{"orientation not a number", "orientation = [90.0, 0.0, 0.0]", "orientation = [nan, 0.0, 0.0]",
			`s.toml:17:15: sensor 2 ("fl-n1"): yaw NaN degrees`},
		{"orientation too short", "orientation = [90.0, 0.0, 0.0]", "orientation = [90.0, 0.0]", "s.toml:17:"},
		{"position", "position = [0.7, -2.0, 0.5]", "position = [0.7, inf, 0.5]", `s.toml:20:12: sensor 3 ("tipped_3"): position`},
		{"sensor height", "sample_rate_hz = 1000", "sample_rate_hz = 1000\nheight_m = 0.3", "s.toml:8:12: a fixed sensor's height is the up coordinate"},
		{"walking", "sample_rate_hz = 1000", "sample_rate_hz = 1000\nattitude = \"walking\"", "drop attitude"},
		{"no rate", "sample_rate_hz = 1000", "", "missing"},
		{"spacing", "duration_s = 1", "duration_s = 1\nsample_spacing_m = 0.1", "not both"},
		{"duration", "duration_s = 1", "duration_s = -1", "s.toml:10:14: duration -1 s"},
		{"sensors without the pattern", `pattern = "fixed"`, `pattern = "spin"`, `s.toml:11:1: [[survey.sensor]] tables are for pattern = "fixed"`},
		{"through a sensor", "point = [0.15, 0.0, -0.8]", "point = [0.0, 0.0, 0.3]", `s.toml:33:9: conductor 2 ("return"): the line passes 0 m from fixed sensor 2 ("fl-n1"`},
		{"change without current", "current_after_a = -180", "", `s.toml:38:15: conductor 2 ("return"): change_at_s needs current_after_a`},
		{"current without change", "change_at_s = 0.5", "", `conductor 2 ("return"): current_after_a needs change_at_s`},
		{"change before the start", "change_at_s = 0.5", "change_at_s = -2", "change time -2 s must be a number >= 0"},
		{"unknown pattern", `pattern = "fixed"`, `pattern = "fixd"`, `want "traverses", "grid", "spin" or "fixed"`},
	}
	checkParseErrors(t, fixedPair, cases)
	// A dipole has no current to change.
	dip := fixedPair + `
[[conductor]]
name = "drum"
kind = "dipole"
position = [3, 3, -1]
moment_a_m2 = [0, 0, 1]
change_at_s = 0.2
current_after_a = 1
`
	if _, err := Parse([]byte(dip), "s.toml"); err == nil || !strings.Contains(err.Error(), `conductor 3 ("drum"): a dipole has no current to change`) {
		t.Errorf("change on a dipole: %v", err)
	}
}

// TestFixedScenarioMatchesSite checks that the bundled fixed scenario
// reproduces the site file's fenwick-lane asset: the same sensors (names,
// positions, orientations, in order), the same two conductors (points,
// directions), its frequency, and a step in the go/return balance larger
// than the asset's imbalance alarm threshold.
func TestFixedScenarioMatchesSite(t *testing.T) {
	sc, err := Load("../../testdata/scenarios/harrow-fen-fixed.toml")
	if err != nil {
		t.Fatal(err)
	}
	var site struct {
		Asset []struct {
			Name      string
			Frequency float64
			Window    string
			Sensor    []struct {
				Name        string
				Position    [3]float64
				Orientation [3]float64
			}
			Conductor []struct {
				Name      string
				Point     [3]float64
				Direction [3]float64
			}
			Alarms struct {
				MaxImbalance float64 `toml:"max_imbalance"`
			}
		}
	}
	data, err := os.ReadFile("../../testdata/site/harrow-fen.toml")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := toml.Decode(string(data), &site); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, a := range site.Asset {
		if a.Name != "fenwick-lane" {
			continue
		}
		found = true
		if len(a.Sensor) != len(sc.Survey.Sensors) {
			t.Fatalf("%d sensors in the scenario, %d in the site file", len(sc.Survey.Sensors), len(a.Sensor))
		}
		for i, s := range a.Sensor {
			if g := sc.Survey.Sensors[i]; g.Name != s.Name || g.Position != s.Position || g.Orientation != s.Orientation {
				t.Errorf("sensor %d: scenario %+v, site file %+v", i+1, g, s)
			}
		}
		if len(a.Conductor) != len(sc.Conductors) {
			t.Fatalf("%d conductors in the scenario, %d in the site file", len(sc.Conductors), len(a.Conductor))
		}
		var before, after float64
		for i, c := range a.Conductor {
			g := sc.Conductors[i]
			if g.Name != c.Name || *g.Point != c.Point || *g.Direction != c.Direction || g.Frequency != a.Frequency {
				t.Errorf("conductor %d: scenario %q %v %v %g Hz, site file %q %v %v %g Hz",
					i+1, g.Name, *g.Point, *g.Direction, g.Frequency, c.Name, c.Point, c.Direction, a.Frequency)
			}
			before += g.Current
			if g.CurrentAfter != nil {
				after += *g.CurrentAfter
			} else {
				after += g.Current
			}
		}
		if math.Abs(before) > a.Alarms.MaxImbalance || math.Abs(after) <= a.Alarms.MaxImbalance {
			t.Errorf("go + return %g A before the change and %g A after, want below and above the %g A alarm", before, after, a.Alarms.MaxImbalance)
		}
	}
	if !found {
		t.Fatal("no fenwick-lane asset in the site file")
	}
	// Whole windows of the site's 1 s: the log is a whole number of
	// seconds from a whole second.
	if d := sc.fixedDuration(); d != math.Trunc(d) || sc.StartTime() != math.Trunc(sc.StartTime()) {
		t.Errorf("duration %g s from %g: want whole seconds", d, sc.StartTime())
	}
}
