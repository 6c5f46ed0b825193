package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// TestGaussNewtonStepMatchesSVD: on a well-conditioned upper triangular R the step of
// gaussNewton is the minimum-norm least-squares solution the SVD path gives for
// lambda = 0, V S^-1 U^T qtr (here from jacobiSVD, itself checked against gonum in
// house_test.go), to rounding; and gaussNewton declines R near rank loss (one singular
// value below the SVD path's negligible level, or within four orders of magnitude of
// it), with a zero or non-finite diagonal. Random matrices (simulated), sizes 1 to 8.
func TestGaussNewtonStepMatchesSVD(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 4))
	for n := 1; n <= 8; n++ {
		for trial := range 20 {
			r := make([]float64, n*n)
			for k := range n {
				for i := 0; i < k; i++ {
					r[k*n+i] = rng.NormFloat64()
				}
				r[k*n+k] = (1 + rng.Float64()) * float64(1-2*rng.IntN(2))
			}
			qtr := make([]float64, n)
			for i := range qtr {
				qtr[i] = rng.NormFloat64()
			}
			y, inv := make([]float64, n), make([]float64, n*n)
			if !gaussNewton(r, n, qtr, y, inv, 1000) {
				t.Fatalf("n=%d trial %d: a well-conditioned R declined", n, trial)
			}
			u, v, s := append([]float64(nil), r...), make([]float64, n*n), make([]float64, n)
			if !jacobiSVD(u, n, s, v) {
				t.Fatal("SVD did not converge")
			}
			want := make([]float64, n)
			var wn float64
			for k := range n {
				var b float64
				for i := range n {
					b += u[k*n+i] * qtr[i]
				}
				for i := range n {
					want[i] += v[k*n+i] * b / s[k]
				}
			}
			for _, w := range want {
				wn = math.Max(wn, math.Abs(w))
			}
			for i := range n {
				if math.Abs(y[i]-want[i]) > 1e-12*wn {
					t.Errorf("n=%d trial %d: y[%d] = %.17g, SVD gives %.17g", n, trial, i, y[i], want[i])
				}
			}
		}
	}
	// Near rank loss: a diagonal 1e-10 of the others, against the SVD path's level of
	// 1e-15 times 1000 readings (1e-12) with four orders to spare.
	r := []float64{1, 0, 0.3, 1e-10}
	y, inv := make([]float64, 2), make([]float64, 4)
	if gaussNewton(r, 2, []float64{1, 1}, y, inv, 1000) {
		t.Error("an R of condition number 1e10 was taken with 1000 readings")
	}
	if !gaussNewton(r, 2, []float64{1, 1}, y, inv, 1) || gaussNewton([]float64{1, 0, 0.3, 1e-12}, 2, []float64{1, 1}, y, inv, 1) {
		t.Error("the bound does not follow the number of readings")
	}
	for _, d := range []float64{0, math.NaN(), math.Inf(1)} {
		if gaussNewton([]float64{1, 0, 0.3, d}, 2, []float64{1, 1}, y, inv, 10) {
			t.Errorf("an R with diagonal %g was taken", d)
		}
	}
}

// TestGaussNewtonShortcutSameFits: the Gauss-Newton shortcut in levmar changes how a
// step is computed, not which. The line fits of the benchmark surveys, a stacked
// go-and-return pair (DC and AC), a pair beside a cable and Huber reweighting
// (simulated truth) reach the same answers with it and without it (every step through
// the SVD) to 1e-6 relative: rounding moves a converged fit only within its
// convergence tolerance (the benchmark fits agree to 1e-9; the stacked pair, whose
// lines slide along a flat valley, stops 3e-7 apart with the portable kernels, the
// noasm build). The NIST StRD problems (Misra1a, MGH09, both certified starts) agree to
// 1e-6 too, the digits TestLMNIST asks of the certified values: MGH09's minimum lies in
// a flat valley where the two stop 2e-7 apart (the shortcut's nearer the certified
// values).
func TestGaussNewtonShortcutSameFits(t *testing.T) {
	defer func() { lmNoShortcut = false }()
	for _, c := range nistCases() {
		for si, start := range c.starts {
			lmNoShortcut = false
			with, err1 := levmar(c.problem(), start, lmSettings{maxIter: 1000})
			lmNoShortcut = true
			without, err2 := levmar(c.problem(), start, lmSettings{maxIter: 1000})
			if err1 != nil || err2 != nil {
				t.Fatalf("%s start %d: %v, %v", c.name, si+1, err1, err2)
			}
			for i := range with.x {
				if !relClose(with.x[i], without.x[i], nistParamDigits) {
					t.Errorf("%s start %d: b%d = %.12g with the shortcut, %.12g without", c.name, si+1, i+1, with.x[i], without.x[i])
				}
			}
		}
	}

	fx := sameFitFixtures(t)

	for _, c := range fx {
		t.Run(c.name, func(t *testing.T) {
			lmNoShortcut = false
			with, err1 := FitLines(c.p, c.set)
			lmNoShortcut = true
			without, err2 := FitLines(c.p, c.set)
			lmNoShortcut = false
			if fmt.Sprint(err1) != fmt.Sprint(err2) {
				t.Fatalf("error %v with the shortcut, %v without", err1, err2)
			}
			if err1 != nil {
				return
			}
			if len(with.Sources) != len(without.Sources) || len(with.Notes) != len(without.Notes) || len(with.Pairs) != len(without.Pairs) {
				t.Fatalf("%d sources, %d notes, %d pairs with the shortcut; %d, %d, %d without",
					len(with.Sources), len(with.Notes), len(with.Pairs), len(without.Sources), len(without.Notes), len(without.Pairs))
			}
			close := func(what string, a, b float64) {
				t.Helper()
				if math.Abs(a-b) > 1e-6*math.Max(math.Abs(b), 1e-3) {
					t.Errorf("%s: %.12g with the shortcut, %.12g without", what, a, b)
				}
			}
			for i, a := range with.Sources {
				b := without.Sources[i]
				if len(a.Notes) != len(b.Notes) || a.Identifiable != b.Identifiable {
					t.Errorf("source %d: notes %q, %+v with the shortcut; %q, %+v without", i+1, a.Notes, a.Identifiable, b.Notes, b.Identifiable)
				}
				for k := range 3 {
					close(fmt.Sprintf("source %d point %d", i+1, k), a.Point[k], b.Point[k])
				}
				close(fmt.Sprintf("source %d current", i+1), a.Current, b.Current)
				close(fmt.Sprintf("source %d current sigma", i+1), a.CurrentSigma, b.CurrentSigma)
				close(fmt.Sprintf("source %d depth", i+1), a.Depth, b.Depth)
				close(fmt.Sprintf("source %d depth sigma", i+1), a.DepthSigma, b.DepthSigma)
				close(fmt.Sprintf("source %d azimuth", i+1), a.Azimuth, b.Azimuth)
				close(fmt.Sprintf("source %d azimuth sigma", i+1), a.AzimuthSigma, b.AzimuthSigma)
			}
			for k := range 3 {
				close(fmt.Sprintf("background %d", k), with.Background[k], without.Background[k])
			}
			close("chi-square", with.Chi2, without.Chi2)
			close("RMS", with.RMS, without.RMS)
		})
	}
}
