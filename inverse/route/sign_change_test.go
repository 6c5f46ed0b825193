package route

import (
	"math"
	"strings"
	"testing"
)

// TestStepChangeOfSignWorded: a DC conductor whose current is -8 A
// (flowing toward decreasing chainage) before a point and +25 A past it
// has current flowing away from that point both ways; by Kirchhoff's
// current law (from memory) 33 A joins it there, and with the signs
// turned (25 A, then -8 A) 33 A leaves it there. The step is reported
// with that size and said to be a change of sign, not a rise or fall by
// 33 A (which reads as a change of size in one direction of flow), where
// two close cables carrying current opposite ways are no longer
// exchanged by a jump of conductor 1 and a real change of sign is
// followed on one conductor (report's leadBySwap). A change of size with
// one sign keeps its wording. The step's tolerance is kStep of its sigma.
func TestStepChangeOfSignWorded(t *testing.T) {
	const sigma = 0.05
	for _, tc := range []struct {
		before, after float64
		sign          bool
		why           string
	}{
		{-8, 25, true, "joining"},
		{25, -8, true, "leaving"},
		{-25, -8, false, "joining"},
	} {
		st := spurSigma(5, 0, 6, sigma)
		for i := range st {
			st[i].Current = tc.before + (st[i].Current - cpI0*math.Exp(-cpAlpha*float64(i)*cpSpacing))
			if i > 6 {
				st[i].Current += tc.after - tc.before
			}
		}
		r, err := Build(st, &Settings{})
		if err != nil {
			t.Fatal(err)
		}
		got := findings(r, KindCurrentStep)
		if len(got) != 1 {
			for _, f := range r.Findings {
				t.Log(f.Kind, f.Message)
			}
			t.Fatalf("%g to %g A: %d current steps, want 1", tc.before, tc.after, len(got))
		}
		f := got[0]
		want := tc.after - tc.before
		if v := f.Values[0]; math.Abs(v.Value-want) > kStep*v.Sigma {
			t.Errorf("%g to %g A: step %g ± %g A, want %g", tc.before, tc.after, v.Value, v.Sigma, want)
		}
		// A reversal in time (a traction current braking) reads the same
		// as one along the conductor: the message says so (stepInTime).
		if strings.HasPrefix(f.Message, "current changes sign") != tc.sign || !strings.Contains(f.Message, tc.why) || !strings.Contains(f.Message, stepInTime) {
			t.Errorf("%g to %g A: want a change of sign %v, current %s: %s", tc.before, tc.after, tc.sign, tc.why, f.Message)
		}
	}
}
