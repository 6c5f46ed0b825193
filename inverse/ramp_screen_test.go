package inverse

import (
	"math/rand/v2"
	"reflect"
	"testing"
)

// TestRampScreenSameAnswers: the screen in front of checkRamp's fits
// (rampMayPass) changes no result. Traverses of one 200 A line walked
// with a swing of 0 to 10 % (rampTraverse: its field the infinite line's
// of DOMAIN.md), from steady through changes near rampMinChange and the
// rampK sigmas to plain ramps, each walked both ways, half of them with
// 40 nT more noise (there the criterion, not rampMinChange, decides, and
// ramps come and go near it), are fitted with the screen and with the fits
// run on every traverse: the results are the same, field for field (a
// screen 1 criterion unit tighter than rampMayPass's changes one). And the screen does its work: on the steady
// traverses it runs the fits on at most a quarter (before it, on every one;
// on a 100-traverse steady survey it let 22 of 109 checks through).
func TestRampScreenSameAnswers(t *testing.T) {
	defer func() { rampScreenOn = true }()
	amps := []float64{0, 0.0005, 0.001, 0.002, 0.003, 0.005, 0.01, 0.03, 0.1}
	var steadyRuns, steady int
	for ai, amp := range amps {
		for tr := range 16 {
			mk := func() *Problem {
				rng := rand.New(rand.NewPCG(uint64(41+ai), uint64(tr)))
				p := rampTraverse(amp, 0.3+0.7*float64(tr), 29*float64(tr), tr%2 == 1, rng)
				if tr >= 8 {
					for i := range p.Fields {
						for c := range 3 {
							p.Fields[i][c] += 40 * rng.NormFloat64()
						}
					}
				}
				return p
			}
			rampScreenOn = true
			before := rampFullChecks.Load()
			got, err := FitLines(mk(), nil)
			if err != nil {
				t.Fatalf("swing %g traverse %d: %v", amp, tr, err)
			}
			if amp == 0 {
				steady++
				if rampFullChecks.Load() > before {
					steadyRuns++
				}
			}
			rampScreenOn = false
			want, err := FitLines(mk(), nil)
			if err != nil {
				t.Fatalf("swing %g traverse %d without the screen: %v", amp, tr, err)
			}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("swing %g traverse %d: the screen changed the result:\n with    %d lines, ramp %g ± %g, notes %q\n without %d lines, ramp %g ± %g, notes %q",
					amp, tr, len(got.Sources), got.CurrentRamp, got.CurrentRampSigma, got.Notes,
					len(want.Sources), want.CurrentRamp, want.CurrentRampSigma, want.Notes)
			}
		}
	}
	if 4*steadyRuns > steady {
		t.Errorf("the ramp fits ran on %d of %d steady traverses; the screen should spare at least three quarters", steadyRuns, steady)
	}
}
