package inverse

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// fineMean is the mean of f over the segment r - t .. r + t by the midpoint rule on n
// panels (its error, (2|t|/n)^2 f”/24, is below 1e-9 relative here): the independent
// reference for the quadrature of path-averaged readings.
func fineMean(r, t [3]float64, n int, f func([3]float64) [3]float64) [3]float64 {
	var s [3]float64
	for k := range n {
		a := -1 + (2*float64(k)+1)/float64(n)
		s = add(s, f(add(r, scale(t, a))))
	}
	return scale(s, 1/float64(n))
}

// pathReadings simulates readings (nT) that are true path averages of the lines' fields
// (2,000-panel midpoint rule), plus a background and noise.
func pathReadings(pts, trav [][3]float64, lines []Line, currents []float64, bg [3]float64, sigma float64, rng *rand.Rand) [][3]float64 {
	out := make([][3]float64, len(pts))
	for i, r := range pts {
		b := fineMean(r, trav[i], 2000, func(p [3]float64) [3]float64 {
			var s [3]float64
			for k, l := range lines {
				s = add(s, l.Field(p, currents[k]))
			}
			return s
		})
		b = add(scale(b, nT), bg)
		if rng != nil {
			for j := range 3 {
				b[j] += sigma * rng.NormFloat64()
			}
		}
		out[i] = b
	}
	return out
}

