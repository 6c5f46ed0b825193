package route

import (
	"math"
	"testing"
)

// TestStepDepthDoubtOverLocation: a station inside a step's location
// sigma has its current and its depth widened each for the largest error
// a step within that sigma leaves, taken apart. At the step's own place
// the error is a pure current one (stepBias: every reading sees half the
// step), its depth error zero; the depth's is largest away from it.
// Invented fixture after review rg26c's run of end-loss-trend: a 0.318 A
// loss "most likely at 2.62 ± 0.38 m" between T01 (0 m) and T03 (6 m) on a
// 9.56 A line 1.01 m down, and T02 at 3.0 m, whose depth (fit's sigma
// 0.0015 m) read 1.0096 m over 1.000 m: widened as for the nearest place
// (d = 0) it kept ± 0.0015 m, 6.3 sigma off; the centre alone (0.38 m)
// gave ± 0.0032 m. The errors themselves are stepBias's (Biot-Savart, a
// half-line's field against an infinite line's).
func TestStepDepthDoubtOverLocation(t *testing.T) {
	const dI, current, depth = 0.318, 9.56, 1.0096
	const at, atSigma, from, to, x = 2.62, 0.38, 0.0, 6.0, 3.0
	const curSigma, depSigma = 0.144, 0.0015
	reach := []float64{1.0096, 2, 3.5}
	step := Finding{Kind: KindCurrentStep, From: from, To: to,
		Values: []Value{{Name: "location (chainage)", Value: at, Sigma: atSigma}, {Name: "step", Value: -dI}}}
	ps := []Placed{{Station: Station{Key: "T02", OK: true, Current: current, CurrentSigma: curSigma,
		Depth: depth, DepthSigma: depSigma, Reach: reach}, Chainage: x}}
	stepDoubt(ps, []Finding{step})
	sn := ps[0].StepNear
	if sn == nil {
		t.Fatal("T02 not widened for the step")
	}
	// The largest terms over the places within the location's sigma
	// (2.24-3.00 m, so 0-0.76 m from T02), on a fine grid.
	var maxC, maxD, cenD float64
	for i := 0; i <= 760; i++ {
		d := float64(i) / 1000
		dc, dd, pred := stepBias(reach, d, dI, current)
		seen := stepSeen(&ps[0], pred)
		maxC = math.Max(maxC, seen*math.Abs(dc))
		maxD = math.Max(maxD, seen*math.Abs(dd))
		if i == 380 {
			cenD = seen * math.Abs(dd)
		}
	}
	if !(cenD > depSigma/2) {
		t.Fatalf("fixture: the depth term at the centre, %.3g m, is small beside the fit's %.3g m", cenD, depSigma)
	}
	if got, want := ps[0].DepthSigma, math.Hypot(depSigma, maxD); !(got >= 0.99*want) {
		t.Errorf("depth sigma %.4g m, want the largest depth term's %.4g m (the centre's alone: %.4g m)", got, want, math.Hypot(depSigma, cenD))
	}
	if got, want := ps[0].CurrentSigma, math.Hypot(curSigma, maxC); !(got >= 0.99*want) {
		t.Errorf("current sigma %.4g A, want the largest current term's %.4g A", got, want)
	}
	if got, bound := ps[0].DepthSigma, math.Hypot(depSigma, maxD); got > 1.0001*bound {
		t.Errorf("depth sigma %.4g m, past the largest term's %.4g m", got, bound)
	}
}
