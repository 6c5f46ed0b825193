package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// loss is a simulated loss of current: d amperes leave the conductor at
// chainage x.
type loss struct{ x, d float64 }

// lossStations returns n stations sp metres apart over a line carrying
// 10 A at chainage 0 that changes by -trend A/m along the route and loses
// each of losses, every station reading the level model's transition
// (plateau.go: the fraction (1 + d/sqrt(d^2 + H^2))/2 of a loss at a
// distance d after the station, Biot-Savart over a half line) with H =
// 3 m, plus normal noise of sigma A. H = 3 m matches the fits of the
// review's simulated 8 m traverses over a line 1 m deep (see
// leakApproachStations).
func lossStations(rng *rand.Rand, n int, sp, sigma, trend float64, losses []loss) []Station {
	const h = 3.0
	st := make([]Station, n)
	for i := range st {
		x := sp * float64(i)
		cur := 10 - trend*x
		for _, l := range losses {
			d := l.x - x
			cur -= l.d * (1 - (1+d/math.Hypot(d, h))/2)
		}
		st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1}, Dir: [3]float64{1, 0, 0},
			Current: cur + sigma*rng.NormFloat64(), CurrentSigma: sigma,
			Depth: 1, DepthSigma: 0.002, OK: true}
	}
	return st
}

// lossSteps returns the steps (current-step and current-change findings)
// of r.
func lossSteps(r *Route) []Finding {
	var out []Finding
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep || f.Kind == KindCurrentChange {
			out = append(out, f)
		}
	}
	return out
}

// TestEndLossWithTrendSized: a 0.5 A loss at 1.5 m, between a route's
// first two stations, on a route whose current also changes by 0.01-0.03
// A/m either way (a coated pipe's protection current fading along it;
// the review's simulated 21 traverses 3 m apart, sigma 0.011 A). The loss
// must be reported on nearly every draw, as a fall whose bracket holds
// 1.5 m and whose size is within three sigmas of 0.5 A (simulated truth).
// When the levels of a step with one station on a side were fitted
// without a shared slope, the far side's level was the mean of its
// stations, half the route's trend away: sizes of 1.1-1.4 A with a
// falling trend and no finding at all with a rising one.
func TestEndLossWithTrendSized(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 3))
	for _, trend := range []float64{0.03, 0.01, -0.01, -0.03} {
		const draws = 30
		var found, sized int
		for range draws {
			r, err := Build(lossStations(rng, 21, 3, 0.011, trend, []loss{{1.5, 0.5}}), nil)
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range lossSteps(r) {
				step, _ := valueNamed(f, "step")
				if f.From <= 1.5 && 1.5 <= f.To && step.Value < 0 {
					found++
					if math.Abs(step.Value+0.5) <= 3*step.Sigma {
						sized++
					} else if found-sized <= 2 {
						t.Logf("trend %g: %s", trend, f.Message)
					}
				}
			}
		}
		if found < draws*9/10 || sized < draws*8/10 {
			t.Errorf("trend %g A/m: loss found on %d and sized within 3 sigma on %d of %d draws, want 90%% and 80%%",
				trend, found, sized, draws)
		}
	}
}

// TestSecondLossKeptOnSimulatedRoutes: on each of twoLossRuns (stations
// located from the review's simulated logs; truth 2 A at 31.5 m and 0.8 A
// at 43.5 m or 0.6 A at 40.5 m) both losses must be reported, each as a
// fall whose bracket holds it and not the other. The route once reported
// only one step there (3.36 A at 34.0 ± 0.5 m on the first), dropping the
// smaller loss as the tail of the larger's transition.
func TestSecondLossKeptOnSimulatedRoutes(t *testing.T) {
	for _, c := range twoLossRuns {
		st := make([]Station, len(c.st))
		for i, s := range c.st {
			st[i] = Station{Key: key(i + 1), Point: [3]float64{s[0], 0, -1}, Dir: [3]float64{1, 0, 0},
				Current: s[1], CurrentSigma: s[2], Depth: 1, DepthSigma: 0.003, OK: true}
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		var big, small bool
		for _, f := range lossSteps(r) {
			step, _ := valueNamed(f, "step")
			in := func(x float64) bool { return f.From <= x && x <= f.To }
			if step.Value < 0 && in(31.5) && !in(c.second.x) {
				big = true
			}
			if step.Value < 0 && in(c.second.x) && !in(31.5) {
				small = true
			}
		}
		if !big || !small {
			for _, f := range lossSteps(r) {
				t.Logf("%s: %s", c.name, f.Message)
			}
			t.Errorf("%s: loss at 31.5 m reported apart %v, loss at %.1f m %v; want both", c.name, big, c.second.x, small)
		}
	}
}

// TestMergedLossesLocationSigma: a 2 A loss at 31.5 m and 0.4 A two
// spacings on at 37.5 m (or before it at 25.5 m), 31 stations 3 m apart,
// sigma 0.011 A (the review's simulated fits at 5 nT). The two are
// reported as one step; its location must then lie within three of its
// sigmas of the larger loss (simulated truth) on nearly every draw. The
// location's sigma from a profile interval under a one-transition model
// was 0.08-0.09 m there, the location 0.8 m (9 sigma) from the loss.
func TestMergedLossesLocationSigma(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 5))
	for _, small := range []loss{{37.5, 0.4}, {25.5, 0.4}} {
		const draws = 20
		var n, in int
		for range draws {
			r, err := Build(lossStations(rng, 31, 3, 0.011, 0, []loss{{31.5, 2}, small}), nil)
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range lossSteps(r) {
				loc, ok := valueNamed(f, "location (chainage)")
				if !ok || !(f.From <= 31.5 && 31.5 <= f.To && f.From <= small.x && small.x <= f.To) {
					continue
				}
				n++
				if z := (loc.Value - 31.5) / loc.Sigma; math.Abs(z) <= 3 {
					in++
				} else if n-in <= 2 {
					t.Logf("%+v: z %.1f: %s", small, z, f.Message)
				}
			}
		}
		if n < draws/2 || in < n*9/10 {
			t.Errorf("%.1f A at %.1f m beside 2 A at 31.5 m: one step on %d of %d draws, its location within 3 sigma of 31.5 m on %d, want half the draws and 90%%",
				small.d, small.x, n, draws, in)
		}
	}
}
