package simulate

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"undercurrent/ingest"
)

// A quiet spin at (1, 0) on the ground beside a 10 A line along +y through
// (0, 0, -1): the DOMAIN.md check value for that geometry (CODATA 2022 mu0)
// is a field of +9.99999999868e-7 T east and -9.99999999868e-7 T up.
const spinWire = `
name = "spin"
start = "2026-01-01T00:00:00Z"
[earth]
field_nt = [400, 19100, -45300]
[sensor]
height_m = 0
sample_rate_hz = 10
offset_nt = [310, -240, 180]
matrix = [[1.04, 0.012, -0.008], [0.012, 0.965, 0.015], [-0.008, 0.015, 0.997]]
[survey]
pattern = "spin"
at = [1, 0]
duration_s = 60
turns = 8
[[conductor]]
kind = "line"
point = [0, 0, -1]
direction = [0, 1, 0]
current_a = 10
`

// undistort inverts the scenario's distortion: M^-1 (reading - offset).
func undistort(t *testing.T, s Sensor, b [3]float64) [3]float64 {
	t.Helper()
	m := mat.NewDense(3, 3, nil)
	for i := range 3 {
		for j := range 3 {
			m.Set(i, j, s.Matrix[i][j])
		}
	}
	v := mat.NewVecDense(3, []float64{b[0] - s.Offset[0], b[1] - s.Offset[1], b[2] - s.Offset[2]})
	var x mat.VecDense
	if err := x.SolveVec(m, v); err != nil {
		t.Fatal(err)
	}
	return [3]float64{x.AtVec(0), x.AtVec(1), x.AtVec(2)}
}

// TestSpinReadings: a spin log holds the field turned into the sensor's
// axes: once the distortion is undone, every reading has the magnitude of
// the Earth field plus the wire's (DOMAIN.md check value), since a rotation
// keeps lengths; the sensor stays put, the readings are evenly spaced in
// time, and the field's direction runs from the sensor's +z axis to its -z
// axis.
func TestSpinReadings(t *testing.T) {
	sc := parse(t, spinWire)
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 601 || sc.Rows() != 601 {
		t.Fatalf("%d readings (Rows %d), want 60 s at 10 Hz: 601", s.Len(), sc.Rows())
	}
	if s.Frame != ingest.FrameSensor {
		t.Errorf("frame %v, want the sensor frame", s.Frame)
	}
	if c := sc.Crossings(); len(c) != 0 {
		t.Errorf("a spin crosses nothing, got %d crossings", len(c))
	}
	const k = 999.99999986800 // nT, DOMAIN.md check value
	want := norm([3]float64{400 + k, 19100, -45300 - k})
	t0 := sc.StartTime()
	for i := range s.Len() {
		if s.X[i] != 1 || s.Y[i] != 0 || s.Z[i] != 0 || s.Group[i] != "S01" {
			t.Fatalf("reading %d at (%g, %g, %g) group %q, want (1, 0, 0) S01", i, s.X[i], s.Y[i], s.Z[i], s.Group[i])
		}
		// Unix times near 1.8e9 s carry about 2.4e-7 s (float64).
		if math.Abs(s.Time[i]-t0-float64(i)/10) > 1e-6 {
			t.Fatalf("reading %d at %g s, want %g", i, s.Time[i]-t0, float64(i)/10)
		}
		b := undistort(t, sc.Sensor, [3]float64{s.Bx[i], s.By[i], s.Bz[i]})
		if !relClose(norm(b), want, 1e-9) {
			t.Fatalf("reading %d: |B| %.6f nT after undoing the distortion, want %.6f", i, norm(b), want)
		}
	}
	// The spiral starts with the sensor's z axis along the Earth field and
	// ends against it (the wire's field tilts the total by about 1.5
	// degrees, so allow 0.05 in the cosine).
	first := undistort(t, sc.Sensor, [3]float64{s.Bx[0], s.By[0], s.Bz[0]})
	last := undistort(t, sc.Sensor, [3]float64{s.Bx[600], s.By[600], s.Bz[600]})
	if first[2]/norm(first) < 0.95 || last[2]/norm(last) > -0.95 {
		t.Errorf("field direction %v at the start and %v at the end, want along +z then -z", first, last)
	}
}

