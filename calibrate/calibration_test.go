package calibrate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

func TestCalibrationRoundTripAndApply(t *testing.T) {
	dir := t.TempDir()
	spinPath := filepath.Join(dir, "harrow-fen-spin.csv")
	if err := os.WriteFile(spinPath, []byte("time,bx,by,bz\n0,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(31, 32))
	offset := [3]float64{1200, -800, 350}
	r := spinLog(rng, 2000, 50000, testDistortion, offset, 1, nil)
	res, err := FitEllipsoid(r, &EllipsoidSettings{Reference: 50000, Refine: true})
	if err != nil {
		t.Fatal(err)
	}
	in, err := FileInput("spin", spinPath, len(r))
	if err != nil {
		t.Fatal(err)
	}
	// SHA-256 of "time,bx,by,bz\n0,1,2,3\n" (computed with sha256sum).
	if in.SHA256 != "a7333b3ff636c6735feca9cb4856cdd8d10c2db0246a78095b7fbe92929eb787" {
		t.Errorf("sha256 %q", in.SHA256)
	}
	cal := FromEllipsoid(res, in)
	path := filepath.Join(dir, "cal.json")
	if err := cal.Save(path); err != nil {
		t.Fatal(err)
	}
	got, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if got.Offset != cal.Offset || got.Matrix != cal.Matrix || got.Inputs[0] != in || *got.After != *cal.After {
		t.Errorf("round trip changed the calibration:\n%+v\n%+v", got, cal)
	}
	// Apply to the spin log itself: |B| becomes the reference within noise.
	s := &ingest.Samples{Source: "spin"}
	for i, v := range r {
		s.Time = append(s.Time, float64(i))
		s.Bx, s.By, s.Bz = append(s.Bx, v[0]), append(s.By, v[1]), append(s.Bz, v[2])
	}
	if err := got.Apply(s); err != nil {
		t.Fatal(err)
	}
	for i := range r {
		if m := math.Sqrt(s.Bx[i]*s.Bx[i] + s.By[i]*s.By[i] + s.Bz[i]*s.Bz[i]); math.Abs(m-50000) > 6 {
			t.Fatalf("row %d: corrected |B| = %.2f, want 50000 within 6 sigma", i, m)
		}
	}
	sum := got.Summary()
	for _, want := range []string{"ellipsoid", "harrow-fen-spin.csv", "offset (1200.", "->"} {
		if !strings.Contains(sum, want) {
			t.Errorf("summary %q lacks %q", sum, want)
		}
	}
}

func TestLoadRejects(t *testing.T) {
	dir := t.TempDir()
	// good is a complete file; each case below spoils one field of it.
	const good = `"version": 1, "method": "zero", "created": "2026-11-30T09:12:00Z", "offset_nt": [1, 2, 3], "matrix": [[1,0,0],[0,1,0],[0,0,1]]`
	spoil := func(old, new string) string {
		if !strings.Contains(good, old) {
			t.Fatalf("%q is not in the good file", old)
		}
		return "{" + strings.Replace(good, old, new, 1) + "}"
	}
	for _, tc := range []struct{ name, body, want string }{
		{"future version", `{"version": 2, "method": "ellipsoid"}`, "version 2 is not supported"},
		{"no version", `{"method": "zero"}`, `no "version"`},
		{"syntax", "{\"version\": 1,\n \"method\": \"zero\",\n \"offset_nt\": [1, 2,, 3]}", ":3:"},
		{"not JSON", "method = zero\n", ":1:2: not a calibration file: a calibration file is JSON"},
		{"text for a number", spoil(`"created": "2026-11-30T09:12:00Z"`, `"created": "2026-11-30T09:12:00Z", "reference_nt": "fifty"`), "field reference_nt: want a number, found a JSON string"},
		{"unknown field", spoil(`"offset_nt"`, `"offest_nt": [1,2,3], "offset_nt"`), "offest_nt"},
		{"singular", spoil(`[[1,0,0],[0,1,0],[0,0,1]]`, `[[1,0,0],[0,0,0],[0,0,1]]`), "singular"},
		{"method", spoil(`"zero"`, `"guess"`), `"guess"`},
		{"trailing", "{" + good + "}\n{}", ":2:2: not a calibration file"},
		// Fixed-size arrays would take these silently: a short offset
		// padded with zeros, extra values dropped, a 2x2 matrix padded
		// (and then called singular), a missing date read as year 1.
		{"short offset", spoil(`[1, 2, 3]`, `[1, 2]`), "offset_nt has 2 values, want 3"},
		{"long offset", spoil(`[1, 2, 3]`, `[1, 2, 3, 4]`), "offset_nt has 4 values, want 3"},
		{"offset not a list", spoil(`[1, 2, 3]`, `5`), "offset_nt is not a list of three numbers"},
		{"no offset", spoil(`"offset_nt": [1, 2, 3], `, ``), `no "offset_nt" field`},
		{"null offset", spoil(`[1, 2, 3]`, `null`), `no "offset_nt" field`},
		{"short sigma", spoil(`[1, 2, 3]`, `[1, 2, 3], "offset_sigma_nt": [0.1]`), "offset_sigma_nt has 1 value, want 3"},
		{"negative sigma", spoil(`[1, 2, 3]`, `[1, 2, 3], "offset_sigma_nt": [0.1, -1, 0.1]`), "offset_sigma_nt[1] is -1"},
		{"2x2 matrix", spoil(`[[1,0,0],[0,1,0],[0,0,1]]`, `[[1,0],[0,1]]`), "matrix has 2 rows, want 3x3"},
		{"short matrix row", spoil(`[[1,0,0],[0,1,0],[0,0,1]]`, `[[1,0,0],[0,1],[0,0,1]]`), "matrix row 2 has 2 values, want 3x3"},
		{"long matrix row", spoil(`[[1,0,0],[0,1,0],[0,0,1]]`, `[[1,0,0],[0,1,0],[0,0,1,0]]`), "matrix row 3 has 4 values, want 3x3"},
		{"no matrix", spoil(`, "matrix": [[1,0,0],[0,1,0],[0,0,1]]`, ``), `no "matrix" field`},
		{"no created", spoil(`"created": "2026-11-30T09:12:00Z", `, ``), `no "created" field`},
		{"zero created", spoil(`2026-11-30T09:12:00Z`, `0001-01-01T00:00:00Z`), "created is 0001-01-01T00:00:00Z, the zero time"},
		{"no method", spoil(`"method": "zero", `, ``), `no "method" field`},
		{"negative reference", spoil(`"zero"`, `"zero", "reference_nt": -49000`), "reference_nt is -49000"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := filepath.Join(dir, "cal.json")
			if err := os.WriteFile(p, []byte(tc.body), 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := Load(p)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "cal.json") {
				t.Errorf("err = %v, want one naming cal.json and %q", err, tc.want)
			}
		})
	}
	// The good file itself loads, with its date.
	p := filepath.Join(dir, "good.json")
	if err := os.WriteFile(p, []byte("{"+good+"}"), 0o644); err != nil {
		t.Fatal(err)
	}
	c, err := Load(p)
	if err != nil {
		t.Fatal(err)
	}
	if c.Offset != [3]float64{1, 2, 3} || !strings.Contains(c.Summary(), "zero calibration of 2026-11-30") {
		t.Errorf("good file: offset %v, summary %q", c.Offset, c.Summary())
	}
}

func TestSaveIsAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "cal.json")
	bad := &Calibration{Version: Version, Method: MethodZero} // zero matrix: invalid
	if err := bad.Save(p); err == nil {
		t.Fatal("saving a singular calibration: want an error")
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("files left behind: %v", entries)
	}
}

