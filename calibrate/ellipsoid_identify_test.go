package calibrate

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// A strongly distorted sensor (soft iron of 15-20% and a few per cent of
// cross terms, as a sensor beside steel reads), invented for these tests.
var strongDistortion = [3][3]float64{
	{1.20, 0.05, -0.03},
	{0.05, 0.85, 0.08},
	{-0.03, 0.08, 1.05},
}

var strongOffset = [3]float64{5200, -3100, 1800}

// turns simulates whole turns of the sensor in a 50 000 nT field, 600
// readings each: for each letter, the field direction runs round the
// great circle perpendicular to that sensor axis (a turn about it).
func turns(rng *rand.Rand, axes string, noise float64) [][3]float64 {
	var out [][3]float64
	for _, ax := range axes {
		for i := 0; i < 600; i++ {
			a := 2 * math.Pi * float64(i) / 600
			c, s := math.Cos(a), math.Sin(a)
			u := map[rune][3]float64{'z': {c, s, 0}, 'x': {0, c, s}, 'y': {s, 0, c}}[ax]
			r := matVec3(strongDistortion, [3]float64{50000 * u[0], 50000 * u[1], 50000 * u[2]})
			for k := range r {
				r[k] += strongOffset[k] + noise*rng.NormFloat64()
			}
			out = append(out, r)
		}
	}
	return out
}

// orthogonality returns max |(WD)ᵀ(WD)/s² - I| with s = R/F: zero when W
// undoes D up to a rotation and the scale R/F.
func orthogonality(W, D [3][3]float64, s float64) float64 {
	wd := matMul3(W, D)
	worst := 0.0
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			var g float64
			for k := 0; k < 3; k++ {
				g += wd[k][i] * wd[k][j]
			}
			want := 0.0
			if i == j {
				want = 1
			}
			worst = math.Max(worst, math.Abs(g/(s*s)-want))
		}
	}
	return worst
}

func TestFitEllipsoidRefusesTwoTurns(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	r := turns(rng, "zy", 1)
	// The premise, checked without FitEllipsoid: the readings lie on two
	// great circles, i.e. on the planes P1 = 0 and P2 = 0 through the
	// centre of the true ellipsoid Q = 0, so they lie on every quadric
	// Q + λ P1 P2 = 0 of that pencil (a product of the plane equations
	// vanishes on both planes). In the true field frame b = D⁻¹(r - o)
	// the planes are b_z = 0 and b_y = 0, and |b|² + λ b_y b_z = F² is
	// another ellipsoid for small λ that the readings fit just as well.
	dinv := inverse3(strongDistortion)
	for _, v := range r[:5] {
		b := matVec3(dinv, [3]float64{v[0] - strongOffset[0], v[1] - strongOffset[1], v[2] - strongOffset[2]})
		q := b[0]*b[0] + b[1]*b[1] + b[2]*b[2] + 0.2*b[1]*b[2]
		if math.Abs(math.Sqrt(q)-50000) > 5 {
			t.Fatalf("reading %v is not on the second ellipsoid of the pencil: %.1f nT", v, math.Sqrt(q))
		}
	}
	_, err := FitEllipsoid(r, &EllipsoidSettings{Reference: 50000})
	if !errors.Is(err, ErrCoverage) {
		t.Fatalf("err = %v, want ErrCoverage: a two-turn spin leaves a matrix term undetermined", err)
	}
	// The free term is the cross term of the two turn axes (y and z), and
	// the turn to add is about the third, x.
	for _, want := range []string{"matrix term yz undetermined", "axis near (1.00, 0.0", "two axes"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q lacks %q", err, want)
		}
	}
	// A third turn determines it: the offset to the noise and W D a
	// rotation.
	res, err := FitEllipsoid(turns(rng, "zyx", 1), &EllipsoidSettings{Reference: 50000})
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 3; k++ {
		if d := math.Abs(res.Offset[k] - strongOffset[k]); d > 1 {
			t.Errorf("three turns: offset[%d] off by %.2f nT, want below the 1 nT noise", k, d)
		}
	}
	if o := orthogonality(res.Matrix, strongDistortion, 1); o > 1e-4 {
		t.Errorf("three turns: max |(WD)ᵀ(WD) - I| = %.2g, want <= 1e-4", o)
	}
	// Noise-free readings cannot hide the free term (the standard error
	// assumes at least 1e-5 of the field of noise).
	if _, err := FitEllipsoid(turns(rng, "zy", 0), &EllipsoidSettings{Reference: 50000}); !errors.Is(err, ErrCoverage) {
		t.Errorf("noise-free two turns: err = %v, want ErrCoverage", err)
	}
}

