package route

import (
	"math"
	"testing"
)

// TestStepDoubtReach: a current step's error (stepBias, Biot-Savart, the
// field of a semi-infinite straight line against an infinite one) widens
// a station within StepReachDepths of its depths from the step when the
// error is over 0.3 of the fit's own current sigma, and a farther one only
// when the error is at least that sigma. Invented fixture after the demo's
// feeder (a 9.1 A step on 42 A at 1.2 m): its station 88 m from the step
// had been widened by a term of about half its sigma (0.0029 to 0.0032 A).
func TestStepDoubtReach(t *testing.T) {
	const dI, current, depth = 9.1, 42.0, 1.2
	reach := []float64{1.2, 3, 6}
	term := func(d float64) float64 {
		dc, _, _ := stepBias(reach, d, dI, current)
		return math.Abs(dc)
	}
	step := Finding{Kind: KindCurrentStep, From: 95, To: 105,
		Values: []Value{{Name: "location (chainage)", Value: 100}, {Name: "step", Value: -dI}}}
	cases := []struct {
		name     string
		distance float64
		sigma    float64 // the fit's own current sigma, as a multiple of the term
		widened  bool
	}{
		{"88 m, term 0.5 sigma", 88, 2, false},
		{"88 m, term 1.5 sigma", 88, 1 / 1.5, true},
		{"7 m, term 0.5 sigma", 7, 2, true},
		{"7 m, term 0.2 sigma", 7, 5, false},
	}
	for _, c := range cases {
		sigma := c.sigma * term(c.distance)
		ps := []Placed{{Station: Station{Key: "T1", OK: true, Current: current, CurrentSigma: sigma, Depth: depth, DepthSigma: 0.001, Reach: reach}, Chainage: 100 - c.distance}}
		stepDoubt(ps, []Finding{step})
		if got := ps[0].StepNear != nil; got != c.widened {
			t.Errorf("%s: widened %v, want %v (sigma %.3g A, now %.3g A)", c.name, got, c.widened, sigma, ps[0].CurrentSigma)
		}
	}
}
