package simulate

import (
	"bytes"
	"fmt"
	"math"
	"math/big"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// demoPath is the bundled demo scenario, relative to this package.
const demoPath = "../../testdata/demo/fenwick-lane.toml"

// Tolerances.
const (
	// fieldTol is the relative agreement of simulated fields with the
	// published check values: the values carry 12 significant digits and
	// the positions are exact binary fractions or short decimals.
	fieldTol = 1e-9
	// geomTol is for positions and times built from decimal inputs, m or s.
	geomTol = 1e-9
)

func parse(t *testing.T, text string) *Scenario {
	t.Helper()
	sc, err := Parse([]byte(text), "test.toml")
	if err != nil {
		t.Fatalf("Parse: %v", err)
	}
	return sc
}

func simulate(t *testing.T, sc *Scenario) (rows int, get func(i int) (tm float64, r, b [3]float64, group string)) {
	t.Helper()
	s, err := Simulate(sc)
	if err != nil {
		t.Fatalf("Simulate: %v", err)
	}
	if s.Len() != sc.Rows() {
		t.Fatalf("Simulate gave %d rows, Rows says %d", s.Len(), sc.Rows())
	}
	return s.Len(), func(i int) (float64, [3]float64, [3]float64, string) {
		return s.Time[i], [3]float64{s.X[i], s.Y[i], s.Z[i]}, [3]float64{s.Bx[i], s.By[i], s.Bz[i]}, s.Group[i]
	}
}

func relClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Max(math.Abs(want), 1e-300)
}

// A quiet single traverse across one line, readings every 0.25 m.
const quietLine = `
name = "quiet"
start = "2026-01-01T00:00:00Z"
[sensor]
height_m = %g
[survey]
route = [[0, -5], [0, 5]]
count = 1
first_at_m = 5
length_m = 4
sample_spacing_m = 0.25
zigzag = false
[[conductor]]
kind = "line"
point = [0, 0, %g]
direction = [0, 1, 0]
current_a = %g
`

// TestInfiniteWireCheckValues compares readings with the DOMAIN.md check
// values for an infinite wire (CODATA 2022 mu0): 1 A at 1 m gives
// 1.9999999997e-7 T; 10 A along +y through (0, 0, -1) seen from (1, 0, 0)
// gives Bx = +9.99999999868e-7 T and Bz = -9.99999999868e-7 T.
func TestInfiniteWireCheckValues(t *testing.T) {
	cases := []struct {
		name            string
		height, z, amps float64
		x               float64    // reading to check, m east
		want            [3]float64 // nT
	}{
		{"1 A at 1 m overhead", 0.3, -0.7, 1, 0, [3]float64{199.9999999700, 0, 0}},
		{"10 A, sensor at (1,0,0)", 0, -1, 10, 1, [3]float64{999.999999868, 0, -999.999999868}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			sc := parse(t, fmt.Sprintf(quietLine, tc.height, tc.z, tc.amps))
			n, get := simulate(t, sc)
			if n != 17 {
				t.Fatalf("%d readings on a 4 m traverse at 0.25 m, want 17", n)
			}
			found := false
			for i := range n {
				_, r, b, g := get(i)
				if g != "T01" {
					t.Fatalf("group %q, want T01", g)
				}
				if math.Abs(r[0]-tc.x) > geomTol {
					continue
				}
				found = true
				if math.Abs(r[2]-tc.height) > geomTol {
					t.Errorf("sensor up = %g, want %g", r[2], tc.height)
				}
				for k := range b {
					if tc.want[k] == 0 {
						if math.Abs(b[k]) > 1e-9 {
							t.Errorf("axis %d: %g nT, want 0", k, b[k])
						}
					} else if !relClose(b[k], tc.want[k], fieldTol) {
						t.Errorf("axis %d: %.12g nT, want %.12g", k, b[k], tc.want[k])
					}
				}
			}
			if !found {
				t.Fatalf("no reading at east = %g", tc.x)
			}
		})
	}
}

