package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestACPhaseOffNominalAgainstNominalCosine: an AC window's phase is that
// of the current at the window's middle against a cosine of the site's
// frequency peaking at the Unix epoch, with a sigma that holds its error,
// also when the grid runs off nominal (grids sit some 0.01-0.05 Hz off
// all day, from memory) and the window is demodulated at the frequency
// found in it. Simulated truth (synthACWindowVarying: harrow-fen's
// fenwick-lane pair by Biot-Savart, 150 A at 20 and 200 degrees,
// sqrt 2 Re(I exp(i 2 pi f t)) with t Unix time, a 50.02 Hz grid, 500 Hz,
// 2 s windows): the phase against the 50 Hz cosine at time t is arg I +
// 360 (f - 50) t, which turns by 14.4 degrees a window. The noise is
// 150 nT (the site's noise set to it), so that the phases' sigmas (some
// 0.03 degrees) stand well above the rounding of the simulated
// waveform's phase 2 pi f t at t near 1.8e9 s in float64 (6e-5 rad, 0.004
// degrees), which the truth carries.
// The phases were referred to absolute time through the found frequency,
// so that its error of about 1e-5 Hz was multiplied by the Unix time
// (1.8e9 s): phases at random from window to window, each with a sigma
// of some 4e-4 degrees at 2 nT. The phases' pulls against the truth must be
// within 5 and their RMS about 1, and go less return 180 degrees.
//
// In the second pass the readings fill only the first half of each
// window (a feed that stopped halfway): the phase at the window's middle
// is then carried there from the readings' middle by the found
// frequency, whose sigma the phase's sigma must hold (360 sigma_f 0.5 s),
// else its pulls come out near 2.
func TestACPhaseOffNominalAgainstNominalCosine(t *testing.T) {
	for _, half := range []bool{false, true} {
		testACPhaseOffNominal(t, half)
	}
}

func testACPhaseOffNominal(t *testing.T, half bool) {
	a, p := fenwickProcessor(t)
	a.Alarms.MaxCurrent, a.Alarms.Step, a.Alarms.MaxImbalance = 0, 0, 0
	a.Noise = 150
	f, span := 50.02, 2.0
	truth := []complex128{cmplx.Rect(150, 20*math.Pi/180), cmplx.Rect(150, 200*math.Pi/180)}
	cur := func(float64) []complex128 { return truth }
	rng := rand.New(rand.NewPCG(16, 8))
	var sum2 float64
	var count, offNominal int
	for win := range 12 {
		t0 := 1796104800 + float64(win)*span
		n := int(500 * span)
		if half {
			n /= 2
		}
		w := synthACWindowVarying(a, cur, f, 0, 0, t0, 500, n, a.Noise, rng)
		w.End = t0 + span
		e, _ := p.solve(w, p.reduce(w))
		if e.Frequency != a.Frequency {
			offNominal++
		}
		mid := (w.Start + w.End) / 2
		for i, c := range e.Conductors {
			if c.Phase == nil || c.PhaseSigma == nil {
				t.Fatalf("window %d, %s: no phase", win, c.Name)
			}
			// The simulated waveform's phase at mid as the simulation
			// computes it, less the nominal cosine's.
			want := (cmplx.Phase(truth[i])+cmplx.Phase(cmplx.Exp(complex(0, 2*math.Pi*f*mid))))*180/math.Pi - 360*math.Mod(a.Frequency*mid, 1)
			d := math.Remainder(*c.Phase-want, 360)
			z := d / *c.PhaseSigma
			if math.Abs(z) > 5 {
				t.Errorf("half %v, window %d, %s: phase %.4f +- %.2g degrees, truth %.4f (off by %.4g)", half, win, c.Name, *c.Phase, *c.PhaseSigma, math.Remainder(want, 360), d)
			}
			sum2 += z * z
			count++
		}
		if len(e.Conductors) == 2 {
			tol := 5 * (*e.Conductors[0].PhaseSigma + *e.Conductors[1].PhaseSigma)
			if d := math.Remainder(*e.Conductors[0].Phase-*e.Conductors[1].Phase-180, 360); math.Abs(d) > tol {
				t.Errorf("window %d: go less return %.4f degrees, want 180", win, d+180)
			}
		}
	}
	if offNominal == 0 {
		t.Fatalf("no window demodulated off nominal: the test does not test the found frequency")
	}
	// 24 pulls: the RMS of unit normal pulls lies within 0.5..1.6 far
	// beyond 3 sigma (its sigma about 1/sqrt(48) = 0.14).
	rms := math.Sqrt(sum2 / float64(count))
	t.Logf("half %v: %d of 12 windows off nominal; RMS pull of the phases %.3f", half, offNominal, rms)
	if !(rms > 0.5 && rms < 1.6) {
		t.Errorf("half %v: RMS pull of the phases %.3f, want about 1", half, rms)
	}
}