func TestFlipAndZeroOffsets(t *testing.T) {
	// Flip method (observatory practice, DOMAIN.md): offset = (r0 + r180)/2
	// on the axes perpendicular to the rotation axis.
	rng := rand.New(rand.NewPCG(41, 42))
	off := [3]float64{12.5, -7.25, 3}
	field := [3]float64{18000, 5000, 44000}
	var r0, r180, zero [][3]float64
	for i := 0; i < 400; i++ {
		r0 = append(r0, [3]float64{field[0] + off[0] + rng.NormFloat64(), field[1] + off[1] + rng.NormFloat64(), field[2] + off[2] + rng.NormFloat64()})
		// Turned 180 degrees about z: x and y change sign.
		r180 = append(r180, [3]float64{-field[0] + off[0] + rng.NormFloat64(), -field[1] + off[1] + rng.NormFloat64(), field[2] + off[2] + rng.NormFloat64()})
		zero = append(zero, [3]float64{off[0] + rng.NormFloat64(), off[1] + rng.NormFloat64(), off[2] + rng.NormFloat64()})
	}
	f, err := FlipOffset(r0, r180, 2)
	if err != nil {
		t.Fatal(err)
	}
	// Standard error from the scatter 0.5·√(2/400) = 0.035 nT; allow 5
	// of them (the simulated sensor has no cross-axis coupling, for which
	// Sigma allows besides: 1% of the 44 003 nT along z).
	for k := 0; k < 2; k++ {
		if !f.Determined[k] || math.Abs(f.Offset[k]-off[k]) > 5*f.Scatter[k] || math.Abs(f.Scatter[k]-0.0354) > 0.005 {
			t.Errorf("axis %d: offset %.4f ± %.4f from the scatter, want %.4f ± 0.035", k, f.Offset[k], f.Scatter[k], off[k])
		}
		if want := math.Hypot(f.Scatter[k], 0.01*(field[2]+off[2])); math.Abs(f.Sigma[k]-want) > 1e-5*want {
			t.Errorf("axis %d: sigma %.4f, want %.4f (the scatter and 1%% of the field along z)", k, f.Sigma[k], want)
		}
	}
	if f.Determined[2] || f.Offset[2] != 0 {
		t.Error("the rotation axis offset must be left undetermined")
	}
	z, err := ZeroOffset(zero)
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 3; k++ {
		if math.Abs(z.Offset[k]-off[k]) > 5*z.Sigma[k] {
			t.Errorf("zero-field axis %d: %.4f ± %.4f, want %.4f", k, z.Offset[k], z.Sigma[k], off[k])
		}
	}
	c := FromOffset(MethodFlip, f)
	if len(c.Notes) != 2 || !strings.Contains(c.Notes[0], "z axis") || !strings.Contains(c.Notes[1], "cross-axis coupling") {
		t.Errorf("notes %q", c.Notes)
	}
	// The file says which axis it could not determine, as data too (its
	// offset_sigma_nt of 0 there means nothing).
	if len(c.Undetermined) != 1 || c.Undetermined[0] != "z" {
		t.Errorf("offset_undetermined %q, want [z]", c.Undetermined)
	}
	// So does the one-line summary a survey's report carries: a 0.0 there
	// read as a measured offset (found in review).
	if sum := c.Summary(); !strings.Contains(sum, "(z not determined, left at 0)") {
		t.Errorf("summary %q does not say z was not determined", sum)
	}
	if _, err := FlipOffset(r0, nil, 2); err == nil {
		t.Error("empty 180 degree log: want an error")
	}
}