// TestPathAverageMatchesFineMean (brief item a): with Travel set, the model of a line is
// its mean along the path. At L/h = 0.2 (L = 2|Travel|, h the distance to the line) the
// three-point Gauss-Legendre mean agrees with a 2,000-panel midpoint mean of Line.Field
// to 1e-6 relative (its remainder is about 2e-8 there, see the package documentation), both through the
// variable projection's basis and through FitStrengths' predictions. Simpson's rule would
// miss by 1.3e-5 at the peak; the test would catch that.
func TestPathAverageMatchesFineMean(t *testing.T) {
	const tol = 1e-6
	line := Line{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0.3, 1, -0.05}}
	h := 1.0
	// Readings across the line at height 0; travel of L = 0.2 h along directions
	// across, oblique and partly vertical.
	var pts, trav [][3]float64
	for k := range 21 {
		x := -1.8 + 0.18*float64(k)
		dirs := [][3]float64{{1, 0, 0}, {0.6, 0.8, 0}, {0.8, 0.36, 0.48}}
		d := dirs[k%3]
		pts = append(pts, [3]float64{x, 0.1, 0})
		trav = append(trav, scale(d, 0.1*h/norm(d)))
	}
	want := make([][3]float64, len(pts))
	for i := range pts {
		want[i] = scale(fineMean(pts[i], trav[i], 2000, func(p [3]float64) [3]float64 { return line.Field(p, 1) }), nT)
	}

	// The separable model's basis column.
	p := &Problem{Points: pts, Fields: make([][3]float64, len(pts)), Travel: trav}
	sv := newSurvey(p)
	u := scale(line.Dir, 1/norm(line.Dir))
	g := lineGeom{anchor: line.Point, n0: [3]float64{1, 0, 0}, z: line.Point[2],
		az: math.Atan2(u[0], u[1]), dip: -math.Asin(u[2])}
	sp := newSeparable(pts, make([]float64, 3*len(pts)), 1, BackgroundNone, sv.centroid, []lineGeom{g}, nil)
	sp.ptsLo, sp.ptsHi = sv.lo, sv.hi
	phi := make([]float64, sp.m*sp.q)
	if err := sp.buildPhi(phi); err != nil {
		t.Fatal(err)
	}
	var worstPoint float64
	for i := range pts {
		got := [3]float64{phi[3*i], phi[3*i+1], phi[3*i+2]}
		if !vecClose(got, want[i], tol) {
			t.Errorf("reading %d: path-averaged basis %v, fine mean %v", i, got, want[i])
		}
		pt := scale(line.Field(pts[i], 1), nT)
		worstPoint = math.Max(worstPoint, norm(sub(pt, want[i]))/norm(want[i]))
	}
	// The effect modelled is real: the point field misses the mean by ~L^2/(12 h^2).
	if worstPoint < 1e-3 {
		t.Errorf("point field within %.2g of the path mean; the test does not exercise the travel", worstPoint)
	}

	// FitStrengths on readings that are exact path means returns the current and the
	// readings as its prediction.
	fields := make([][3]float64, len(pts))
	for i := range pts {
		fields[i] = add(scale(want[i], 7.5), [3]float64{100, -200, 300})
	}
	res, err := FitStrengths(&Problem{Points: pts, Fields: fields, Travel: trav}, []Source{line}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !relClose(res.Strengths[0], 7.5, tol) {
		t.Errorf("FitStrengths current %.9g, want 7.5", res.Strengths[0])
	}
	// StrengthsRSS builds the same averaged basis: the exact path means leave no residual
	// (against 1e-3 nT^2 and more if the point field were used).
	rss, err := StrengthsRSS(&Problem{Points: pts, Fields: fields, Travel: trav}, []Source{line}, nil)
	if err != nil {
		t.Fatal(err)
	}
	rssPoint, err := StrengthsRSS(&Problem{Points: pts, Fields: fields}, []Source{line}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rss > 1e-6*rssPoint || rssPoint < 1e-2 {
		t.Errorf("StrengthsRSS with travel %.3g nT^2, as point readings %.3g nT^2", rss, rssPoint)
	}
	for i := range pts {
		if !vecClose(sub(res.Predicted[i], [3]float64{100, -200, 300}), scale(want[i], 7.5), tol) {
			t.Errorf("reading %d: predicted %v, want %v", i, res.Predicted[i], add(scale(want[i], 7.5), [3]float64{100, -200, 300}))
		}
	}
}

// TestPathAverageJacobian (brief item b): the analytic Jacobian of the full model with
// path-averaged readings (fullJacobian: d(Phi c)/dtheta and the basis) against gonum's
// central differences, DC and AC, with free azimuth and dip, a dipole and robust weights;
// and the covariance assembled from the variable projection's factors (fullR) against
// the one from that Jacobian.
func TestPathAverageJacobian(t *testing.T) {
	pts := grid(3, 7, 2, 0.7, 0)
	trav := make([][3]float64, len(pts))
	rng := rand.New(rand.NewPCG(4, 4))
	for i := range trav {
		trav[i] = [3]float64{0.15 * (rng.Float64() - 0.3), 0.1 * (rng.Float64() - 0.5), 0.03 * (rng.Float64() - 0.5)}
	}
	sv := newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts)), Travel: trav})
	for _, tc := range []struct {
		nrhs     int
		bg       BackgroundModel
		weighted bool
		scaled   bool // a factor per reading on the sources (Problem.Scale)
	}{{1, BackgroundUniform, false, false}, {2, BackgroundUniform, false, false}, {1, BackgroundGradient, true, false}, {2, BackgroundNone, true, false},
		{1, BackgroundUniform, false, true}, {2, BackgroundUniform, false, true}, {1, BackgroundGradient, true, true}} {
		t.Run(fmt.Sprintf("nrhs %d bg %d weighted %v scaled %v", tc.nrhs, tc.bg, tc.weighted, tc.scaled), func(t *testing.T) {
			geoms := []lineGeom{
				sv.geomFrom(seed{e: -0.3, n: 0.1, az: 0.2, z: -0.9}, false, false, 0.05, 0.02),
				sv.geomFrom(seed{e: 0.4, n: -0.2, az: 0.3, z: -1.2}, false, false, -0.1, 0.02),
			}
			y := make([]float64, 3*len(pts)*tc.nrhs)
			for i := range y {
				y[i] = rng.NormFloat64() * 100
			}
			dips := []dipGeom{{pos: [3]float64{0.2, 0.3, -0.7}, lim: 10, zHi: -0.02, zLo: -20}}
			sp := newSeparable(pts, y, tc.nrhs, tc.bg, sv.centroid, geoms, dips)
			sp.ptsLo, sp.ptsHi = sv.lo, sv.hi
			if tc.weighted {
				sp.w = make([]float64, sp.m)
				for i := range sp.w {
					sp.w[i] = 0.3 + rng.Float64()
				}
			}
			if tc.scaled {
				sp.scale = make([]float64, len(pts))
				for i := range sp.scale {
					sp.scale[i] = 0.7 + 0.6*rng.Float64()
				}
			}
			x, _, _ := sp.pack()
			J, err := sp.fullJacobian(x)
			if err != nil {
				t.Fatal(err)
			}
			coef := append([]float64(nil), sp.coef...)
			np, nr := len(x), tc.nrhs
			model := func(out, theta []float64) {
				sp.unpack(theta)
				phi := make([]float64, sp.m*sp.q)
				if err := sp.buildPhi(phi); err != nil {
					t.Fatal(err)
				}
				for k := range nr {
					for row := range sp.m {
						var v float64
						for j := range sp.q {
							v += phi[row*sp.q+j] * coef[j*nr+k]
						}
						out[k*sp.m+row] = v
					}
				}
			}
			num := mat.NewDense(nr*sp.m, np, nil)
			fd.Jacobian(num, model, x, &fd.JacobianSettings{Formula: fd.Central})
			sp.unpack(x)
			sp.ok = false
			var scaleMax float64
			for j := range np {
				for i := range nr * sp.m {
					scaleMax = math.Max(scaleMax, math.Abs(num.At(i, j)))
				}
			}
			for j := range np {
				for i := range nr * sp.m {
					if d := math.Abs(J.At(i, j) - num.At(i, j)); d > jacTol*scaleMax {
						t.Fatalf("row %d param %d: analytic %g, finite difference %g", i, j, J.At(i, j), num.At(i, j))
					}
				}
			}
			// The basis block of J is the path-averaged basis itself.
			phi := make([]float64, sp.m*sp.q)
			if err := sp.buildPhi(phi); err != nil {
				t.Fatal(err)
			}
			for row := range sp.m {
				for j := range sp.q {
					if got, want := J.At(row, np+j), phi[row*sp.q+j]; got != want {
						t.Fatalf("basis (%d, %d): %g in the Jacobian, %g built", row, j, got, want)
					}
				}
			}
			// Covariance from the projection's factors equals that of the full J.
			checkCovarianceFromR(t, sp, x, J, 1e-9)
		})
	}
}

