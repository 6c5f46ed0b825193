package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// simulate returns DC readings (nT) of the given lines and currents plus a uniform
// background and white noise of sigma nT per axis.
func simulate(pts [][3]float64, lines []Line, currents []float64, bg [3]float64, sigma float64, rng *rand.Rand) [][3]float64 {
	out := make([][3]float64, len(pts))
	for i, r := range pts {
		b := bg
		for k, l := range lines {
			b = add(b, scale(l.Field(r, currents[k]), nT))
		}
		if rng != nil {
			for j := range 3 {
				b[j] += sigma * rng.NormFloat64()
			}
		}
		out[i] = b
	}
	return out
}

// traverse returns n points from a to b at height z, along x (east) at north = y.
func traverse(n int, a, b, y, z float64) [][3]float64 {
	pts := make([][3]float64, n)
	for i := range n {
		pts[i] = [3]float64{a + (b-a)*float64(i)/float64(n-1), y, z}
	}
	return pts
}

func TestFitLinesSingleTraverseNoiseFree(t *testing.T) {
	pts := traverse(41, -2, 2, 0, 0)
	line := Line{Point: [3]float64{0.3, 0, -1.2}, Dir: [3]float64{0, 1, 0}}
	fields := simulate(pts, []Line{line}, []float64{10}, [3]float64{18000, 2000, -45000}, 0, nil)
	res, err := FitLines(&Problem{Points: pts, Fields: fields, Sigma: 5}, &Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	e := res.Sources[0]
	t.Logf("%+v", e)
	t.Logf("status %v iters %d starts %d rms %g", res.Status, res.Iterations, res.Starts, res.RMS)
	// Dir is oriented to azimuth 0 (north), so the current is +10 A along it.
	if !relClose(e.Current, 10, 1e-8) || !relClose(e.Depth, 1.2, 1e-8) || math.Abs(e.Offset-0.3) > 1e-8 {
		t.Errorf("got current %v depth %v offset %v", e.Current, e.Depth, e.Offset)
	}
	if e.Identifiable.Azimuth || e.Identifiable.Dip {
		t.Errorf("azimuth/dip should be reported as not identifiable on one traverse")
	}
}
