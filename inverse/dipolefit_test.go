package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestFitLinesWithDipole: a cable (20 A, 0.9 m deep) passes 1.2 m from a buried ferrous
// valve (moment (3, -2, -6) A m^2 at 1 m depth). Fitted as lines only, the valve's
// field biases the cable's current; with Settings.Dipoles = 1 the cable comes back
// within 3 sigma and the valve is located.
func TestFitLinesWithDipole(t *testing.T) {
	pts := grid(11, 41, 2.5, 0.5, 0)
	cable := Line{Point: [3]float64{-0.4, 0, -0.9}, Dir: [3]float64{0, 1, 0}}
	valve := Dipole{Pos: [3]float64{0.8, 0.3, -1.0}}
	moment := [3]float64{3, -2, -6}
	f := simulate(pts, []Line{cable}, []float64{20}, [3]float64{17000, 1500, -44000}, 5, rand.New(rand.NewPCG(12, 1)))
	for i, r := range pts {
		f[i] = add(f[i], scale(valve.Field(r, moment), nT))
	}
	p := &Problem{Points: pts, Fields: f}
	plain, err := FitLines(p, &Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	res, err := FitLines(p, &Settings{Count: 1, Dipoles: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Sources) != 2 || res.Sources[0].Kind != "line" || res.Sources[1].Kind != "dipole" {
		t.Fatalf("sources %+v", res.Sources)
	}
	e, d := res.Sources[0], res.Sources[1]
	t.Logf("lines only: I %.3f+-%.3f depth %.4f; with dipole: I %.3f+-%.3f depth %.4f+-%.4f", plain.Sources[0].Current, plain.Sources[0].CurrentSigma, plain.Sources[0].Depth, e.Current, e.CurrentSigma, e.Depth, e.DepthSigma)
	t.Logf("dipole at %.3f depth %.3f+-%.3f moment %.3f +- %.3f", d.Point, d.Depth, d.DepthSigma, d.Moment, d.MomentSigma)
	// (A lines-only fit may orient the line the other way: compare magnitudes.)
	if math.Abs(math.Abs(plain.Sources[0].Current)-20) < 3*e.CurrentSigma {
		t.Errorf("the valve should bias a lines-only fit (got %v A)", plain.Sources[0].Current)
	}
	within3(t, "current", e.Current, 20, e.CurrentSigma)
	within3(t, "depth", e.Depth, 0.9, e.DepthSigma)
	within3(t, "dipole depth", d.Depth, 1.0, d.DepthSigma)
	within3(t, "dipole east", d.Point[0], 0.8, d.OffsetSigma)
	for k := range 3 {
		within3(t, "moment", d.Moment[k], moment[k], d.MomentSigma[k])
	}
}
