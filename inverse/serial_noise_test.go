package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// serialPulls fits one DC line (2.5 A, 1.1 m under the ground, the sensors
// 0.3 m above it, crossing an 8 m traverse of 81 readings at 60 degrees,
// as testdata/scenarios/single-line.toml at a tenth of its current) on
// runs traverses whose noise per axis is AR(1) with lag-1 correlation rho
// and 2 nT marginal sd (rho 0: white), and returns the standard deviations
// of the pulls (estimate - truth)/sigma of current, depth and offset (the
// truth is simulated), and the share of fits whose sigmas were widened.
func serialPulls(t *testing.T, rho float64, runs int, seed uint64) (sdI, sdD, sdO, widened float64) {
	t.Helper()
	const sd, cur = 2.0, 2.5
	pts := traverse(81, -4, 4, 0, 0.3)
	az := 60 * math.Pi / 180
	line := Line{Point: [3]float64{0.2, 0, -1.1}, Dir: [3]float64{math.Sin(az), math.Cos(az), 0}}
	clean := simulate(pts, []Line{line}, []float64{cur}, [3]float64{-150, 19200, -45100}, 0, nil)
	rng := rand.New(rand.NewPCG(seed, 17))
	zero := 0.0
	var sI, sD, sO float64
	n := 0
	for range runs {
		fields := make([][3]float64, len(clean))
		var x [3]float64
		for a := range 3 {
			x[a] = sd * rng.NormFloat64() // stationary start
		}
		for i := range clean {
			for a := range 3 {
				if i > 0 {
					x[a] = rho*x[a] + sd*math.Sqrt(1-rho*rho)*rng.NormFloat64()
				}
				fields[i][a] = clean[i][a] + x[a]
			}
		}
		res, err := FitLines(&Problem{Points: pts, Fields: fields}, &Settings{Count: 1, ReferenceZ: &zero})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		if !(e.CurrentSigma > 0 && e.DepthSigma > 0 && e.OffsetSigma > 0) {
			t.Fatalf("rho %.2f: no sigmas: %+v", rho, e)
		}
		// The line's offset: its horizontal distance across itself from
		// the truth, signed along the horizontal normal (-cos az, sin az).
		off := (e.Point[0]-line.Point[0])*-math.Cos(az) + (e.Point[1]-line.Point[1])*math.Sin(az)
		pi := (math.Abs(e.Current) - cur) / e.CurrentSigma
		pd := (e.Depth - 1.1) / e.DepthSigma
		po := off / e.OffsetSigma
		sI += pi * pi
		sD += pd * pd
		sO += po * po
		n++
		if res.SigmaWidening > 1 {
			widened++
		}
	}
	f := float64(n)
	return math.Sqrt(sI / f), math.Sqrt(sD / f), math.Sqrt(sO / f), widened / f
}

// TestSerialNoiseWidensLineSigmas: noise correlated from reading to reading
// along the traverse (AR(1) with a correlation time of 5 readings, rho =
// exp(-1/5) = 0.82, as a fluxgate's slow drift or a hand-held sensor's
// tilt wander gives) made the line fit's sigmas about three times too
// small (pulls (estimate - truth)/sigma of sd 2.8 against simulated truth),
// all without a word. The fit now widens them by the residuals' lag-1
// autocorrelation: the pulls' sd must be under 1.5 for current and depth
// (60 runs: the sd of a pull sd is about 0.1) and under 1.8 for the offset
// (a derivative of the field, whose signature is less a mean than the
// current's, and whose pull sd stays about 1.4). On white noise the sigmas
// must stay as they were: pull sd under 1.25 and at most 10% of the fits
// widened (about 2% by the significance test's construction).
func TestSerialNoiseWidensLineSigmas(t *testing.T) {
	sdI, sdD, sdO, w := serialPulls(t, math.Exp(-1.0/5), 60, 3)
	t.Logf("AR(1) rho 0.82: pull sd current %.2f depth %.2f offset %.2f, widened %.0f%%", sdI, sdD, sdO, 100*w)
	if sdI > 1.5 || sdD > 1.5 || sdO > 1.8 {
		t.Errorf("AR(1) noise: pull sd current %.2f depth %.2f offset %.2f, want under 1.5, 1.5, 1.8", sdI, sdD, sdO)
	}
	sdI, sdD, sdO, w = serialPulls(t, 0, 60, 5)
	t.Logf("white: pull sd current %.2f depth %.2f offset %.2f, widened %.0f%%", sdI, sdD, sdO, 100*w)
	if sdI > 1.25 || sdD > 1.25 || sdO > 1.25 || sdI < 0.75 || sdD < 0.75 || sdO < 0.75 || w > 0.1 {
		t.Errorf("white noise: pull sd current %.2f depth %.2f offset %.2f (want 0.75-1.25), %.0f%% widened (want at most 10%%)", sdI, sdD, sdO, 100*w)
	}
}
