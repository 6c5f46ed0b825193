package main

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// Conductors of different phase on a grid slightly off its frequency.
//
// Truth: the simulator's scenario (inverse/simulate), each seed its own
// noise. The grid runs at 50.05 Hz or 49.8 Hz, inside the ±1% of EN 50160
// (from memory: 50 Hz ± 1% for 99.5% of a year), and locate is given
// --freq 50. Where the conductors differ in phase by other than 0° or 180°
// the phase of the field changes along a traverse, so that a walking
// sensor's windows seem to run off the frequency by tenths of a hertz.
// Before, the frequency check kept only the few windows within 10 of
// their sigmas of the median (9 of 160), a biased few, and the groups
// fitted a phantom line in place of the phase ramp the remaining offset
// called for: currents 10-20 sigma off and false current steps, every fit
// "sound" (found in review).

// offNominalScenario writes a scenario at Corrow Marsh (an invented site)
// with the conductors given, each as "name y_m current_a phase_deg", at
// 0.9 m, all at freq Hz, walked over four traverses back and forth, and
// simulates it with seed. It returns the scenario and the log.
func offNominalScenario(t *testing.T, dir string, freq float64, seed int, conductors ...string) (*simulate.Scenario, string) {
	t.Helper()
	text := corrowMarshWalk("corrow-marsh-phases", "Corrow Marsh, feeder", seed, 10)
	for _, c := range conductors {
		var name string
		var y, cur, ph float64
		if _, err := fmt.Sscanf(c, "%s %g %g %g", &name, &y, &cur, &ph); err != nil {
			t.Fatal(err)
		}
		text += fmt.Sprintf(`
[[conductor]]
name = %q
kind = "line"
point = [0.0, %g, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = %g
frequency_hz = %g
phase_deg = %g
`, name, y, cur, freq, ph)
	}
	return simulateScenario(t, dir, "scenario", text)
}

// corrowMarshWalk returns the head of a scenario at Corrow Marsh (an
// invented site), up to its conductors: the given name, site and seed, a
// sensor 0.3 m up with noise_nt of noise logging at 2 kHz, walked at 1 m/s
// over four 8 m traverses 5 m apart along a 30 m route.
func corrowMarshWalk(name, site string, seed int, noise float64) string {
	return fmt.Sprintf(`name = %q
site = %q
seed = %d
start = "2026-06-11T08:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = %.1f
sample_rate_hz = 2000
[survey]
route = [[0.0, 0.0], [30.0, 0.0]]
count = 4
spacing_m = 5.0
first_at_m = 5.0
length_m = 8.0
speed_m_s = 1.0
turn_s = 5.0
`, name, site, seed, noise)
}

// checkPhasedLines checks every group of doc against the scenario's
// crossings: as many sources as conductors, each matched by its offset to
// the conductor nearest, with its current, depth and phase difference
// from the first conductor within kSigma sigma of the truth; and no
// finding of the current changing along the route.
func checkPhasedLines(t *testing.T, label string, doc *resultDoc, sc *simulate.Scenario) {
	t.Helper()
	truth := map[string][]simulate.Crossing{}
	for _, c := range sc.Crossings() {
		truth[c.Line] = append(truth[c.Line], c)
	}
	if len(doc.Groups) != 4 {
		t.Fatalf("%s: %d groups, want the 4 traverses", label, len(doc.Groups))
	}
	wrap := func(d float64) float64 { return math.Remainder(d, 360) }
	for _, g := range doc.Groups {
		cs := truth[g.Key]
		if len(g.Sources) != len(cs) {
			t.Errorf("%s %s: %d sources, want the %d conductors", label, g.Key, len(g.Sources), len(cs))
			continue
		}
		var ref, refSigma, refTrue float64
		for i, c := range cs {
			var s *docSource
			for j := range g.Sources {
				if s == nil || math.Abs(g.Sources[j].Point[1]-c.Point[1]) < math.Abs(s.Point[1]-c.Point[1]) {
					s = &g.Sources[j]
				}
			}
			if d := math.Abs(s.Current - c.Current); !(d <= kSigma*s.CurrentSigma) {
				t.Errorf("%s %s conductor %d: current %.5g ± %.2g A, true %.5g A", label, g.Key, c.Conductor, s.Current, s.CurrentSigma, c.Current)
			}
			if d := math.Abs(s.Depth - c.Depth); !(d <= kSigma*s.DepthSigma) {
				t.Errorf("%s %s conductor %d: depth %.5g ± %.2g m, true %.5g m", label, g.Key, c.Conductor, s.Depth, s.DepthSigma, c.Depth)
			}
			if s.Phase == nil || s.PhaseSigma == nil {
				t.Errorf("%s %s: a source without a phase", label, g.Key)
				continue
			}
			ph := *s.Phase
			if s.Direction[0] < 0 { // the current the other way: half a turn
				ph += 180
			}
			if i == 0 {
				ref, refSigma, refTrue = ph, *s.PhaseSigma, c.Phase
				continue
			}
			got, want := wrap(ph-ref), wrap(c.Phase-refTrue)
			if sg := math.Hypot(*s.PhaseSigma, refSigma); !(math.Abs(wrap(got-want)) <= kSigma*sg) {
				t.Errorf("%s %s conductor %d: phase %.4g ± %.2g° from the first, true %.4g°", label, g.Key, c.Conductor, got, sg, want)
			}
		}
	}
	for _, f := range doc.Findings {
		if strings.Contains(f.Message, "current falls") || strings.Contains(f.Message, "current rises") {
			t.Errorf("%s: a current step where the currents hold: %s", label, f.Message)
		}
	}
}

