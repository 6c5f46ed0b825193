package route

import (
	"math/rand/v2"
	"testing"
)

// gridStepRoute is phasorRoute with no change of current (30 A at 40°)
// whose grid frequency steps by hz partway through the survey, phase
// continuous (as a grid after a change of load): from 5 s after station
// from's start every phase turns by 360·hz degrees a second more. With
// ramped true, the stations past the step carry their groups' own ramp
// estimate of hz (Station.PhaseRampHz) as locate fits them (simulated
// truth).
func gridStepRoute(seed uint64, hz float64, from int, ramped bool) []Station {
	rng := rand.New(rand.NewPCG(seed, 31))
	st := phasorRoute(rng, 30*deg(40), 30*deg(40), 0.004, 0.004, 0)
	for i := range st {
		dt := float64(i-from)*20 - 5
		if dt <= 0 {
			continue
		}
		st[i].Phase = wrapDeg(st[i].Phase + 360*hz*dt)
		if ramped {
			st[i].PhaseRampHz = hz + 4.5e-6*rng.NormFloat64()
			st[i].PhaseRampSigmaHz = 4.5e-6
		}
	}
	return st
}

// noChange fails t for any current step or change on r.
func noChange(t *testing.T, what string, r *Route) {
	t.Helper()
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep || f.Kind == KindCurrentChange {
			t.Errorf("%s: a change on a route with none: %s", what, f.Message)
		}
	}
}

// TestGridFrequencyStepIsNoPhasorStep: a 0.5 or 1 mHz step of the grid
// frequency at station 12 of 21 turns the later stations' phases 3.6 or
// 7.2° a station, steadily; no current leaves (simulated truth). Before,
// the run of turning stations was sized as 10-20 A leaving the 30 A line.
// Here the stations carry no frequency estimate of their own: the steady
// turn alone shows the ramp.
func TestGridFrequencyStepIsNoPhasorStep(t *testing.T) {
	for _, hz := range []float64{0.0005, 0.001} {
		for seed := uint64(1); seed <= 8; seed++ {
			r, err := Build(gridStepRoute(seed, hz, 11, false), nil)
			if err != nil {
				t.Fatal(err)
			}
			noChange(t, "grid step", r)
		}
	}
}

// TestGridFrequencyStepLateByGroupRamps: the grid frequency steps 0.5 mHz
// 5 s after the start of station 19 of 21, so only the route's last two
// intervals turn (too few to show a steady turn); the groups fitted with a phase ramp of their own
// (PhaseRampHz) say their frequency differs from their neighbours', and
// no phasor step is reported across them (simulated truth: no current
// leaves).
func TestGridFrequencyStepLateByGroupRamps(t *testing.T) {
	for seed := uint64(1); seed <= 8; seed++ {
		r, err := Build(gridStepRoute(seed, 0.0005, 18, true), nil)
		if err != nil {
			t.Fatal(err)
		}
		noChange(t, "late grid step", r)
	}
}