// flipLogs returns 200 readings of the field b plus the offset off with
// the sensor at 0 degrees and turned 180 degrees about axis turn (the two
// other components change sign), with 1 nT noise; tilt adds d nT to the
// turn axis in the second log, as a turn axis slightly out of line does.
func flipLogs(rng *rand.Rand, b, off [3]float64, turn int, d float64) (r0, r180 [][3]float64) {
	for i := 0; i < 200; i++ {
		var a, c [3]float64
		for k := 0; k < 3; k++ {
			sign := -1.0
			if k == turn {
				sign = 1
			}
			a[k] = b[k] + off[k] + rng.NormFloat64()
			c[k] = sign*b[k] + off[k] + rng.NormFloat64()
		}
		c[turn] += d
		r0, r180 = append(r0, a), append(r180, c)
	}
	return r0, r180
}

// TestFlipChecks: logs that a turn of 180 degrees about the given axis
// cannot produce are refused with a message saying what is wrong; true
// flip logs pass, also where one axis across the turn axis reads almost no
// field. The field is a mid-latitude one (|B| about 50 000 nT, inclination
// about 69 degrees, as over Britain in the IGRF) in sensor axes.
func TestFlipChecks(t *testing.T) {
	off := [3]float64{310, -240, 180}
	same := func(r [][3]float64) [][3]float64 { return r }
	for _, tc := range []struct {
		name  string
		b     [3]float64
		turn  int // the axis the sensor was turned about
		given int // the axis FlipOffset is told
		tilt  float64
		edit  func([][3]float64) [][3]float64 // applied to r180 (nil: none)
		want  string                          // "" for a good pair
	}{
		{"good flip about z", [3]float64{18000, 5000, -46000}, 2, 2, 0, nil, ""},
		{"good flip about x", [3]float64{-46000, 18000, 5000}, 0, 0, 0, nil, ""},
		{"y across the turn reads almost nothing", [3]float64{18500, 40, -46000}, 2, 2, 0, nil, ""},
		{"turn axis 1 degree out of line", [3]float64{18000, 5000, -46000}, 2, 2, 2 * 0.01745 * 49700, nil, ""},
		{"large platform offset", [3]float64{18000, 5000, -46000}, 2, 2, 0, nil, ""},
		{"one log twice", [3]float64{18000, 5000, -46000}, 2, 2, 0, same, "the two logs read the same on x and y"},
		{"turned about z, told x", [3]float64{18000, 5000, -46000}, 2, 0, 0, nil, "the flip axis x reads 36000 nT differently in the two logs (means 18310 and -17690 nT), where a turn about x leaves it unchanged: was the sensor turned about x, with that axis held in line? (z reads the same in both: a turn about z?)"},
		{"turned about z, told x, x reads little", [3]float64{-420, 17360, -46720}, 2, 0, 0, nil, "the offset found on z, -46540 nT, is 94% of the 49762 nT field"},
		{"turn axis 3 degrees out of line", [3]float64{18000, 5000, -46000}, 2, 2, 2 * 0.0524 * 49700, nil, "the flip axis z reads 520"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(51, 52))
			o := off
			if strings.HasPrefix(tc.name, "large") {
				o = [3]float64{8000, -6000, 3000}
			}
			r0, r180 := flipLogs(rng, tc.b, o, tc.turn, tc.tilt)
			if tc.edit != nil {
				r180 = tc.edit(r0)
			}
			res, err := FlipOffset(r0, r180, tc.given)
			if tc.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				for k := 0; k < 3; k++ {
					if k != tc.turn && math.Abs(res.Offset[k]-o[k]) > 1 {
						t.Errorf("axis %d: offset %.2f, want %.0f", k, res.Offset[k], o[k])
					}
				}
				return
			}
			if err == nil {
				t.Fatalf("offset %v: want an error containing %q", res.Offset, tc.want)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q lacks %q", err, tc.want)
			}
		})
	}
}

