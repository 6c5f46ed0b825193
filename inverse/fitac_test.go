package inverse

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// TestFitLinesAC: demodulated readings of a circuit whose return carries 92% of the
// outgoing current at 176 degrees (the rest returns through the earth) over nine
// traverses: shared geometry, RMS currents and relative phase within 3 sigma.
func TestFitLinesAC(t *testing.T) {
	pts := grid(9, 31, 2.5, 0.4, 0.05)
	lines := []Line{
		{Point: [3]float64{-0.25, 0, -0.7}, Dir: [3]float64{0.15, 1, 0}},
		{Point: [3]float64{0.25, 0, -0.7}, Dir: [3]float64{0.15, 1, 0}},
	}
	cur := []complex128{cmplx.Rect(50, 0.4), cmplx.Rect(46, 0.4+176*math.Pi/180)}
	const sigma = 2.0
	ph := phasorReadings(pts, lines, cur, sigma, rand.New(rand.NewPCG(5, 6)))
	res, err := FitLines(&Problem{Points: pts, Phasors: ph, Sigma: sigma}, &Settings{Count: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Sources) != 2 {
		t.Fatalf("%d sources", len(res.Sources))
	}
	wantAz := math.Atan2(0.15, 1) * 180 / math.Pi
	for i, e := range res.Sources {
		t.Logf("line %d: I %.3f+-%.3f phase %.2f+-%.3g rel %.2f+-%.3g depth %.4f+-%.4f az %.3f+-%.3f dip %.3f+-%.3f", i, e.Current, e.CurrentSigma, e.Phase, e.PhaseSigma, e.RelativePhase, e.RelativePhaseSigma, e.Depth, e.DepthSigma, e.Azimuth, e.AzimuthSigma, e.Dip, e.DipSigma)
		within3(t, "RMS current", e.Current, cmplx.Abs(cur[i]), e.CurrentSigma)
		within3(t, "phase", e.Phase, cmplx.Phase(cur[i])*180/math.Pi, e.PhaseSigma)
		within3(t, "depth", e.Depth, 0.75, e.DepthSigma) // 0.7 m below sensors at 0.05 m
		within3(t, "azimuth", e.Azimuth, wantAz, e.AzimuthSigma)
		within3(t, "dip", e.Dip, 0, e.DipSigma)
	}
	within3(t, "relative phase", math.Remainder(res.Sources[1].RelativePhase, 360), -184+360, res.Sources[1].RelativePhaseSigma)
	if res.Chi2 > float64(res.DOF)+5*math.Sqrt(2*float64(res.DOF)) {
		t.Errorf("chi2 %v for %d DOF", res.Chi2, res.DOF)
	}
}

// TestFitLinesRobust: three spikes of 3000 nT on a traverse bias the least-squares fit;
// with Huber weights the estimate returns to within 3 sigma of the truth and the spikes
// get small weights.
func TestFitLinesRobust(t *testing.T) {
	pts := traverse(61, -3, 3, 0, 0)
	line := Line{Point: [3]float64{0.4, 0, -1.1}, Dir: [3]float64{0, 1, 0}}
	f := simulate(pts, []Line{line}, []float64{25}, [3]float64{17000, 1500, -44000}, 5, rand.New(rand.NewPCG(8, 9)))
	for _, i := range []int{10, 31, 47} {
		f[i][0] += 3000
		f[i][2] -= 3000
	}
	p := &Problem{Points: pts, Fields: f}
	plain, err := FitLines(p, &Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	rob, err := FitLines(p, &Settings{Count: 1, Robust: true})
	if err != nil {
		t.Fatal(err)
	}
	e := rob.Sources[0]
	t.Logf("plain: I %.3f depth %.4f; robust: I %.3f+-%.3f depth %.4f+-%.4f", plain.Sources[0].Current, plain.Sources[0].Depth, e.Current, e.CurrentSigma, e.Depth, e.DepthSigma)
	within3(t, "robust current", e.Current, 25, e.CurrentSigma)
	within3(t, "robust depth", e.Depth, 1.1, e.DepthSigma)
	if math.Abs(plain.Sources[0].Current-25) < 3*e.CurrentSigma {
		t.Errorf("the spikes should bias the plain fit (got %v A)", plain.Sources[0].Current)
	}
	if w := rob.Weights[3*31]; w > 0.1 {
		t.Errorf("spike weight %v, want small", w)
	}
}

// TestSeparableJacobian checks the full Jacobian used for the covariance (geometry
// columns: d(Phi c)/dtheta) against gonum finite differences, for two lines with free
// azimuth and dip and a dipole, with AC strengths.
func TestSeparableJacobian(t *testing.T) {
	pts := grid(3, 7, 2, 0.7, 0)
	sv := newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts))})
	geoms := []lineGeom{
		sv.geomFrom(seed{e: -0.3, n: 0.1, az: 0.2, z: -0.9}, false, false, 0.05, 0.02),
		sv.geomFrom(seed{e: 0.4, n: -0.2, az: 0.3, z: -1.2}, false, false, -0.1, 0.02),
	}
	y := make([]float64, 3*len(pts)*2)
	rng := rand.New(rand.NewPCG(1, 1))
	for i := range y {
		y[i] = rng.NormFloat64() * 100
	}
	dips := []dipGeom{{pos: [3]float64{0.2, 0.3, -0.7}, lim: 10, zHi: -0.02, zLo: -20}}
	sp := newSeparable(pts, y, 2, BackgroundUniform, sv.centroid, geoms, dips)
	x, _, _ := sp.pack()
	J, err := sp.fullJacobian(x)
	if err != nil {
		t.Fatal(err)
	}
	coef := append([]float64(nil), sp.coef...)
	np := len(x)
	model := func(out, theta []float64) {
		sp.unpack(theta)
		phi := make([]float64, sp.m*sp.q)
		if err := sp.buildPhi(phi); err != nil {
			t.Fatal(err)
		}
		for k := range 2 {
			for row := range sp.m {
				var v float64
				for j := range sp.q {
					v += phi[row*sp.q+j] * coef[j*2+k]
				}
				out[k*sp.m+row] = v
			}
		}
	}
	num := mat.NewDense(2*sp.m, np, nil)
	fd.Jacobian(num, model, x, &fd.JacobianSettings{Formula: fd.Central})
	sp.unpack(x)
	var scaleMax float64
	for j := range np {
		for i := range 2 * sp.m {
			scaleMax = math.Max(scaleMax, math.Abs(num.At(i, j)))
		}
	}
	for j := range np {
		for i := range 2 * sp.m {
			if d := math.Abs(J.At(i, j) - num.At(i, j)); d > jacTol*scaleMax {
				t.Fatalf("row %d param %d: analytic %g, finite difference %g", i, j, J.At(i, j), num.At(i, j))
			}
		}
	}
}
