package route

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// walkedTwice returns the stations of a straight route walked twice
// (simulated truth): n traverses 4 m apart along east over a conductor
// 1.1 m deep whose current is cur(x) (A) at east x, each fitted with a
// sigma of sig A and the noise drawn from seed. The second walk's
// stations follow the first's in the caller's order, named "day2:Tnn",
// every point fitted 2 mm across the route from the truth, every
// direction 0.01 rad (0.6 degrees) off it, and the second walk's
// traverses laid out 0.01 mm along the route from the first's (one sigma
// each: a traverse's line is walked between the same pegs, while its
// crossing and direction are fitted; the review's single-line stations
// lay 0.1-0.4 mm from their repeats), so the tangent between two
// crossings of one traverse is noise in its sign, and
// every fit's direction has the sign a fit gives it, drawn at random
// (a lone fit does not know which way the route runs).
func walkedTwice(n int, sig float64, seed uint64, cur func(x float64) float64, second func(k int) bool) []Station {
	rng := rand.New(rand.NewPCG(seed, 7))
	var st []Station
	for walk := 0; walk < 2; walk++ {
		for k := 0; k < n; k++ {
			if walk == 1 && !second(k) {
				continue
			}
			x := 4 * float64(k)
			key := "T" + string(rune('0'+(k+1)/10)) + string(rune('0'+(k+1)%10))
			if walk == 1 {
				x += 1e-5 * rng.NormFloat64()
				key = "day2:" + key
			}
			s := Station{Key: key, Point: [3]float64{x, 0.002 * rng.NormFloat64(), -1.1}, Dir: [3]float64{1, 0.01 * rng.NormFloat64(), 0},
				Current: cur(x) + sig*rng.NormFloat64(), CurrentSigma: sig, Depth: 1.1, DepthSigma: 0.001, OK: true}
			if rng.IntN(2) == 0 {
				s.Dir = [3]float64{-s.Dir[0], -s.Dir[1], 0}
				s.Current = -s.Current
			}
			st = append(st, s)
		}
	}
	return st
}

// TestRepeatWalkNoFalseStep: a constant 25 A conductor walked twice (no
// loss: simulated truth). With the two walks' stations chained as
// neighbours, the last station's direction was turned by the tangent to
// its repeat, behind it on about half the draws, so it read -25 A and the route gave a false
// 50 A "current falls" between two stations 0 m apart (found in review).
// Every station must read +25 A along the route (within 5 sigma) and no
// change of current be reported, for the whole route walked again and
// for its last three traverses only, over twenty noise draws.
func TestRepeatWalkNoFalseStep(t *testing.T) {
	for _, c := range []struct {
		name   string
		second func(int) bool
	}{{"whole", func(int) bool { return true }}, {"last three", func(k int) bool { return k >= 4 }}} {
		for seed := uint64(1); seed <= 20; seed++ {
			r, err := Build(walkedTwice(7, 0.007, seed, func(float64) float64 { return 25 }, c.second), &Settings{SensorHeight: 0.3})
			if err != nil {
				t.Fatal(err)
			}
			for _, p := range r.Stations {
				if math.Abs(p.Current-25) > 5*p.CurrentSigma {
					t.Errorf("%s, seed %d: %s reads %.4f A along the route, want +25 A", c.name, seed, p.Key, p.Current)
				}
			}
			for _, f := range r.Findings {
				if f.Kind == KindCurrentStep || f.Kind == KindCurrentChange || f.Kind == KindCurrentAnomaly {
					t.Errorf("%s, seed %d: %s", c.name, seed, f.Message)
				}
			}
		}
	}
}

// TestRepeatWalkConfirmsLoss: 10 A falling by 0.5 A at east 42 m (between
// T11 at 40 m and T12 at 44 m; simulated truth, a sharp step seen as such
// by the stations, which is what the levels fit), 21 traverses, the
// second walk over T09-T14 only: the usual re-walk to confirm a loss.
// With the repeats chained as neighbours at one chainage the step search
// lost such a loss (found in review on Kestrel Moor). It must be found
// once, bracketed by T11 and T12 (named with their repeats), its size
// within 3 sigma of 0.5 A, on each of ten noise draws.
func TestRepeatWalkConfirmsLoss(t *testing.T) {
	cur := func(x float64) float64 {
		if x < 42 {
			return 10
		}
		return 9.5
	}
	for seed := uint64(1); seed <= 10; seed++ {
		r, err := Build(walkedTwice(21, 0.01, seed, cur, func(k int) bool { return k >= 8 && k <= 13 }), &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, f := range findings(r, KindCurrentStep) {
			n++
			if f.Keys[0] != "T11" || f.Keys[len(f.Keys)-1] != "T12" || !strings.Contains(f.Message, "T11 with day2:T11") {
				t.Errorf("seed %d: step %v, want it between T11 and T12 with their repeats: %s", seed, f.Keys, f.Message)
			}
			if v, ok := valueNamed(f, "step"); !ok || math.Abs(v.Value+0.5) > 3*v.Sigma {
				t.Errorf("seed %d: step %v, want -0.5 A within 3 sigma", seed, v)
			}
		}
		if n != 1 {
			t.Errorf("seed %d: %d steps, want the one loss: %v", seed, n, r.Findings)
		}
	}
}

// TestCombineRepeatsPhase: AC repeats either side of 180 degrees
// (179.8 and -179.8, equal sigmas) combine to 180, not 0, and repeats
// that disagree by more than their sigmas widen the combined sigma by
// sqrt(chi-square per degree of freedom) (the Birge ratio): 10.0 and
// 10.4 A with sigmas 0.1 A give 10.2 A, chi-square 8 on one degree of
// freedom, sigma 0.1/sqrt(2)*sqrt(8) = 0.2 A.
func TestCombineRepeatsPhase(t *testing.T) {
	a := Placed{Station: Station{Key: "T01", AC: true, Current: 10, CurrentSigma: 0.1, Phase: 179.8, PhaseSigma: 0.1, OK: true}, Index: 0}
	b := Placed{Station: Station{Key: "day2:T01", AC: true, Current: 10.4, CurrentSigma: 0.1, Phase: -179.8, PhaseSigma: 0.1, OK: true}, Index: 1}
	c := combine([]*Placed{&b, &a})
	if c.Key != "T01" || len(c.also) != 1 || c.also[0] != "day2:T01" {
		t.Errorf("combined as %q with %q, want T01 with its repeat day2:T01", c.Key, c.also)
	}
	if d := math.Abs(wrapDeg(c.Phase - 180)); d > 1e-9 {
		t.Errorf("phase %.6f, want 180", c.Phase)
	}
	if math.Abs(c.Current-10.2) > 1e-12 || math.Abs(c.CurrentSigma-0.2) > 1e-12 {
		t.Errorf("current %.6f ± %.6f A, want 10.2 ± 0.2 A", c.Current, c.CurrentSigma)
	}
}
