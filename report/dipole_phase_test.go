package report

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"undercurrent/inverse"
)

// TestACDipolePhaseEstimated: an AC dipole's phase_deg, the phase of its
// moment's strongest axis (acMoment), is estimated from the readings, so
// results.json gives it a sigma and does not list "phase" among the
// quantities held (README: unidentifiable means "held, not estimated").
// Before, the demo's object read phase_deg 155.1 with sigma 0 and "phase"
// unidentifiable. The sigma is the first-order propagation of the axis's
// sigma through the phase (JCGM 100:2008 section 5.1.2) and is checked
// against the spread of the phase of noisy phasors drawn at random (the
// Monte Carlo propagation of JCGM 101:2008), within 3%: fixture moment
// (0.4, 0.25, -1.1) A m², sigma 0.02 A m² per axis and part.
func TestACDipolePhaseEstimated(t *testing.T) {
	mom, sig := [3]float64{0.4, 0.25, -1.1}, [3]float64{0.01, 0.01, 0.02}
	est := inverse.SourceEstimate{Kind: KindDipole, Point: [3]float64{29.7, 6, -0.6}, Moment: mom, MomentSigma: sig,
		Phase: 155.1, Depth: 0.6, DepthSigma: 0.02, Identifiable: inverse.Identifiable{Depth: true, Offset: true}}
	s := buildSource(est, nil, true)
	if slices.Contains(s.Unidentifiable, "phase") {
		t.Errorf("an AC dipole's phase is listed as unidentifiable: %v", s.Unidentifiable)
	}
	if s.Phase == nil || *s.Phase != 155.1 || s.PhaseSigma == nil {
		t.Fatalf("phase %v ± %v, want 155.1 with a sigma", s.Phase, s.PhaseSigma)
	}
	// The strongest axis, up, as a phasor at the reference phase, with
	// independent noise of its sigma in phase and in quadrature.
	rng := rand.New(rand.NewPCG(7, 11))
	ref := cmplx.Rect(math.Abs(mom[2]), 155.1*math.Pi/180)
	const n = 200000
	var ss float64
	for range n {
		z := ref + complex(sig[2]*rng.NormFloat64(), sig[2]*rng.NormFloat64())
		d := cmplx.Phase(z/ref) * 180 / math.Pi
		ss += d * d
	}
	mc := math.Sqrt(ss / n)
	if got := *s.PhaseSigma; math.Abs(got-mc) > 0.03*mc {
		t.Errorf("phase sigma %.4f°, Monte Carlo spread %.4f°", got, mc)
	}

	// DC: no phase at all; a line's phase keeps the fit's own sigma.
	if s := buildSource(est, nil, false); s.Phase != nil || s.PhaseSigma != nil || slices.Contains(s.Unidentifiable, "phase") {
		t.Errorf("DC dipole: phase %v ± %v, unidentifiable %v", s.Phase, s.PhaseSigma, s.Unidentifiable)
	}
	line := inverse.SourceEstimate{Kind: KindLine, Current: 40, CurrentSigma: 0.1, Phase: -25, PhaseSigma: 0.0013,
		Identifiable: inverse.Identifiable{Current: true, Phase: true, Depth: true, Offset: true, Azimuth: true, Dip: true}}
	if s := buildSource(line, nil, true); *s.PhaseSigma != 0.0013 || len(s.Unidentifiable) != 0 {
		t.Errorf("line: phase sigma %v, unidentifiable %v", *s.PhaseSigma, s.Unidentifiable)
	}
}