// TestEarthDriftAndDistortion checks the background model and the sensor
// distortion exactly (no noise): reading = M (E + D t/3600 + B_line) + o,
// with B_line from the infinite-wire formula B = mu0 I/(2 pi rho) written
// out here independently of the inverse package.
func TestEarthDriftAndDistortion(t *testing.T) {
	text := fmt.Sprintf(quietLine, 0.5, -1.0, 20.0) + `
[earth]
field_nt = [100, 19000, -45000]
drift_nt_per_hour = [36, -72, 18]
`
	text = strings.Replace(text, "height_m = 0.5", "height_m = 0.5\noffset_nt = [10, -20, 30]\nmatrix = [[1.1, 0.1, 0], [0, 0.9, 0.05], [0.02, 0, 1.05]]", 1)
	text = strings.Replace(text, "sample_spacing_m = 0.25", "sample_spacing_m = 0.25\nspeed_m_s = 0.01", 1)
	sc := parse(t, text)
	const mu0 = 1.25663706127e-6 // CODATA 2022 (NIST)
	m := [3][3]float64{{1.1, 0.1, 0}, {0, 0.9, 0.05}, {0.02, 0, 1.05}}
	n, get := simulate(t, sc)
	t0 := sc.StartTime()
	for i := range n {
		tm, r, b, _ := get(i)
		h := (tm - t0) / 3600
		// Line along +y through (0, 0, -1): rho = (x, 0, z + 1),
		// B = mu0 I/(2 pi |rho|^2) (u x rho), u x rho = (z+1, 0, -x).
		rho2 := r[0]*r[0] + (r[2]+1)*(r[2]+1)
		k := mu0 * 20 / (2 * math.Pi * rho2) * 1e9
		tru := [3]float64{100 + 36*h + k*(r[2]+1), 19000 - 72*h, -45000 + 18*h - k*r[0]}
		for a := range 3 {
			want := m[a][0]*tru[0] + m[a][1]*tru[1] + m[a][2]*tru[2] + [3]float64{10, -20, 30}[a]
			if math.Abs(b[a]-want) > 1e-7 {
				t.Fatalf("reading %d axis %d: %.9f nT, want %.9f", i, a, b[a], want)
			}
		}
	}
	// At 0.01 m/s the 4 m traverse takes 400 s: the drift must show.
	tm, _, _, _ := get(n - 1)
	if math.Abs(tm-t0-400) > geomTol {
		t.Errorf("last reading at %g s, want 400 s", tm-t0)
	}
}

// TestCyclesExact checks the phase of a tone at Unix times against the same
// quantity in 256-bit arithmetic (math/big), where the naive float64 product
// f*t loses about five digits.
func TestCyclesExact(t *testing.T) {
	for _, f := range []float64{50, 50.1, 59.94, 16.7, 2000.0 / 3} {
		for _, tm := range []float64{0, 1.25, 1773482700.123456, 1900000000.0004883} {
			got := cycles(f, tm)
			bf := new(big.Float).SetPrec(256).SetFloat64(f)
			bt := new(big.Float).SetPrec(256).SetFloat64(tm)
			p := new(big.Float).SetPrec(256).Mul(bf, bt)
			whole, _ := p.Int(nil)
			fr := new(big.Float).SetPrec(256).Sub(p, new(big.Float).SetPrec(256).SetInt(whole))
			want, _ := fr.Float64()
			if want < 0 {
				want++
			}
			d := math.Abs(got - want)
			d = math.Min(d, 1-d)
			if d > 1e-12 {
				t.Errorf("cycles(%g, %.10f) = %.15f, want %.15f", f, tm, got, want)
			}
		}
	}
}