// TestSpinRotation: the spin's attitude is a proper rotation (orthonormal,
// determinant +1) at every time, and it turns the first reading's Earth
// field onto the spiral's direction.
func TestSpinRotation(t *testing.T) {
	sc := parse(t, spinWire)
	for _, tau := range []float64{0, 0.1, 7.3, 30, 45.55, 60} {
		tm := sc.StartTime() + tau
		r := sc.spinRotation(tm)
		var a mat.Dense
		m := mat.NewDense(3, 3, []float64{r[0][0], r[0][1], r[0][2], r[1][0], r[1][1], r[1][2], r[2][0], r[2][1], r[2][2]})
		a.Mul(m.T(), m)
		if !mat.EqualApprox(&a, mat.NewDiagDense(3, []float64{1, 1, 1}), 1e-12) {
			t.Errorf("t = %g s: R^T R = %v, want the identity", tau, mat.Formatted(&a))
		}
		if d := mat.Det(m); math.Abs(d-1) > 1e-12 {
			t.Errorf("t = %g s: det R = %g, want 1", tau, d)
		}
		e := sc.Earth.Field
		u := toSensor(e, r)
		s := (tm - sc.StartTime()) / 60
		c := 1 - 2*s
		phi := 2 * math.Pi * 8 * s
		d := [3]float64{math.Sqrt(1-c*c) * math.Cos(phi), math.Sqrt(1-c*c) * math.Sin(phi), c}
		for i := range 3 {
			if math.Abs(u[i]/norm(e)-d[i]) > 1e-12 {
				t.Errorf("t = %g s: Earth field in the sensor's axes along %v, want %v", tau, u, d)
				break
			}
		}
	}
}

// TestSpinCoverage: the field's directions in the sensor's axes cover the
// sphere evenly: the scatter matrix mean(u u^T) of a uniform distribution
// on the sphere is I/3, and the spiral's eigenvalues (gonum's symmetric
// eigensolver) are within 0.02 of 1/3. The calibrate package refuses a spin
// whose smallest eigenvalue is below 0.05.
func TestSpinCoverage(t *testing.T) {
	text := strings.Replace(spinWire, "current_a = 10", "current_a = 0", 1)
	text = strings.Replace(text, "duration_s = 60", "duration_s = 240", 1)
	text = strings.Replace(text, "turns = 8", "turns = 16", 1)
	sc := parse(t, text)
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	scatter := mat.NewSymDense(3, nil)
	for i := range s.Len() {
		u := undistort(t, sc.Sensor, [3]float64{s.Bx[i], s.By[i], s.Bz[i]})
		n := norm(u)
		for a := range 3 {
			for b := a; b < 3; b++ {
				scatter.SetSym(a, b, scatter.At(a, b)+u[a]*u[b]/(n*n)/float64(s.Len()))
			}
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(scatter, false) {
		t.Fatal("eigen decomposition failed")
	}
	for _, v := range eig.Values(nil) {
		if math.Abs(v-1.0/3) > 0.02 {
			t.Errorf("scatter eigenvalues %v, want all within 0.02 of 1/3", eig.Values(nil))
			break
		}
	}
}

// TestSpinScenario: a spin needs no conductor, takes a base station, and
// refuses keys that make no sense for it.
func TestSpinScenario(t *testing.T) {
	bare := `
[sensor]
sample_rate_hz = 5
noise_nt = 0.5
[survey]
pattern = "spin"
duration_s = 20
[base]
margin_s = 10
`
	sc, err := Parse([]byte(bare), "s.toml")
	if err != nil {
		t.Fatalf("a spin without conductors: %v", err)
	}
	if sc.Rows() != 101 {
		t.Errorf("%d rows, want 20 s at 5 Hz: 101", sc.Rows())
	}
	b, err := SimulateBase(sc)
	if err != nil {
		t.Fatal(err)
	}
	if b.Len() != 41 {
		t.Errorf("base station: %d readings, want 10 + 20 + 10 s at 1 Hz: 41", b.Len())
	}
	cases := []struct{ old, new, want string }{
		{"duration_s = 20", "duration_s = -1", "s.toml:7:14: spin duration -1 s"},
		{"duration_s = 20", "duration_s = 20\nturns = -3", "spin turns -3"},
		{"sample_rate_hz = 5", "attitude = \"walking\"\nsample_rate_hz = 5", "drop attitude"},
		{"sample_rate_hz = 5\n", "", "give sensor.sample_rate_hz"},
		{"pattern = \"spin\"", "pattern = \"spiral\"", `unknown pattern "spiral": want "traverses", "grid", "spin" or "fixed"`},
		{"duration_s = 20", "duration_s = 20\nat = [1, 2, 3]", "s.toml:8"},
	}
	for _, tc := range cases {
		text := strings.Replace(bare, tc.old, tc.new, 1)
		if text == bare {
			t.Fatalf("case %q did not change the scenario", tc.new)
		}
		_, err := Parse([]byte(text), "s.toml")
		if err == nil || !strings.HasPrefix(err.Error(), "simulate: s.toml") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want it to name s.toml and contain %q", tc.new, err, tc.want)
		}
	}
	// Sample spacing is a distance along a line: meaningless for a spin.
	text := strings.Replace(bare, "sample_rate_hz = 5", "", 1)
	text = strings.Replace(text, "duration_s = 20", "duration_s = 20\nsample_spacing_m = 0.1", 1)
	if _, err := Parse([]byte(text), "s.toml"); err == nil || !strings.Contains(err.Error(), "a spin does not move") {
		t.Errorf("spin with sample_spacing_m: %v", err)
	}
}

// BenchmarkSimulateSpin: a four-minute spin at 10 Hz, the Kestrel Moor
// calibration log.
func BenchmarkSimulateSpin(b *testing.B) {
	benchSimulate(b, "../../testdata/scenarios/kestrel-moor-spin.toml")
}