// TestTravelBiasModelled (brief item c): readings simulated as true path averages (the
// sensor walks 0.2 m along the traverse per reading over a line 0.8 m down, L/h = 0.25,
// a bias of about L^2/(12 h^2) = 0.5% at the peak). Fitted as point readings the depth
// and current are off by many sigma; fitted with Travel they come back to 1e-4 relative
// without noise and within three sigma with noise. DC and AC.
func TestTravelBiasModelled(t *testing.T) {
	const sigma = 0.5 // nT per axis
	line := Line{Point: [3]float64{0.15, 0, -0.8}, Dir: [3]float64{0, 1, 0}}
	const current = 12.0
	pts := traverse(41, -2, 2, 0, 0)
	trav := make([][3]float64, len(pts))
	for i := range trav {
		trav[i] = [3]float64{0.1, 0, 0}
	}
	bg := [3]float64{18000, 2000, -45000}
	clean := pathReadings(pts, trav, []Line{line}, []float64{current}, bg, 0, nil)
	rng := rand.New(rand.NewPCG(21, 22))
	noisy := pathReadings(pts, trav, []Line{line}, []float64{current}, bg, sigma, rng)
	ac := func(f [][3]float64, c complex128) [][3]complex128 {
		out := make([][3]complex128, len(f))
		for i := range f {
			for j := range 3 {
				out[i][j] = complex(f[i][j]-bg[j], 0)*c/complex(current, 0) + complex(0.5, -0.25)
			}
		}
		return out
	}
	for _, isAC := range []bool{false, true} {
		t.Run(fmt.Sprintf("AC %v", isAC), func(t *testing.T) {
			prob := func(f [][3]float64, tr [][3]float64) *Problem {
				p := &Problem{Points: pts, Travel: tr, Sigma: sigma}
				if isAC {
					p.Phasors = ac(f, cmplx.Rect(current, 0.7))
				} else {
					p.Fields = f
				}
				return p
			}
			fit := func(p *Problem) SourceEstimate {
				t.Helper()
				r, err := FitLines(p, &Settings{Count: 1})
				if err != nil {
					t.Fatal(err)
				}
				return r.Sources[0]
			}
			// Noiseless, Travel modelled: truth to 1e-4 relative.
			e := fit(prob(clean, trav))
			if !relClose(e.Depth, 0.8, 1e-4) || !relClose(math.Abs(e.Current), current, 1e-4) || math.Abs(e.Offset-0.15) > 1e-4 {
				t.Errorf("travel modelled, noiseless: depth %.7f current %.7f offset %.7f, want 0.8, 12, 0.15", e.Depth, e.Current, e.Offset)
			}
			// Noiseless, point readings: biased by many sigma (sigmas of the noisy fit).
			en := fit(prob(noisy, trav))
			eb := fit(prob(clean, nil))
			zd := math.Abs(eb.Depth-0.8) / en.DepthSigma
			zc := math.Abs(math.Abs(eb.Current)-current) / en.CurrentSigma
			t.Logf("point readings: depth %.5f (%.1f sigma), current %.5f (%.1f sigma)", eb.Depth, zd, eb.Current, zc)
			if zd < 5 || zc < 5 {
				t.Errorf("point-reading fit of path-averaged data: depth off %.1f sigma, current %.1f sigma; want the bias to show (> 5 sigma)", zd, zc)
			}
			// Noisy, Travel modelled: within three sigma.
			if d := math.Abs(en.Depth - 0.8); d > 3*en.DepthSigma {
				t.Errorf("noisy depth %.5f +- %.5f, truth 0.8", en.Depth, en.DepthSigma)
			}
			if d := math.Abs(math.Abs(en.Current) - current); d > 3*en.CurrentSigma {
				t.Errorf("noisy current %.5f +- %.5f, truth %v", en.Current, en.CurrentSigma, current)
			}
		})
	}
}

