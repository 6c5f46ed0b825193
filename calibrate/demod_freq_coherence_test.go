package calibrate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// twoCablesTOML is an invented fixture shaped like the demo: a cable of
// 42 A at -25° and one of 15 A at 110° laid 2.6 m apart, both at exactly
// 50 Hz, crossed by eight 10 m traverses walked at 1 m/s both ways, logged
// at 500 Hz with 4 nT of noise. Along a traverse the field's phase turns
// from the one cable's to the other's.
const twoCablesTOML = `
name = "two-cables-walked"
seed = 31
start = "2026-03-14T10:05:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 4.0
sample_rate_hz = 500.0
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 8
spacing_m = 5.0
first_at_m = 2.0
length_m = 10.0
speed_m_s = 1.0
turn_s = 12.0
zigzag = true
[[conductor]]
name = "11 kV cable"
kind = "line"
point = [0.0, 0.9, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 42.0
frequency_hz = 50.0
phase_deg = -25.0
[[conductor]]
name = "LV feeder"
kind = "line"
point = [0.0, -1.7, -0.7]
direction = [1.0, 0.0, 0.0]
current_a = 15.0
frequency_hz = 50.0
phase_deg = 110.0
`

func twoCablesLog(t *testing.T) *ingest.Samples {
	t.Helper()
	sc, err := simulate.Parse([]byte(twoCablesTOML), "two-cables-walked.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestDemodulateEstimatedFreqWalked: with Freq zero the frequency of a
// log walked over two cables of different phase is estimated within 3 of
// its own sigmas of the truth (50 Hz, the fixture's), and the sigma is
// small enough that the phase turns by under MaxTurnDegrees across a
// traverse. Before, the spectral peak of one traverse (and a
// constant-amplitude sine fitted to it) read the turn of the phase along
// the traverse as frequency: 50.0733 Hz for the demo's 50, with no sigma.
func TestDemodulateEstimatedFreqWalked(t *testing.T) {
	s := twoCablesLog(t)
	res, err := Demodulate(s, &DemodSettings{Window: 0.2})
	if err != nil {
		t.Fatal(err)
	}
	const truth = 50.0 // the fixture's frequency_hz
	if !(res.FreqSigma > 0) || math.Abs(res.Freq-truth) > 3*res.FreqSigma {
		t.Errorf("estimated %.6f ± %.6f Hz, want within 3 sigma of %g Hz", res.Freq, res.FreqSigma, truth)
	}
	// 10 s traverses: under 5° is under 0.0014 Hz.
	if turn := 360 * res.FreqSigma * 10; !(turn < MaxTurnDegrees) {
		t.Errorf("sigma %.6f Hz turns the phase by %.1f° across a traverse", res.FreqSigma, turn)
	}
	if !anyContains(res.Warnings, "walked both ways") {
		t.Errorf("the warning does not say how the estimate was made: %q", res.Warnings)
	}
	if anyContains(res.Warnings, "turns by") {
		t.Errorf("a phase-turn warning at the right frequency: %q", res.Warnings)
	}
}

// TestDemodulateEstimateFreqCoherent: with EstimateFreq each window is
// fitted at its own frequency, but a steady tone must keep the phase it
// has at the fixed frequency in every window, so that a group's phasors
// describe one field. Before, each window was referenced to t = 0 (Unix
// time) at its own frequency, and a spread of thousandths of a hertz
// turned consecutive windows' phases by tens of degrees and more.
func TestDemodulateEstimateFreqCoherent(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	c := acLog(rng, 2000, 20000, 1.7e9, 50, testPhasors, 0.5)
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.1, EstimateFreq: true})
	if err != nil {
		t.Fatal(err)
	}
	bad := 0
	for i, w := range res.Windows {
		for k := 0; k < 2; k++ { // the two strong axes
			// The phase's one-sigma is Sigma/|B| radians; 5 sigma.
			d := math.Abs(cmplx.Phase(w.B[k] / testPhasors[k]))
			if d > 5*w.Sigma[k]/cmplx.Abs(testPhasors[k]) {
				if bad++; bad <= 3 {
					t.Errorf("window %d (%.5f Hz) axis %d: phase off by %.3f°, sigma %.3f°", i, w.Freq, k, d*180/math.Pi, w.Sigma[k]/cmplx.Abs(testPhasors[k])*180/math.Pi)
				}
			}
		}
	}
	if bad > 0 {
		t.Errorf("%d of %d phases off by over 5 sigma", bad, 2*len(res.Windows))
	}
	if math.Abs(res.DriftHz) > 1e-3 {
		t.Errorf("DriftHz %.5f at the field's own frequency", res.DriftHz)
	}
}

// TestDemodulatePhaseTurnWarning: a frequency 0.05 Hz off turns the phase
// by 180° across a 10 s log, though it lies well inside the amplitude
// band of 0.1 s windows (1 Hz); a warning must say so, with or without
// EstimateFreq. Before, nothing did.
func TestDemodulatePhaseTurnWarning(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 44))
	c := acLog(rng, 2000, 20000, 1.7e9, 50, testPhasors, 0.5)
	for _, est := range []bool{false, true} {
		res, err := DemodulateColumns(c, &DemodSettings{Freq: 50.05, Window: 0.1, EstimateFreq: est})
		if err != nil {
			t.Fatal(err)
		}
		// DriftHz is a median of noisy phase advances: 49.9999 or 50.000.
		if !anyContains(res.Warnings, "as if the frequency were 49.99") && !anyContains(res.Warnings, "as if the frequency were 50.00") || !anyContains(res.Warnings, "turns by 180°") {
			t.Errorf("EstimateFreq %v: no phase-turn warning naming about 50 Hz and 180°: %q", est, res.Warnings)
		}
		if math.Abs(res.DriftHz+0.05) > 1e-3 {
			t.Errorf("EstimateFreq %v: DriftHz %.5f, want -0.05", est, res.DriftHz)
		}
	}
}
