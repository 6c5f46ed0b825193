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
	for _, tc := range []struct{ name, body, want string }{
		{"future version", `{"version": 2, "method": "ellipsoid"}`, "version 2 is not supported"},
		{"no version", `{"method": "zero"}`, `no "version"`},
		{"syntax", "{\"version\": 1,\n \"method\": \"zero\",\n \"offset_nt\": [1, 2,, 3]}", ":3:"},
		{"unknown field", `{"version": 1, "method": "zero", "offest_nt": [1,2,3], "matrix": [[1,0,0],[0,1,0],[0,0,1]]}`, "offest_nt"},
		{"singular", `{"version": 1, "method": "zero", "matrix": [[1,0,0],[0,0,0],[0,0,1]]}`, "singular"},
		{"method", `{"version": 1, "method": "guess", "matrix": [[1,0,0],[0,1,0],[0,0,1]]}`, `"guess"`},
		{"trailing", "{\"version\": 1, \"method\": \"zero\", \"matrix\": [[1,0,0],[0,1,0],[0,0,1]]}\n{}", ":2:2: invalid character"},
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
	// Standard error 0.5·√(2/400) = 0.035 nT; allow 5 sigma.
	for k := 0; k < 2; k++ {
		if !f.Determined[k] || math.Abs(f.Offset[k]-off[k]) > 5*f.Sigma[k] || math.Abs(f.Sigma[k]-0.0354) > 0.005 {
			t.Errorf("axis %d: offset %.4f ± %.4f, want %.4f ± 0.035", k, f.Offset[k], f.Sigma[k], off[k])
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
	if len(c.Notes) != 1 || !strings.Contains(c.Notes[0], "z axis") {
		t.Errorf("notes %q", c.Notes)
	}
	if _, err := FlipOffset(r0, nil, 2); err == nil {
		t.Error("empty 180 degree log: want an error")
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