// estimatedFreq parses the warning "AC frequency estimated at F ± S Hz
// from N windows"; ok is false when there is none.
func estimatedFreq(warnings []string) (f, sigma float64, n int, ok bool) {
	re := regexp.MustCompile(`AC frequency estimated at ([0-9.]+) ± ([0-9.]+) Hz from ([0-9]+) windows`)
	for _, w := range warnings {
		if m := re.FindStringSubmatch(w); m != nil {
			f, _ = strconv.ParseFloat(m[1], 64)
			sigma, _ = strconv.ParseFloat(m[2], 64)
			n, _ = strconv.Atoi(m[3])
			return f, sigma, n, true
		}
	}
	return 0, 0, 0, false
}

// TestOffNominalThreePhase: a three-phase circuit (60, 45 and 30 A at 0°,
// -120° and 120°, 1 m apart) on a grid at 50.05 Hz, located with
// --freq 50 over two seeds: the frequency is estimated within kSigma of its
// sigma of 50.05 Hz, less the walk's share (walkShare), each group fits
// the three conductors and no more, with their currents, depths and phase
// differences, and no current step is reported. (The estimate may come
// from some of the windows: the walk over conductors of different phase
// moves many beyond the cut, see estimateWindowFreq; the groups' ramps take up the
// estimate's error.)
//
// The walk's share: the phase of this circuit's field changes along a
// traverse, and the windows kept by the cut (calibrate.CombineWindowFreqs) in the two walking
// directions lie at different places, so the directions' mean keeps part
// of it, which the estimate's sigma (the noise's) does not hold. Since
// the frequency-estimating fit takes the change of the field's amplitude
// apart from its phase, more windows agree and both directions are kept
// (13 and 33 of 80 on seed 1, against 5 and none before, when the
// estimate pooled all windows and came out at 50.0501 ± 0.0004 Hz), and
// the estimate reads 50.0472 ± 0.0004 and 50.0469 ± 0.0004 Hz on the two
// seeds, 7 of its sigmas low: within the 0.004 Hz estimateWindowFreq's doc gives
// for the walk's share on this circuit.
func TestOffNominalThreePhase(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two logs")
	}
	const walkShare = 0.004 // Hz
	for _, seed := range []int{1, 2} {
		label := fmt.Sprintf("seed %d", seed)
		sc, log := offNominalScenario(t, t.TempDir(), 50.05, seed, "L1 -1 60 0", "L2 0 45 -120", "L3 1 30 120")
		doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
		f, sigma, _, ok := estimatedFreq(doc.Warnings)
		switch {
		case !ok:
			t.Errorf("%s: no frequency estimate in %q", label, doc.Warnings)
		case !(math.Abs(f-50.05) <= kSigma*sigma+walkShare):
			t.Errorf("%s: frequency estimated at %g ± %g Hz, true 50.05 Hz (allowing %g Hz for the walk)", label, f, sigma, walkShare)
		}
		checkPhasedLines(t, label, doc, sc)
	}
}

// TestOffNominalTwoCables: two cables 120° apart in phase (25 A and 15 A,
// 1.6 m apart) on a grid at 49.8 Hz, located with --freq 50 over two
// seeds: each group fits the two cables and no more, with their currents,
// depths and phase difference, no current step is reported, and the
// groups' phase ramps, which agree, put the frequency within kSigma of
// their sigma of 49.8 Hz (the windows' own estimate keeps a small share of
// the walk, 0.002 Hz here, beyond its sigma).
func TestOffNominalTwoCables(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two logs")
	}
	re := regexp.MustCompile(`ran steadily at ([0-9.]+) ± ([0-9.]+) Hz`)
	for _, seed := range []int{1, 2} {
		label := fmt.Sprintf("seed %d", seed)
		sc, log := offNominalScenario(t, t.TempDir(), 49.8, seed, "cable -0.8 25 40", "cable2 0.8 15 160")
		doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
		checkPhasedLines(t, label, doc, sc)
		found := false
		for _, w := range doc.Warnings {
			m := re.FindStringSubmatch(w)
			if m == nil {
				continue
			}
			found = true
			f, _ := strconv.ParseFloat(m[1], 64)
			s, _ := strconv.ParseFloat(m[2], 64)
			if !(math.Abs(f-49.8) <= kSigma*s) {
				t.Errorf("%s: the ramps put the frequency at %g ± %g Hz, true 49.8 Hz", label, f, s)
			}
		}
		if _, _, _, ok := estimatedFreq(doc.Warnings); ok && !found {
			// The windows' estimate was close enough that no group's
			// ramp turns the phase over freqCheckDegrees: no warning
			// is owed.
			for _, g := range doc.Groups {
				if g.RampHz != nil && math.Abs(*g.RampHz)*8*360 > freqCheckDegrees {
					t.Errorf("%s: %s turned %.2g° but no warning gives the frequency: %q", label, g.Key, *g.RampHz*8*360, doc.Warnings)
				}
			}
		}
	}
}