// TestACReadings checks that an AC line's readings follow
// sqrt(2) I cos(2 pi f t + phi) times the DC field per ampere, sampled at
// 2 kHz, and that the RMS over whole cycles at one place is the RMS field.
func TestACReadings(t *testing.T) {
	text := `
start = "2026-05-05T12:00:00.25Z"
[sensor]
height_m = 0.2
sample_rate_hz = 2000
[survey]
route = [[0, 1], [10, 1]]
count = 1
first_at_m = 5
length_m = 0.0002
speed_m_s = 0.0001
[[conductor]]
kind = "line"
point = [0, 0, -0.8]
direction = [1, 0, 0]
current_a = 10
frequency_hz = 50
phase_deg = 30
`
	sc := parse(t, text)
	const mu0 = 1.25663706127e-6 // CODATA 2022 (NIST)
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	// The 0.2 mm traverse lies 1 m north of the line, 1 m above it, and
	// the sensor barely moves (0.1 mm/s): over 1 s (50 cycles) the field
	// is a pure tone of RMS mu0 I/(2 pi d) with d = sqrt(2) m.
	var sum float64
	const nRMS = 2000
	for i := range nRMS {
		sum += s.By[i]*s.By[i] + s.Bz[i]*s.Bz[i]
		if math.Abs(s.Bx[i]) > 1e-9 {
			t.Fatalf("Bx = %g along a line parallel to east, want 0", s.Bx[i])
		}
		r := [3]float64{s.X[i], s.Y[i], s.Z[i]}
		rho := math.Hypot(r[1], r[2]+0.8)
		amp := mu0 * 10 / (2 * math.Pi * rho) * 1e9 * math.Sqrt2
		w := amp * math.Cos(2*math.Pi*cycles(50, s.Time[i])+math.Pi/6)
		// u x rho with u = +x, rho = (0, y, z+0.8): (0, -(z+0.8), y).
		wantBy := -w * (r[2] + 0.8) / rho
		wantBz := w * r[1] / rho
		if math.Abs(s.By[i]-wantBy) > 1e-6 || math.Abs(s.Bz[i]-wantBz) > 1e-6 {
			t.Fatalf("reading %d: (%g, %g) nT, want (%g, %g)", i, s.By[i], s.Bz[i], wantBy, wantBz)
		}
	}
	rms := math.Sqrt(sum / nRMS)
	want := mu0 * 10 / (2 * math.Pi * math.Sqrt2) * 1e9
	if !relClose(rms, want, 1e-4) {
		t.Errorf("RMS over 50 cycles %.6f nT, want %.6f", rms, want)
	}
	// Unix seconds near 1.8e9 in float64 are spaced 2^-22 s (0.24 us).
	if dt := s.Time[1] - s.Time[0]; math.Abs(dt-0.0005) > 0x1p-22 {
		t.Errorf("sample interval %g s, want 0.5 ms", dt)
	}
}

// TestNoiseLevel checks the white noise: its sample standard deviation over
// 30,000 values is within 3% of the setting (the standard error of a sample
// standard deviation is sigma/sqrt(2n), 0.4% here), its mean near zero, and
// the three axes uncorrelated.
func TestNoiseLevel(t *testing.T) {
	text := fmt.Sprintf(quietLine, 0.3, -1000.0, 1.0)
	text = strings.Replace(text, "height_m = 0.3", "height_m = 0.3\nnoise_nt = 2.5", 1)
	text = strings.Replace(text, "sample_spacing_m = 0.25", "sample_spacing_m = 0.0004", 1)
	noisy := parse(t, text)
	quiet := parse(t, strings.Replace(text, "noise_nt = 2.5", "noise_nt = 0", 1))
	a, err := Simulate(noisy)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Simulate(quiet)
	if err != nil {
		t.Fatal(err)
	}
	n := a.Len()
	if n < 10000 {
		t.Fatalf("only %d readings", n)
	}
	cols := [3][2][]float64{{a.Bx, b.Bx}, {a.By, b.By}, {a.Bz, b.Bz}}
	var e [3][]float64
	for k, c := range cols {
		e[k] = make([]float64, n)
		var s1, s2 float64
		for i := range n {
			d := c[0][i] - c[1][i]
			e[k][i] = d
			s1 += d
			s2 += d * d
		}
		mean := s1 / float64(n)
		sd := math.Sqrt(s2/float64(n) - mean*mean)
		if math.Abs(sd-2.5)/2.5 > 0.03 {
			t.Errorf("axis %d: noise sd %.4f nT, want 2.5", k, sd)
		}
		if math.Abs(mean) > 5*2.5/math.Sqrt(float64(n)) {
			t.Errorf("axis %d: noise mean %.4f nT, want 0", k, mean)
		}
	}
	var c01 float64
	for i := range n {
		c01 += e[0][i] * e[1][i]
	}
	if r := c01 / float64(n) / (2.5 * 2.5); math.Abs(r) > 5/math.Sqrt(float64(n)) {
		t.Errorf("east and north noise correlated: r = %.4f", r)
	}
}

