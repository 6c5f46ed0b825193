package main

import (
	"fmt"
	"math"
	"testing"
)

// TestLocateACNoiseGiven: --noise is the noise of each reading, for AC logs
// too. Given the walk's true 10 nT, each window of N samples has
// 10/sqrt(N) nT on each real component of its RMS phasor (the
// least-squares variance of a sine fit's coefficients, IEEE Std 1057,
// 2σ²/N, over the RMS scale's 2), so the fits' chi-square per degree of
// freedom must be about 1 and the current's sigma about the one estimated
// from the fits' own residuals. Before, the 10 nT was taken as each
// window's noise: sigmas 20 times too wide, and misfits passed as sound.
func TestLocateACNoiseGiven(t *testing.T) {
	sc, log := acWalkAt(t, t.TempDir(), "50.0", "")
	est := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
	given := locateDoc(t, "--freq", "50", "--noise", fmt.Sprint(sc.Sensor.Noise), "--group-by", "group", "--reference-z", "0", log)
	if len(est.Groups) != len(given.Groups) {
		t.Fatalf("%d groups with the noise estimated, %d with it given", len(est.Groups), len(given.Groups))
	}
	for i, g := range given.Groups {
		if g.DOF <= 0 || len(g.Sources) == 0 || len(est.Groups[i].Sources) == 0 {
			t.Fatalf("%s: no fit", g.Key)
		}
		// chi2 of dof degrees of freedom: within about five of its sigmas,
		// sqrt(2/dof), of 1 per degree of freedom.
		r := g.Chi2 / float64(g.DOF)
		if tol := 5 * math.Sqrt(2/float64(g.DOF)); math.Abs(r-1) > tol {
			t.Errorf("%s: chi-square %.4g for %d degrees of freedom (%.3g per degree), want 1 ± %.2g", g.Key, g.Chi2, g.DOF, r, tol)
		}
		a, b := g.Sources[0].CurrentSigma, est.Groups[i].Sources[0].CurrentSigma
		if !(a < 1.3*b && b < 1.3*a) {
			t.Errorf("%s: current sigma %.3g A with the noise given, %.3g A estimated from the fit", g.Key, a, b)
		}
	}
}