func ExampleFitEllipsoid() {
	// A sensor with a hard-iron offset turned through all orientations in a
	// 50 000 nT field (noise-free, directions on a spiral).
	var r [][3]float64
	const n = 500
	for i := 0; i < n; i++ {
		z := 1 - 2*(float64(i)+0.5)/n
		phi := float64(i) * math.Pi * (3 - math.Sqrt(5))
		rho := math.Sqrt(1 - z*z)
		r = append(r, [3]float64{50000*rho*math.Cos(phi) + 300, 1.02*50000*rho*math.Sin(phi) - 120, 50000*z + 45})
	}
	res, err := FitEllipsoid(r, &EllipsoidSettings{Reference: 50000})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("offset (%.1f, %.1f, %.1f) nT\n", res.Offset[0], res.Offset[1], res.Offset[2])
	fmt.Printf("|B| spread %.0f nT -> %.3f nT\n", res.Before.Std, res.After.Std)
	// Output:
	// offset (300.0, -120.0, 45.0) nT
	// |B| spread 353 nT -> 0.000 nT
}

func BenchmarkApplyColumns(b *testing.B) {
	// Calibration application should run at memory speed: three columns
	// read and written once.
	const n = 1 << 20
	bx, by, bz := make([]float64, n), make([]float64, n), make([]float64, n)
	c := &Calibration{Version: Version, Method: MethodEllipsoid, Offset: [3]float64{1, 2, 3}, Matrix: testDistortion}
	b.SetBytes(2 * 3 * 8 * n) // read and write 3 float64 per row
	for b.Loop() {
		c.ApplyColumns(bx, by, bz)
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
}

func ExampleCalibration_Apply() {
	// A flip calibration applied to two readings of a Kestrel Moor traverse.
	cal := &Calibration{Version: Version, Method: MethodFlip, Offset: [3]float64{12.5, -7.25, 0}, Matrix: identity3()}
	s := &ingest.Samples{Source: "kestrel-moor-T3.csv", Time: []float64{0, 0.1},
		Bx: []float64{1512.5, 1513.5}, By: []float64{20792.75, 20793.75}, Bz: []float64{-47500, -47499}}
	if err := cal.Apply(s); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Bx, s.By, s.Bz)
	// Output: [1500 1501] [20800 20801] [-47500 -47499]
}
