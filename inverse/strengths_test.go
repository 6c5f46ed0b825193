package inverse

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestFitStrengthsCheckValue: one reading of the DOMAIN.md check case "10 A along +y
// through (0,0,-1), sensor (1,0,0)" (Bx = +999.999999868 nT, Bz = -999.999999868 nT)
// gives back 10 A.
func TestFitStrengthsCheckValue(t *testing.T) {
	p := &Problem{
		Points: [][3]float64{{1, 0, 0}},
		Fields: [][3]float64{{999.999999868, 0, -999.999999868}},
		Sigma:  1,
	}
	line := Line{Point: [3]float64{0, 0, -1}, Dir: [3]float64{0, 1, 0}}
	r, err := FitStrengths(p, []Source{line}, &Settings{Background: BackgroundNone})
	if err != nil {
		t.Fatal(err)
	}
	if !relClose(r.Strengths[0], 10, 1e-9) {
		t.Errorf("current %v, want 10 A", r.Strengths[0])
	}
	if r.Status != Linear || len(r.Sources) != 1 || !relClose(r.Sources[0].Current, 10, 1e-9) || !relClose(r.Sources[0].Depth, 1, 1e-12) {
		t.Errorf("result %+v", r.Sources)
	}
}

// TestFitStrengthsAgainstGonum compares the strengths and their covariance with gonum's
// own least-squares solve and matrix inverse of the normal matrix, on a mixed set of
// sources (line, segment, two-segment polyline, dipole) with a uniform background.
func TestFitStrengthsAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	pts := grid(5, 21, 2, 0.5, 0.1)
	srcs := []Source{
		Line{Point: [3]float64{0, 0, -1}, Dir: [3]float64{0.2, 1, 0}},
		Segment{A: [3]float64{-3, 1.5, -0.6}, B: [3]float64{3, 1.2, -0.6}},
		Polyline{Vertices: [][3]float64{{-3, -1.5, -0.8}, {0, -1.2, -0.9}, {3, -1.6, -0.7}}},
		Dipole{Pos: [3]float64{0.5, 0.3, -1.5}},
	}
	truth := []float64{12, -5, 7, 6.5, 3, -2, 4}
	const sigma = 3.0
	fields := make([][3]float64, len(pts))
	for i, r := range pts {
		b := [3]float64{100, -50, 20}
		k := 0
		for _, s := range srcs {
			ns := s.NumStrengths()
			b = add(b, scale(Fields(s, [][3]float64{r}, truth[k:k+ns], nil)[0], nT))
			k += ns
		}
		for j := range 3 {
			b[j] += sigma * rng.NormFloat64()
		}
		fields[i] = b
	}
	res, err := FitStrengths(&Problem{Points: pts, Fields: fields, Sigma: sigma}, srcs, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Reference: gonum mat.Dense.Solve (QR least squares) and sigma^2 (A^T A)^-1.
	q := len(truth) + 3
	A := mat.NewDense(3*len(pts), q, nil)
	y := mat.NewVecDense(3*len(pts), nil)
	for i, r := range pts {
		k := 0
		for _, s := range srcs {
			ns := s.NumStrengths()
			b := make([][3]float64, ns)
			s.Basis(r, b)
			for c := range ns {
				for j := range 3 {
					A.Set(3*i+j, k+c, b[c][j]*nT)
				}
			}
			k += ns
		}
		for j := range 3 {
			A.Set(3*i+j, len(truth)+j, 1)
			y.SetVec(3*i+j, fields[i][j])
		}
	}
	var c mat.VecDense
	if err := c.SolveVec(A, y); err != nil {
		t.Fatal(err)
	}
	var ata, inv mat.Dense
	ata.Mul(A.T(), A)
	if err := inv.Inverse(&ata); err != nil {
		t.Fatal(err)
	}
	for j := range truth {
		if !relClose(res.Strengths[j], c.AtVec(j), 1e-8) {
			t.Errorf("strength %d: %v, gonum %v", j, res.Strengths[j], c.AtVec(j))
		}
		sd := sigma * math.Sqrt(inv.At(j, j))
		if !relClose(res.StrengthSigmas[j], sd, 1e-6) {
			t.Errorf("sigma %d: %v, gonum %v", j, res.StrengthSigmas[j], sd)
		}
		within3(t, "strength", res.Strengths[j], truth[j], res.StrengthSigmas[j])
	}
	// StrengthsRSS gives the residual sum of squares of the same fit: against gonum's
	// solution ||A c - y||^2, and against FitStrengths' chi-square times sigma^2.
	rss, err := StrengthsRSS(&Problem{Points: pts, Fields: fields, Sigma: sigma}, srcs, nil)
	if err != nil {
		t.Fatal(err)
	}
	var r mat.VecDense
	r.MulVec(A, &c)
	r.SubVec(&r, y)
	if want := mat.Dot(&r, &r); !relClose(rss, want, 1e-9) {
		t.Errorf("StrengthsRSS = %v, gonum residual %v", rss, want)
	}
	if want := res.Chi2 * sigma * sigma; !relClose(rss, want, 1e-12) {
		t.Errorf("StrengthsRSS = %v, FitStrengths chi2 sigma^2 = %v", rss, want)
	}
}

