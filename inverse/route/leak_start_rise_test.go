package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// leakApproachStations returns nine stations 3 m apart over a 10 A line
// that loses 2 A at chainage 13.5 m, each reading the level model's
// transition (plateau.go: the fraction (1 + d/sqrt(d^2 + H^2))/2 of the
// upstream current at a distance d before the point where current
// leaves, Biot-Savart over a half line) with H = 3 m, plus normal noise
// of sigma A. H = 3 m reproduces the fits of the review's simulated 8 m
// traverses over a line 1 m deep (1.3 m below the sensors): T01-T09 read
// 9.951, 9.944, 9.945, 9.821, 9.429, 8.577, 8.173, 8.070, 8.038 A (seed 1
// at 5 nT) against the model's 9.976, 9.961, 9.928, 9.832, 9.447, 8.553,
// 8.168, 8.064, 8.030 A.
func leakApproachStations(rng *rand.Rand, sigma float64) []Station {
	const i0, loss, xf, h = 10.0, 2.0, 13.5, 3.0
	st := make([]Station, 9)
	for i := range st {
		x := 3 * float64(i)
		d := xf - x
		cur := i0 - loss + loss*(1+d/math.Hypot(d, h))/2
		st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1}, Dir: [3]float64{1, 0, 0},
			Current: cur + sigma*rng.NormFloat64(), CurrentSigma: sigma,
			Depth: 1, DepthSigma: 0.002, OK: true}
	}
	return st
}

// TestLeakStartNoFalseRise: nothing joins the conductor, so no step may
// say current rises, and the one loss must be found between the stations
// either side of 13.5 m, with no other fall (the stations before it that
// read the leak's transition are no step of their own: explained in
// stepFindings). Before the levels of a step with one station on a
// side were fitted without a shared slope (sharedSlope), the slope of the
// leak's transition carried back to the first station made a rise of
// 4-5 A "joining" between T01 and T02 or T04 (the review's simulated
// runs: 8 of 40 seeds at 5 nT, 11 of 40 at 3 nT, 7 of 40 AC). Here 200
// draws of the simulated stations at the review's sigmas.
func TestLeakStartNoFalseRise(t *testing.T) {
	rng := rand.New(rand.NewPCG(10, 1))
	var rises, found, others int
	const draws = 200
	for range draws {
		sigma := []float64{0.01, 0.016, 0.025}[rng.IntN(3)]
		r, err := Build(leakApproachStations(rng, sigma), nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			if f.Kind != KindCurrentStep && f.Kind != KindCurrentChange {
				continue
			}
			step, _ := valueNamed(f, "step")
			if step.Value > 0 {
				rises++
				if rises <= 3 {
					t.Errorf("false rise: %s", f.Message)
				}
			}
			if f.Kind == KindCurrentStep && f.From <= 13.5 && 13.5 <= f.To && step.Value < 0 {
				found++
			} else if step.Value < 0 {
				others++
				if others <= 3 {
					t.Errorf("a fall away from the loss: %s", f.Message)
				}
			}
		}
	}
	if rises > 0 {
		t.Errorf("%d false rises in %d draws, want none", rises, draws)
	}
	if others > 0 {
		t.Errorf("%d further falls in %d draws, want none", others, draws)
	}
	if found < draws*95/100 {
		t.Errorf("loss found in %d of %d draws, want at least 95%%", found, draws)
	}
}

// TestLeakLocationSigmaCalibrated: the location of the loss of
// leakApproachStations (true chainage 13.5 m, between stations at 12 and
// 15 m that both read part of it) must be covered by its sigma at the
// normal rates both ways (tolerances of coverage_test.go). The location's
// interval was the grid's accepted range widened by half a cell, and a
// run over two intervals was taken for a gap and given a third of a
// spacing; over 300 draws the z of the location had a standard deviation
// near 0.1 (the review's simulated fits: 92% within one sigma).
func TestLeakLocationSigmaCalibrated(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 2))
	var z []float64
	for range mcDraws {
		r, err := Build(leakApproachStations(rng, 0.016), nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			if loc, ok := valueNamed(f, "location (chainage)"); ok && f.Kind == KindCurrentStep {
				z = append(z, (loc.Value-13.5)/loc.Sigma)
				if math.Abs(z[len(z)-1]) > 4 {
					t.Logf("z %.1f: %s", z[len(z)-1], f.Message)
				}
			}
		}
	}
	checkCoverage(t, "location", z, false)
}

// TestSmearedLossNoSplitStep: on coverage_test.go's route with a smeared
// 9 A loss (h 4 m) and leakage, the stations reading the loss's
// transition two spacings from it are no step of their own, so every
// draw reports one step. Before a step was judged against its more
// significant neighbour's transition (explained in stepFindings), 14 of
// the 300 draws also reported a fall of 0.7-2.1 A a station or two
// before or after the loss, and the loss itself then read 8.38-8.93 A.
func TestSmearedLossNoSplitStep(t *testing.T) {
	sc := scenario("smeared h 4 m, leakage, sigmas 0.05-0.3 A")
	rng := rand.New(rand.NewPCG(1, 0x5eed))
	split := 0
	for range mcDraws {
		st, _ := sc.route(rng)
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, f := range r.Findings {
			if f.Kind == KindCurrentStep || f.Kind == KindCurrentChange {
				n++
			}
		}
		if n > 1 {
			split++
		}
	}
	if split > 0 {
		t.Errorf("%d of %d draws report more than one step, want none", split, mcDraws)
	}
}
