package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// A window that fails its own chi-square test does not keep the
// noise-only sigmas: two sensors' clocks 1 ms ahead of and behind the
// other three (gateway offsets) shift their phases by 18 degrees at 50 Hz, and the fit
// of 200 A go and return (simulated truth, the inverse package's forward
// model) then misses the currents by about 1 % and the phases by several
// degrees. The window is "degraded" and its sigmas are widened by the
// square root of the reduced chi-square (the Birge ratio), so that the
// truth lies within three of them; before, the sigmas were the
// noise-only 0.0013 A and 0.0004 degrees, the truth 1,400 of them away.
func TestDegradedWindowSigmasCoverMisfit(t *testing.T) {
	a, p := fenwickProcessor(t)
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(200, -160*math.Pi/180)}
	rng := rand.New(rand.NewPCG(10, 1))
	w := synthWindow(a, truth, [3]float64{}, 1796279400, 500, 500, a.Noise, rng)
	// Two sensors 1 ms out, one ahead and one behind: no one sensor
	// carries the misfit, so none is left out as inconsistent (isolate)
	// and the window is solved with all, degraded.
	for k, dt := range map[int]float64{len(w.Sensors) - 1: 0.001, 0: -0.001} {
		s := &w.Sensors[k]
		for i := range s.T {
			s.T[i] += dt
		}
	}
	e, alarms := p.solve(w, p.reduce(w))
	if e.Quality != "degraded" {
		t.Fatalf("quality %q (chi2 %.3g on %d), want degraded", e.Quality, e.Chi2, e.DOF)
	}
	if want := math.Sqrt(e.Chi2 / float64(e.DOF)); math.Abs(e.SigmaScale-want) > 1e-9*want {
		t.Errorf("sigma_scale %v, want sqrt(chi2/dof) = %v", e.SigmaScale, want)
	}
	if al, ok := alarmFor(alarms, AlarmDegraded, ""); !ok {
		t.Error("no degraded alarm")
	} else {
		t.Logf("degraded alarm: %s", al.Message)
	}
	for i, c := range e.Conductors {
		ti, tp := cmplx.Abs(truth[i]), cmplx.Phase(truth[i])*180/math.Pi
		dp := math.Remainder(*c.Phase-tp, 360)
		t.Logf("%s: %.4f ± %.4f A (truth %.1f), phase %.3f ± %.3f deg (truth %.1f)", c.Name, c.Current, c.CurrentSigma, ti, *c.Phase, *c.PhaseSigma, tp)
		if math.Abs(c.Current-ti) > 3*c.CurrentSigma {
			t.Errorf("%s: current %.4f A is %.3g sigma (%.3g A) from the truth %.1f A", c.Name, c.Current, math.Abs(c.Current-ti)/c.CurrentSigma, c.CurrentSigma, ti)
		}
		if math.Abs(dp) > 3**c.PhaseSigma {
			t.Errorf("%s: phase %.3f deg is %.3g sigma (%.3g deg) from the truth %.1f deg", c.Name, *c.Phase, math.Abs(dp) / *c.PhaseSigma, *c.PhaseSigma, tp)
		}
	}
}