// TestFitStrengthsAC: phasor readings of two lines with different phases give back the
// RMS currents and phases.
func TestFitStrengthsAC(t *testing.T) {
	pts := traverse(31, -2, 2, 0, 0)
	lines := []Line{
		{Point: [3]float64{-0.2, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.2, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
	}
	cur := []complex128{cmplx.Rect(30, 0.3), cmplx.Rect(28, 0.3+math.Pi*0.9)}
	ph := phasorReadings(pts, lines, cur, 0, nil)
	r, err := FitStrengths(&Problem{Points: pts, Phasors: ph, Sigma: 1}, []Source{lines[0], lines[1]}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k, c := range cur {
		if cmplx.Abs(r.StrengthPhasors[k]-c) > 1e-9*cmplx.Abs(c) {
			t.Errorf("line %d: %v, want %v", k, r.StrengthPhasors[k], c)
		}
		if !relClose(r.Sources[k].Current, cmplx.Abs(c), 1e-9) || math.Abs(r.Sources[k].Phase-cmplx.Phase(c)*180/math.Pi) > 1e-7 {
			t.Errorf("line %d: current %v phase %v", k, r.Sources[k].Current, r.Sources[k].Phase)
		}
	}
}

// phasorReadings returns complex RMS readings (nT) of lines carrying phasor currents,
// with complex white noise of sigma nT per real and imaginary part.
func phasorReadings(pts [][3]float64, lines []Line, cur []complex128, sigma float64, rng *rand.Rand) [][3]complex128 {
	out := make([][3]complex128, len(pts))
	for i, r := range pts {
		var b [3]complex128
		for k, l := range lines {
			f := l.Field(r, nT)
			for j := range 3 {
				b[j] += complex(f[j], 0) * cur[k]
			}
		}
		if rng != nil {
			for j := range 3 {
				b[j] += complex(sigma*rng.NormFloat64(), sigma*rng.NormFloat64())
			}
		}
		out[i] = b
	}
	return out
}

func TestFitStrengthsErrors(t *testing.T) {
	line := Line{Point: [3]float64{0, 0, -1}, Dir: [3]float64{0, 1, 0}}
	pts := traverse(5, -1, 1, 0, 0)
	f := simulate(pts, []Line{line}, []float64{1}, [3]float64{}, 0, nil)
	tests := []struct {
		name string
		p    *Problem
		srcs []Source
	}{
		{"no sources", &Problem{Points: pts, Fields: f}, nil},
		{"point on the line", &Problem{Points: append(pts, [3]float64{0, 3, -1}), Fields: append(f, [3]float64{})}, []Source{line}},
		{"same line twice", &Problem{Points: pts, Fields: f}, []Source{line, line}},
		{"NaN reading", &Problem{Points: pts[:1], Fields: [][3]float64{{math.NaN(), 0, 0}}}, []Source{line}},
		{"length mismatch", &Problem{Points: pts, Fields: f[:2]}, []Source{line}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := FitStrengths(tc.p, tc.srcs, nil); err == nil {
				t.Error("no error")
			} else {
				t.Log(err)
			}
		})
	}
}

func BenchmarkFitStrengthsTwoLines(b *testing.B) {
	pts := grid(3, 20, 2, 0.5, 0)
	lines := []Line{
		{Point: [3]float64{-0.2, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.2, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
	}
	ph := phasorReadings(pts, lines, []complex128{30, -28}, 1, rand.New(rand.NewPCG(1, 1)))
	p := &Problem{Points: pts, Phasors: ph}
	srcs := []Source{lines[0], lines[1]}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := FitStrengths(p, srcs, nil); err != nil {
			b.Fatal(err)
		}
	}
}
