package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// tealTurn is a 10 A 50 Hz feeder 1 m down along N (an invented site)
// whose current turns 5° at N 32.5: 0.872 A leaves at -87.5° to the line
// current (10∠0 - 10∠5 = 0.872∠-87.5, Kirchhoff's current law for
// phasors), simulated as 0.872 A at 92.5° superposed from there on.
// Eleven 10 m traverses every 5 m from N 5 (chainage 0-50 m, the change
// at 27.5 m), walked back and forth at 0.5 m/s, 10 nT readings at 1 kHz.
const tealTurn = `name = "teal-turn"
site = "Teal Causeway (invented), 50 Hz feeder losing current out of phase"
seed = SEED
start = "2026-06-02T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 10.0
sample_rate_hz = 1000.0
[survey]
route = [[0.0, 0.0], [0.0, 80.0]]
count = 11
spacing_m = 5.0
first_at_m = 5.0
length_m = 10.0
speed_m_s = 0.5
turn_s = 10.0
[[conductor]]
name = "feeder"
kind = "line"
point = [0.0, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 10.0
frequency_hz = 50.0
phase_deg = 0.0
[[conductor]]
name = "current leaving"
kind = "polyline"
vertices = [[0.0, 32.5, -1.0], [0.0, 1000.0, -1.0]]
current_a = 0.87239
frequency_hz = 50.0
phase_deg = 92.5
`

// tealTurnTruth is tealTurn's current leaving, its angle to the line
// current, the turn of phase and the change's chainage (N 32.5, the
// first traverse at N 5).
var tealTurnTruth = map[string]float64{"current leaving": 0.87239, "angle to line current": -87.5, "phase turn": 5, "location (chainage)": 27.5}

// tealTurnPulls locates tealTurn at seeds 1..seeds and returns the pulls
// (error over sigma, simulated truth) of tealTurnTruth's values of the one
// current step, each checked within kSigma of the truth.
func tealTurnPulls(t *testing.T, seeds int) map[string][]float64 {
	t.Helper()
	pulls := map[string][]float64{}
	for seed := 1; seed <= seeds; seed++ {
		text := strings.ReplaceAll(tealTurn, "SEED", fmt.Sprint(seed))
		log := simulateText(t, t.TempDir(), "teal", text, ".arrows")
		doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
		var steps []docFinding
		for _, f := range doc.Findings {
			if f.Kind == "current-step" || f.Kind == "current-change" {
				steps = append(steps, f)
			}
		}
		if len(steps) != 1 {
			t.Errorf("seed %d: %d current steps or changes, want 1", seed, len(steps))
			continue
		}
		for _, v := range steps[0].Values {
			w, ok := tealTurnTruth[v.Name]
			if !ok {
				continue
			}
			d := v.Value - w
			if !(math.Abs(d) <= kSigma*v.Sigma) {
				t.Errorf("seed %d: %s %.4g ± %.2g, true %g", seed, v.Name, v.Value, v.Sigma, w)
			}
			pulls[v.Name] = append(pulls[v.Name], d/v.Sigma)
		}
	}
	for name := range tealTurnTruth {
		if len(pulls[name]) < seeds {
			t.Errorf("%s given on %d of %d seeds", name, len(pulls[name]), seeds)
		}
	}
	return pulls
}

// TestACPhasorStepSigmasThroughLocate: on tealTurn over eight seeds, the
// one current step's current leaving, angle, phase turn and location lie
// within four sigmas of the truth (0.872 A, -87.5°, 5°, 27.5 m) and their
// pulls' RMS is 0.5-1.6 (simulated truth). Before, the sigmas were some
// five times the spread (RMS 0.19 for the current leaving and the turn,
// 0.15 for the angle): each station's phasor was weighted with one
// variance per component, the ramp's error was added to the far level
// whole, and the route's between-station scatter, inflated by the
// stations reading part of the change, widened them all. The transition
// is read as a line fit over each traverse reads it (Station.Reach): as
// readings straight above, the far stations' part was understated and the
// levels drawn together, the turn 1.6 sigmas short on average over 40
// seeds. The location's sigma was then still three times its spread (RMS
// 0.29 here): the stations beside the change, which place it, were read
// with their sigmas widened by their misfit twice over, though the
// transition explains them at their noise (route readAtNoise).
func TestACPhasorStepSigmasThroughLocate(t *testing.T) {
	pulls := tealTurnPulls(t, 8)
	for name := range tealTurnTruth {
		p := pulls[name]
		if len(p) == 0 {
			continue
		}
		var ss float64
		for _, x := range p {
			ss += x * x
		}
		if rms := math.Sqrt(ss / float64(len(p))); rms < 0.5 || rms > 1.6 {
			t.Errorf("%s: pulls' RMS %.2f over %d seeds, want 0.5-1.6 (sigmas as wide as the spread): %.2f", name, rms, len(p), p)
		}
	}
}

// TestACPhasorStepPullsOverSeeds: on tealTurn over 40 seeds (not with
// -short), the pulls of the current leaving, angle, phase turn and
// location have sd 0.7-1.3 and mean within 0.4 (simulated truth). Before
// the stations beside the change were read at their noise (route
// readAtNoise) the location's sd was 0.38 and the sizes' 0.77-0.90; after,
// 1.01 and 0.97-1.07.
func TestACPhasorStepPullsOverSeeds(t *testing.T) {
	if testing.Short() {
		t.Skip("40 simulated surveys located (-short)")
	}
	const seeds = 40
	pulls := tealTurnPulls(t, seeds)
	for name := range tealTurnTruth {
		p := pulls[name]
		if len(p) < 2 {
			continue
		}
		var m, ss float64
		for _, x := range p {
			m += x
		}
		m /= float64(len(p))
		for _, x := range p {
			ss += (x - m) * (x - m)
		}
		if sd := math.Sqrt(ss / float64(len(p)-1)); sd < 0.7 || sd > 1.3 || math.Abs(m) > 0.4 {
			t.Errorf("%s: pulls' mean %+.2f, sd %.2f over %d seeds, want sd 0.7-1.3, mean within 0.4", name, m, sd, len(p))
		}
	}
}