func TestDeterministic(t *testing.T) {
	sc, err := Load(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	a, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	for i := range a.Len() {
		if a.Bx[i] != b.Bx[i] || a.Bz[i] != b.Bz[i] || a.Time[i] != b.Time[i] {
			t.Fatalf("reading %d differs between two runs", i)
		}
	}
	sc.Seed++
	c, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	if c.Bx[0] == a.Bx[0] && c.Bx[1] == a.Bx[1] {
		t.Error("a different seed gave the same noise")
	}
}

// TestDemoScenario checks the bundled demo against what its comments
// promise: 31 traverses 5 m apart, a step from 42 A to 33 A between T23 and
// T24, 0.4 m cover at chainage 60-70 m, a geo-referenced log, 500 Hz.
func TestDemoScenario(t *testing.T) {
	sc, err := Load(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	lines := sc.Lines()
	if len(lines) != 31 {
		t.Fatalf("%d traverses, want 31", len(lines))
	}
	for i := 1; i < len(lines); i++ {
		if d := lines[i].Chainage - lines[i-1].Chainage; math.Abs(d-5) > geomTol {
			t.Errorf("%s: %g m after %s, want 5", lines[i].Key, d, lines[i-1].Key)
		}
		if l := lines[i].Length(); math.Abs(l-10) > geomTol {
			t.Errorf("%s: %g m long, want 10", lines[i].Key, l)
		}
	}
	main := map[string]Crossing{}
	for _, c := range sc.Crossings() {
		if c.Conductor == 0 {
			if _, dup := main[c.Line]; dup {
				t.Errorf("%s crosses the main cable twice", c.Line)
			}
			main[c.Line] = c
		}
	}
	if len(main) != 31 {
		t.Fatalf("the main cable is crossed by %d traverses, want 31", len(main))
	}
	for key, want := range map[string]float64{"T01": 42, "T23": 42, "T24": 33, "T31": 33} {
		if got := main[key].Current; got != want {
			t.Errorf("%s: current %g A, want %g", key, got, want)
		}
	}
	for _, key := range []string{"T13", "T14", "T15"} { // chainage 60, 65, 70 m
		if d := main[key].Depth; d < 0.39 || d > 0.43 {
			t.Errorf("%s: depth %g m, want about 0.4 (shallow stretch)", key, d)
		}
	}
	for _, key := range []string{"T03", "T09", "T20", "T28"} {
		if d := main[key].Depth; d < 0.84 || d > 1.01 {
			t.Errorf("%s: depth %g m, want 0.85-1.0", key, d)
		}
	}
	if sc.Origin == nil {
		t.Error("demo is not geo-referenced")
	}
	if r := sc.Rows(); r != 31*5001 {
		t.Errorf("%d rows, want 31 traverses x 5001 readings", r)
	}
	peaks := sc.PeakFields()
	// The 11 kV cable at 1.2-1.3 m below the sensor carries 42 A RMS:
	// mu0 I / (2 pi d) is about 6,500-7,000 nT, more near the shallow
	// stretch (0.7 m: about 12,000 nT).
	if peaks[0] < 10000 || peaks[0] > 14000 {
		t.Errorf("peak field of the 11 kV cable %g nT, want 10,000-14,000", peaks[0])
	}
}

// TestGrid checks the grid layout: lines along the azimuth, stacked to
// the right, walked alternately.
func TestGrid(t *testing.T) {
	sc := parse(t, `
[sensor]
sample_rate_hz = 10
[survey]
pattern = "grid"
corner = [10, 20]
size_m = [30, 4]
azimuth_deg = 90
line_spacing_m = 1
[[conductor]]
kind = "dipole"
position = [20, 18, -1]
moment_a_m2 = [0, 0, 5]
`)
	lines := sc.Lines()
	if len(lines) != 5 {
		t.Fatalf("%d lines, want 5", len(lines))
	}
	// Azimuth 90 degrees: lines run east; the right of east is south.
	want := []Line{
		{"L01", [2]float64{10, 20}, [2]float64{40, 20}, 0},
		{"L02", [2]float64{40, 19}, [2]float64{10, 19}, 1},
		{"L03", [2]float64{10, 18}, [2]float64{40, 18}, 2},
	}
	for i, w := range want {
		g := lines[i]
		if g.Key != w.Key || dist2(g.From, w.From) > geomTol || dist2(g.To, w.To) > geomTol || g.Chainage != w.Chainage {
			t.Errorf("line %d = %+v, want %+v", i, g, w)
		}
	}
	if len(sc.Crossings()) != 0 {
		t.Error("a dipole has no crossings")
	}
	// 30 m at 1 m/s and 10 Hz: 301 readings per line.
	if sc.Rows() != 5*301 {
		t.Errorf("%d rows, want %d", sc.Rows(), 5*301)
	}
}

func dist2(a, b [2]float64) float64 { return math.Hypot(a[0]-b[0], a[1]-b[1]) }

// TestBase checks the base station: it covers the rover's time with its
// margin and logs the Earth field with the same drift plus its offset.
func TestBase(t *testing.T) {
	text := fmt.Sprintf(quietLine, 0.3, -1.0, 5.0) + `
[earth]
field_nt = [0, 19000, -45000]
drift_nt_per_hour = [0, 60, 0]
[base]
sample_rate_hz = 2
offset_nt = [5, 5, 5]
margin_s = 10
`
	sc := parse(t, text)
	rover, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	base, err := SimulateBase(sc)
	if err != nil {
		t.Fatal(err)
	}
	if base.X != nil || base.Group != nil {
		t.Error("a base station log has no positions or groups")
	}
	if base.Time[0] > rover.Time[0]-10+geomTol || base.Time[base.Len()-1] < rover.Time[rover.Len()-1]+10-0.5-geomTol {
		t.Errorf("base covers %g..%g, rover %g..%g", base.Time[0], base.Time[base.Len()-1], rover.Time[0], rover.Time[rover.Len()-1])
	}
	for i := range base.Len() {
		h := (base.Time[i] - sc.StartTime()) / 3600
		if math.Abs(base.By[i]-(19005+60*h)) > 1e-9 || base.Bx[i] != 5 {
			t.Fatalf("base reading %d: (%g, %g), want (5, %g)", i, base.Bx[i], base.By[i], 19005+60*h)
		}
	}
	noBase := parse(t, fmt.Sprintf(quietLine, 0.3, -1.0, 5.0))
	if _, err := SimulateBase(noBase); err == nil || !strings.Contains(err.Error(), "no [base]") {
		t.Errorf("SimulateBase without [base]: %v", err)
	}
}

// TestCrossingsPolyline checks crossings on a bent polyline with a current
// step, including a traverse passing exactly through a vertex.
func TestCrossingsPolyline(t *testing.T) {
	sc := parse(t, `
[sensor]
sample_rate_hz = 5
[survey]
route = [[0, 0], [40, 0]]
count = 3
spacing_m = 10
first_at_m = 5
length_m = 16
[[conductor]]
kind = "polyline"
vertices = [[0, 0, -1], [15, 0, -2], [30, 10, -2]]
currents_a = [10, 7]
`)
	got := sc.Crossings()
	// Traverses run north-south at east = 5, 15 (through the corner,
	// where the downstream current counts) and 25 m.
	want := []struct {
		line    string
		x, y, z float64
		current float64
	}{
		{"T01", 5, 0, -1 - 5.0/15, 10},
		{"T02", 15, 0, -2, 7},
		{"T03", 25, 20.0 / 3, -2, 7},
	}
	if len(got) != len(want) {
		t.Fatalf("%d crossings, want %d: %+v", len(got), len(want), got)
	}
	for i, w := range want {
		g := got[i]
		if g.Line != w.line || math.Abs(g.Point[0]-w.x) > geomTol || math.Abs(g.Point[1]-w.y) > geomTol ||
			math.Abs(g.Point[2]-w.z) > geomTol || g.Current != w.current || math.Abs(g.Depth+w.z) > geomTol {
			t.Errorf("crossing %d = %+v, want %+v", i, g, w)
		}
	}
}

// goodScenario is a small scenario that parses: a 10 Hz sensor over two
// 6 m traverses 5 m apart and a 10 A line 1 m down. The parse-error tests
// edit one line of it at a time.
const goodScenario = `
[sensor]
sample_rate_hz = 10
[survey]
count = 2
spacing_m = 5
length_m = 6
[[conductor]]
kind = "line"
point = [0, 0, -1]
direction = [1, 0, 0]
current_a = 10
`

// TestScenarioErrors checks that mistakes are reported with the file, the
// line and column where it can be found, and what is wrong.
func TestScenarioErrors(t *testing.T) {
	good := goodScenario
	if _, err := Parse([]byte(good), "s.toml"); err != nil {
		t.Fatalf("good scenario: %v", err)
	}
	cases := []parseCase{
		{"syntax", "count = 2", "count = = 2", "s.toml:5:"},
		{"text for a number", "count = 2", `count = "two"`, "key survey.count: want a number, found a string (in quotes)"},
		{"unknown key", "spacing_m = 5", "spacing = 5", `s.toml:6:11: unknown key "survey.spacing"`},
		{"wrong type", "count = 2", `count = "two"`, "s.toml:5:"},
		{"bad kind", `kind = "line"`, `kind = "cable"`, `s.toml:9:8: conductor 1 (""): unknown kind "cable"`},
		{"above the sensor", "point = [0, 0, -1]", "point = [0, 0, 2]", "not below the sensor height"},
		{"rate and spacing", "length_m = 6", "length_m = 6\nsample_spacing_m = 0.1", "not both"},
		{"no rate", "sample_rate_hz = 10", "", "missing"},
		{"aliasing", "current_a = 10", "current_a = 10\nfrequency_hz = 50", "not below half the sample rate"},
		{"beyond route", "length_m = 6", "length_m = 6\nroute = [[0, 0], [3, 0]]", "beyond the end of the route"},
		{"bad time", "[sensor]", "start = \"yesterday\"\n[sensor]", `s.toml:2:9: "yesterday" is not an RFC 3339 time`},
		{"too many rows", "sample_rate_hz = 10", "sample_rate_hz = 900000", "more than 10000000 readings"},
		{"line needs direction", "direction = [1, 0, 0]", "", "a line needs point and direction"},
		{"zero direction", "direction = [1, 0, 0]", "direction = [0, 0, 0]", "non-zero"},
		{"no conductors", "[[conductor]]", "[other]", "unknown key"},
		{"polyline currents", "kind = \"line\"\npoint = [0, 0, -1]\ndirection = [1, 0, 0]\ncurrent_a = 10",
			"kind = \"polyline\"\nvertices = [[0,0,-1],[5,0,-1],[9,0,-1]]\ncurrents_a = [1, 2, 3]", "3 currents for 2 segments"},
	}
	checkParseErrors(t, good, cases)
	if _, err := Load(filepath.Join(t.TempDir(), "missing.toml")); err == nil || !strings.Contains(err.Error(), "missing.toml") {
		t.Errorf("Load of a missing file: %v", err)
	}
}

// TestScenarioFilesParse checks every scenario shipped in the repository.
func TestScenarioFilesParse(t *testing.T) {
	files, _ := filepath.Glob("../../testdata/scenarios/*.toml")
	files = append(files, demoPath)
	for _, f := range files {
		if _, err := os.Stat(f); err != nil {
			t.Fatal(err)
		}
		if _, err := Load(f); err != nil {
			t.Errorf("%v", err)
		}
	}
}

func BenchmarkSimulateDemo(b *testing.B) { benchSimulate(b, demoPath) }

// benchSimulate simulates the scenario at path once per iteration and
// reports the readings it makes.
func benchSimulate(b *testing.B, path string) {
	sc, err := Load(path)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Simulate(sc); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(sc.Rows()), "readings/op")
}

// TestDemoBundled checks that the scenario bundled into the program is the
// one in the repository (run go generate after editing the latter).
func TestDemoBundled(t *testing.T) {
	disk, err := os.ReadFile(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(disk, DemoText()) {
		t.Fatalf("the bundled demo scenario differs from %s: run go generate ./inverse/simulate", DemoPath)
	}
	sc, err := Demo()
	if err != nil {
		t.Fatal(err)
	}
	if sc.Name != "fenwick-lane" || sc.Source != DemoPath {
		t.Errorf("Demo() = %q from %q", sc.Name, sc.Source)
	}
}

// parseCase edits a scenario (the first old becomes new) and names the
// error Parse must give for it.
type parseCase struct{ name, old, new, want string }

// checkParseErrors parses base with each case's edit and checks the error
// names the file and contains the case's text.
func checkParseErrors(t *testing.T, base string, cases []parseCase) {
	t.Helper()
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			text := strings.Replace(base, tc.old, tc.new, 1)
			if text == base {
				t.Fatalf("test case did not change the scenario")
			}
			_, err := Parse([]byte(text), "s.toml")
			if err == nil {
				t.Fatalf("no error, want %q", tc.want)
			}
			if !strings.HasPrefix(err.Error(), "simulate: s.toml") || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q, want it to start with \"simulate: s.toml\" and contain %q", err, tc.want)
			}
		})
	}
}
