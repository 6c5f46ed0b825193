package route

import (
	"math"
	"testing"
)

// teeTraverse is the Reach of a traverse 14 m long across a line 1.2 m
// under the sensors, read every 0.1 m (invented fixture after
// testdata/scenarios/open/tee.toml).
func teeTraverse() []float64 {
	var pts [][3]float64
	for i := 0; i <= 140; i++ {
		pts = append(pts, [3]float64{0, -7 + 0.1*float64(i), 1.2})
	}
	return ReachOf(pts, [3]float64{}, [3]float64{1, 0, 0})
}

// TestStepBiasBiotSavart: the error a 15 A step 10 and 26 m away gives a
// 40 A line's fitted current and depth, against a direct computation: the
// field of the tee scenario's feeder as two finite segments (Biot-Savart),
// less an infinite 40 A line's, split by linear least squares over the 141
// readings' three components into the part a line of free current, depth,
// place and a uniform background takes up and the rest (numpy, review
// rg25a's follow-up): -0.432 A and -9.88 mm at 10 m, -0.0739 A and -1.73 mm
// at 26 m.
func TestStepBiasBiotSavart(t *testing.T) {
	reach := teeTraverse()
	for _, c := range []struct{ d, dCur, dDepth float64 }{{10, -0.432, -0.00988}, {26, -0.0739, -0.00173}} {
		dc, dd, _ := stepBias(reach, c.d, 15, 40)
		if math.Abs(dc-c.dCur) > 0.1*math.Abs(c.dCur) || math.Abs(dd-c.dDepth) > 0.1*math.Abs(c.dDepth) {
			t.Errorf("%g m: bias %.4g A, %.4g m; want %.4g A, %.4g m (10%%)", c.d, dc, dd, c.dCur, c.dDepth)
		}
	}
}

// TestStepDoubtSeen: a station 26 m before a found step of 15 A is widened
// by the step's error to the extent its misfit shows that field. A loss
// (the line's current ends there) leaves it missing its readings by the
// share stepBias gives, and it is widened by the whole error (0.074 A);
// before a tee (its branch carries the current on beside the line) the
// fit meets its noise, chi-square at its degrees of freedom, and is
// widened only by what the noise may hide. Before, every station of
// tee.toml was widened by the half-line term averaged over its reach
// (review rg25a): T01, 26 m before the tee and 0.005-0.017 A off, from
// 0.0042 to 0.031 A.
func TestStepDoubtSeen(t *testing.T) {
	reach := teeTraverse()
	step := Finding{Kind: KindCurrentStep, From: 24, To: 28,
		Values: []Value{{Name: "location (chainage)", Value: 26}, {Name: "step", Value: -15}}}
	dc, _, pred := stepBias(reach, 26, 15, 40)
	// The line's field per component over the readings, nT (mu0/2pi is
	// 200 nT m/A).
	var ss float64
	for i := 0; i <= 140; i++ {
		y := -7 + 0.1*float64(i)
		ss += 200 * 200 * 40 * 40 / (y*y + 1.2*1.2)
	}
	signal := math.Sqrt(ss / (3 * 141))
	const dof, rms = 415, 2.0
	// The misfit a loss leaves: chi2 - dof of chi2 to give pred of the signal.
	x := dof / (1/((pred*signal/rms)*(pred*signal/rms)) - 1)
	for _, c := range []struct {
		name     string
		chi2     float64
		min, max float64 // widened current sigma, A
	}{
		{"loss", dof + x, 0.9 * math.Abs(dc), 1.1 * math.Hypot(math.Abs(dc), 0.0042)},
		{"tee", dof, 0.0042, 0.5 * math.Abs(dc)},
	} {
		ps := []Placed{{Station: Station{Key: "T01", OK: true, Current: 40, CurrentSigma: 0.0042, Depth: 0.9, DepthSigma: 0.00015,
			Reach: reach, Chi2: c.chi2, DOF: dof, RMS: rms * math.Sqrt(c.chi2/dof), Signal: signal}, Chainage: 0}}
		stepDoubt(ps, []Finding{step})
		if got := ps[0].CurrentSigma; got < c.min || got > c.max {
			t.Errorf("%s: current sigma %.3g A, want %.3g to %.3g A", c.name, got, c.min, c.max)
		}
	}
}
