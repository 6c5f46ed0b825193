package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestSigmasIndependentOfCoordinateOrigin: the same readings placed about a
// local origin and at projected coordinates (E 712345.678, N 9812345.678 m,
// a southern-hemisphere UTM northing) are the same survey, so every sigma
// must be the same. The sigmas of the reported quantities come from
// central differences with steps of a ten-thousandth of a parameter's sigma
// (down to about 1e-9 m for a line placed to 1e-5 m), and float64 values
// near 1e7 step by 1.9e-9 m (IEEE 754 binary64, 53-bit significand), so
// differences taken on absolute positions lost the steps: the offset sigma
// moved by up to 28% in review. A 25 A line 1.4 m below the sensors, read
// with 0.2 nT noise on 10 m traverses at several angles (Biot-Savart field
// of an infinite line; Fenwick Lane, an invented fixture).
func TestSigmasIndependentOfCoordinateOrigin(t *testing.T) {
	shift := [3]float64{712345.678, 9812345.678, 0}
	worst := 0.0
	for k, angle := range []float64{0, 17, 40, 63, 81} {
		a := angle * math.Pi / 180
		line := Line{Point: [3]float64{0.37, 0.21, -1.1}, Dir: [3]float64{math.Sin(a), math.Cos(a), 0}}
		var pts [][3]float64
		for i := range 101 {
			pts = append(pts, [3]float64{-5 + 0.1*float64(i), 0.05 * float64(i%3), 0.3})
		}
		rng := rand.New(rand.NewPCG(uint64(k), 11))
		f := simulate(pts, []Line{line}, []float64{25}, [3]float64{-150, 19200, -45100}, 0.2, rng)
		far := make([][3]float64, len(pts))
		for i, p := range pts {
			far[i] = add(p, shift)
		}
		set := &Settings{Count: 1}
		near, err := FitLines(&Problem{Points: pts, Fields: f, Sigma: 0.2}, set)
		if err != nil {
			t.Fatal(err)
		}
		away, err := FitLines(&Problem{Points: far, Fields: f, Sigma: 0.2}, set)
		if err != nil {
			t.Fatal(err)
		}
		a0, b0 := near.Sources[0], away.Sources[0]
		for _, q := range []struct {
			name string
			x, y float64
		}{
			{"offset", a0.OffsetSigma, b0.OffsetSigma},
			{"depth", a0.DepthSigma, b0.DepthSigma},
			{"current", a0.CurrentSigma, b0.CurrentSigma},
			{"azimuth", a0.AzimuthSigma, b0.AzimuthSigma},
		} {
			if q.x == 0 && q.y == 0 {
				continue // not reported (an azimuth held by the single traverse's bound)
			}
			r := math.Abs(q.y-q.x) / q.x
			worst = math.Max(worst, r)
			// The fits themselves agree to about 1e-7 relative; 1e-3 is
			// far below what a lost step moves.
			if !(r < 1e-3) {
				t.Errorf("line at %g degrees: %s sigma %.6g about the origin, %.6g at E %.0f N %.0f (%.2g relative)", angle, q.name, q.x, q.y, shift[0], shift[1], r)
			}
		}
	}
	t.Logf("largest relative change of a sigma: %.2g", worst)
}