func TestFitEllipsoidReportsStandardErrors(t *testing.T) {
	// For n readings spread evenly over the sphere with radial noise σ,
	// the offset's standard error is about σ sqrt(3/n) per axis (each
	// reading carries 1/3 of its information along each axis): 0.039 nT
	// for σ = 1 nT, n = 2000, scaled by the distortion.
	rng := rand.New(rand.NewPCG(21, 22))
	r := spinLog(rng, 2000, 50000, identity3(), [3]float64{100, 200, 300}, 1, nil)
	res, err := FitEllipsoid(r, &EllipsoidSettings{Reference: 50000})
	if err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(3.0 / 2000)
	for k, s := range res.OffsetSigma {
		if s < 0.8*want || s > 1.25*want {
			t.Errorf("offset sigma[%d] = %.4f nT, want about %.4f nT", k, s, want)
		}
	}
}

func TestFitEllipsoidLeavesOutClippedReadings(t *testing.T) {
	// A fluxgate with a ±60 000 nT range turned in a 50 000 nT field:
	// with a 20% scale error and a 5200 nT offset its x axis would read up
	// to 65 000 nT, and reads 60 000 nT there instead.
	rng := rand.New(rand.NewPCG(31, 32))
	r := spinLog(rng, 2000, 50000, strongDistortion, strongOffset, 1, nil)
	clipped := 0
	for i := range r {
		if r[i][0] > 60000 {
			r[i][0] = 60000
			clipped++
		}
	}
	if clipped < 20 {
		t.Fatalf("only %d readings clipped: the fixture should saturate", clipped)
	}
	res, err := FitEllipsoid(r, &EllipsoidSettings{Reference: 50000})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Clipped) != clipped {
		t.Errorf("%d readings left out as clipped, want %d", len(res.Clipped), clipped)
	}
	if len(res.Warnings) == 0 || !strings.Contains(res.Warnings[0], "bx reads exactly 60000 nT") {
		t.Errorf("warnings %q: want one naming bx at 60000 nT", res.Warnings)
	}
	// DOMAIN.md (Calibration): the fit recovers the offset to the noise.
	for k := 0; k < 3; k++ {
		if d := math.Abs(res.Offset[k] - strongOffset[k]); d > 1 {
			t.Errorf("offset[%d] off by %.2f nT, want below the 1 nT noise", k, d)
		}
	}
	if o := orthogonality(res.Matrix, strongDistortion, 1); o > 1e-4 {
		t.Errorf("max |(WD)ᵀ(WD) - I| = %.2g, want <= 1e-4", o)
	}
}

func TestFitEllipsoidLeavesOutSpikes(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	r := spinLog(rng, 2000, 50000, strongDistortion, strongOffset, 1, nil)
	spikes := []int{17, 400, 901, 1333, 1998}
	for _, i := range spikes {
		r[i][0] += 8000
	}
	res, err := FitEllipsoid(r, &EllipsoidSettings{Reference: 50000})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Outliers) != len(spikes) {
		t.Fatalf("outliers %v, want %v", res.Outliers, spikes)
	}
	for i, j := range spikes {
		if res.Outliers[i] != j {
			t.Errorf("outliers %v, want %v", res.Outliers, spikes)
			break
		}
	}
	for k := 0; k < 3; k++ {
		if d := math.Abs(res.Offset[k] - strongOffset[k]); d > 1 {
			t.Errorf("offset[%d] off by %.2f nT, want below the 1 nT noise", k, d)
		}
	}
	if res.After.Std > 1.2 {
		t.Errorf("after spread %.2f nT, want the 1 nT noise", res.After.Std)
	}
	// A spin where a quarter of the log is off the ellipsoid is refused,
	// not trimmed into agreement.
	for i := 0; i < 500; i++ {
		r[i][2] += 3000
	}
	if _, err := FitEllipsoid(r, nil); err == nil || !strings.Contains(err.Error(), "do not lie on an ellipsoid") {
		t.Errorf("a quarter of the log shifted: err = %v, want a refusal", err)
	}
}

