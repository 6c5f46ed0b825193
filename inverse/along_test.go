package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// A far line to the side of a single traverse: a 16 m traverse (161
// readings, 1 nT noise) across a 1.5 A line 1.55 m below the sensors, with a
// parallel 15 A line 40 m off along the traverse's direction, 0.35 m below
// them (a traction return beside a pipe). By the Biot-Savart law for a long
// straight line, |B| = mu0 I / (2 pi r) (DOMAIN.md), the far line's vertical
// field at the traverse is mu0 I dx / (2 pi r^2), 75 nT, changing by
// mu0 I (dx^2 - dz^2) / (2 pi r^4), about 1.875 nT/m, along the traverse.

func farSideCase(seed uint64) (pts, fields [][3]float64, slope float64) {
	pts = traverse(161, -8, 8, 0, 0)
	main := Line{Point: [3]float64{0.2, 0, -1.55}, Dir: [3]float64{0, 1, 0}}
	far := Line{Point: [3]float64{40, 0, -0.35}, Dir: [3]float64{0, 1, 0}}
	fields = simulate(pts, []Line{main, far}, []float64{1.5, 15}, [3]float64{-300, 17900, -46300}, 1, rand.New(rand.NewPCG(seed, 27)))
	dx, dz := 0-40.0, 0-(-0.35)
	r2 := dx*dx + dz*dz
	slope = 2e-7 * 15 * (dx*dx - dz*dz) / (r2 * r2) * 1e9 // nT/m, mu0/(2 pi) = 2e-7
	return pts, fields, slope
}

// TestBackgroundAlongFarLine: with a uniform background the far line's change
// along the traverse goes into the near line's current and depth (biased by
// many sigmas); with BackgroundAlong both are within 3 sigma of the truth and
// the vertical term is the far line's Biot-Savart slope within 3 sigma (and
// 0.03 nT/m for the slope of its curvature over the traverse).
func TestBackgroundAlongFarLine(t *testing.T) {
	pts, fields, slope := farSideCase(1)
	p := &Problem{Points: pts, Fields: fields}
	uni, err := FitLines(p, &Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	u := uni.Sources[0]
	if !(math.Abs(u.Current-1.5) > 3*u.CurrentSigma) {
		t.Errorf("uniform background: current %.4f ± %.4f, expected the far line to bias it", u.Current, u.CurrentSigma)
	}
	res, err := FitLines(p, &Settings{Count: 1, Background: BackgroundAlong})
	if err != nil {
		t.Fatal(err)
	}
	e := res.Sources[0]
	t.Logf("uniform %.4f ± %.4f A %.4f ± %.4f m; along %.4f ± %.4f A %.4f ± %.4f m, along %v ± %v (want up %.4f)",
		u.Current, u.CurrentSigma, u.Depth, u.DepthSigma, e.Current, e.CurrentSigma, e.Depth, e.DepthSigma, res.Along, res.AlongSigma, slope)
	if math.Abs(e.Current-1.5) > 3*e.CurrentSigma {
		t.Errorf("current %.4f ± %.4f, want 1.5", e.Current, e.CurrentSigma)
	}
	if math.Abs(e.Depth-1.55) > 3*e.DepthSigma {
		t.Errorf("depth %.4f ± %.4f, want 1.55", e.Depth, e.DepthSigma)
	}
	if len(res.Along) != 3 || math.Abs(res.Along[2]-slope) > 3*res.AlongSigma[2]+0.03 {
		t.Errorf("along terms %v ± %v, want up %.4f nT/m", res.Along, res.AlongSigma, slope)
	}
	if res.AlongAxis != [3]float64{1, 0, 0} {
		t.Errorf("along axis %v, want east", res.AlongAxis)
	}
	if !res.SingleTraverse {
		t.Error("not taken for a single traverse")
	}
}