// TestTravelValidation: a Travel of the wrong length or with a non-finite component is
// refused with the reading named.
func TestTravelValidation(t *testing.T) {
	pts := traverse(5, -1, 1, 0, 0)
	f := make([][3]float64, 5)
	if _, err := FitLines(&Problem{Points: pts, Fields: f, Travel: make([][3]float64, 4)}, nil); err == nil {
		t.Error("Travel of 4 for 5 readings accepted")
	}
	tr := make([][3]float64, 5)
	tr[3][1] = math.NaN()
	_, err := FitLines(&Problem{Points: pts, Fields: f, Travel: tr}, nil)
	if err == nil || err.Error() != "inverse: reading 3: travel north is NaN" {
		t.Errorf("got %v, want the reading and axis named", err)
	}
}

// BenchmarkFitOneLineTraverse41Travel is BenchmarkFitOneLineTraverse41 with every
// reading path-averaged (0.1 m half-travel along the traverse): about three basis
// evaluations per reading instead of one.
func BenchmarkFitOneLineTraverse41Travel(b *testing.B) {
	c := benchCases[0]
	p := c.problem()
	p.Travel = make([][3]float64, len(p.Points))
	for i := range p.Travel {
		p.Travel[i] = [3]float64{0.1, 0, 0}
	}
	benchFit(b, p, c.set)
}

// BenchmarkFitOneLineNineTravel is BenchmarkFitOneLineNineTraverses with path-averaged
// readings.
func BenchmarkFitOneLineNineTravel(b *testing.B) {
	c := benchCases[1]
	p := c.problem()
	p.Travel = make([][3]float64, len(p.Points))
	for i := range p.Travel {
		p.Travel[i] = [3]float64{0.1, 0, 0}
	}
	benchFit(b, p, c.set)
}