func TestFitEllipsoidQuantisedIsNotClipped(t *testing.T) {
	// A sensor that reports in steps of 150 nT: the extreme value of an
	// axis is shared by a few readings, as every step near it is. Turned
	// evenly, each component is uniformly distributed over [-F, F]
	// (Archimedes' hat-box theorem), so no step near the end is favoured.
	rng := rand.New(rand.NewPCG(51, 52))
	r := spinLog(rng, 3000, 50000, identity3(), [3]float64{100, 200, 300}, 1, nil)
	for i := range r {
		for k := range r[i] {
			r[i][k] = 150 * math.Round(r[i][k]/150)
		}
	}
	res, err := FitEllipsoid(r, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Clipped) != 0 {
		t.Errorf("%d quantised readings taken as clipped: %q", len(res.Clipped), res.Warnings)
	}
}

func TestCheckCoverageDeadAxis(t *testing.T) {
	rng := rand.New(rand.NewPCG(61, 62))
	for _, stuck := range []float64{0, 1800} {
		r := spinLog(rng, 1000, 50000, strongDistortion, strongOffset, 1, nil)
		for i := range r {
			r[i][2] = stuck + rng.NormFloat64()
		}
		_, err := CheckCoverage(r, nil)
		if !errors.Is(err, ErrDeadAxis) || errors.Is(err, ErrCoverage) {
			t.Fatalf("bz stuck at %g: err = %v, want ErrDeadAxis", stuck, err)
		}
		if !strings.Contains(err.Error(), "bz does not change") || !strings.Contains(err.Error(), "z channel appears dead or stuck") {
			t.Errorf("error %q does not name the z channel", err)
		}
	}
	// A turn about z alone also keeps bz steady, but bx and by then keep
	// a steady magnitude (an ellipse of axes 1.2 and 0.85): that is the
	// orientations' fault, and said so.
	var r [][3]float64
	for i := 0; i < 500; i++ {
		a := 2 * math.Pi * float64(i) / 500
		v := matVec3(strongDistortion, [3]float64{20000 * math.Cos(a), 20000 * math.Sin(a), -45000})
		r = append(r, [3]float64{v[0] + rng.NormFloat64(), v[1] + rng.NormFloat64(), -45000 + rng.NormFloat64()})
	}
	_, err := CheckCoverage(r, nil)
	if !errors.Is(err, ErrCoverage) || !strings.Contains(err.Error(), "close to a plane") {
		t.Errorf("turn about z: err = %v, want the plane refusal", err)
	}
}

func TestZeroOffsetRefusesEarthField(t *testing.T) {
	rng := rand.New(rand.NewPCG(71, 72))
	log := func(b [3]float64) [][3]float64 {
		var r [][3]float64
		for i := 0; i < 200; i++ {
			r = append(r, [3]float64{b[0] + 120 + rng.NormFloat64(), b[1] - 75 + rng.NormFloat64(), b[2] + 40 + rng.NormFloat64()})
		}
		return r
	}
	// Outside a shield the sensor reads the Earth's field, at least about
	// 22 000 nT anywhere at the surface (IGRF): not an offset.
	if _, err := ZeroOffset(log([3]float64{3000, 19500, -46000})); err == nil || !strings.Contains(err.Error(), "inside a closed magnetic shield") {
		t.Errorf("Earth-field log: err = %v, want a refusal", err)
	}
	res, err := ZeroOffset(log([3]float64{}))
	if err != nil || len(res.Warnings) != 0 {
		t.Fatalf("shield log: err %v, warnings %q", err, res.Warnings)
	}
	if math.Abs(res.Offset[0]-120) > 0.5 || math.Abs(res.Offset[1]+75) > 0.5 || math.Abs(res.Offset[2]-40) > 0.5 {
		t.Errorf("shield log: offset %v, want (120, -75, 40)", res.Offset)
	}
	// A shield left open a crack: a few thousand nT gets a warning.
	res, err = ZeroOffset(log([3]float64{0, 0, 3000}))
	if err != nil || len(res.Warnings) != 1 || !strings.Contains(res.Warnings[0], "was the shield closed") {
		t.Errorf("3000 nT: err %v, warnings %q, want one warning", err, res.Warnings)
	}
}

func inverse3(m [3][3]float64) [3][3]float64 {
	det := m[0][0]*(m[1][1]*m[2][2]-m[1][2]*m[2][1]) - m[0][1]*(m[1][0]*m[2][2]-m[1][2]*m[2][0]) + m[0][2]*(m[1][0]*m[2][1]-m[1][1]*m[2][0])
	var inv [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			a, b := (j+1)%3, (j+2)%3
			c, d := (i+1)%3, (i+2)%3
			inv[i][j] = (m[a][c]*m[b][d] - m[a][d]*m[b][c]) / det
		}
	}
	return inv
}
