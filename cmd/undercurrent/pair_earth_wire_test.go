package main

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

// pairEarthWireScenario is a healthy 50 Hz go-and-return pair at
// Corvey Holme, 30 A at 20 degrees out and 27 A at 200 back, 1 m apart at
// 0.9 m, with a small earth wire 0.48 m from the go core at 0.8 m carrying
// 0.45 A at wirePhase degrees; six traverses 5 m apart, nothing changing
// along the route. (The case found in review.)
const pairEarthWireScenario = `name = "pair with earth wire"
site = "Corvey Holme"
seed = 1
start = "2026-03-14T11:00:00Z"
[origin]
lat_deg = 52.3311
lon_deg = -0.4120
height_m = 10.0
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 0.5
sample_rate_hz = 2000
[survey]
route = [[0.0, 0.0], [60.0, 0.0]]
count = 6
spacing_m = 5.0
first_at_m = 10.0
length_m = 8
speed_m_s = 1.0
turn_s = 3.0
[[conductor]]
name = "go"
kind = "line"
point = [0.0, 0.0, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 30.0
frequency_hz = 50.0
phase_deg = 20.0
[[conductor]]
name = "return"
kind = "line"
point = [0.0, 1.0, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 27.0
frequency_hz = 50.0
phase_deg = 200.0
[[conductor]]
name = "earth wire"
kind = "line"
point = [0.0, 0.48, -0.8]
direction = [1.0, 0.0, 0.0]
current_a = 0.45
frequency_hz = 50.0
phase_deg = WIREPHASE
`

// pairWireDoc is what TestPairEarthWireNoFaultStep reads of the result
// document.
type pairWireDoc struct {
	Route *struct {
		PairNet  bool `json:"pair_net"`
		Stations []struct {
			Key          string  `json:"key"`
			Current      float64 `json:"current_a"`
			CurrentSigma float64 `json:"current_sigma_a"`
		} `json:"stations"`
	} `json:"route"`
	Findings []docFinding `json:"findings"`
}

// TestPairEarthWireNoFaultStep: over the healthy pair with an earth wire
// beside the go core (pairEarthWireScenario), the wire fitted on some
// traverses and not on others, the route must follow the pair as go core
// and return core at every traverse and report no step or anomaly in its
// net current. Before, the route paired the go core with the nearest
// opposite line, the wire where it was fitted (net 29.7 A) and the return
// core where it was not (net 2.5 A), and warned of 27 A earth faults on
// seeds 1-3 (wire in antiphase with the go core) and with the wire near
// quadrature (110 degrees) on 7 of 8 seeds. Each station's net current must
// also lie within 0.1 A of the simulated truth, the sum of the three
// currents (2.55 A with the wire at 200 degrees, |3 + 0.45 e^(i 90°)| =
// 3.03 A at 110): where the wire is not fitted its current goes into the
// cores', and the route adds it where it is (0.1 A: the fits that leave
// the wire out read the sum 0.02 A low, beyond their sigmas, a known
// limit). A change in the wire's own current, where it is followed as a
// further conductor, must be worded as resting on a weak line beside the
// pair and be no warning: seed 3 read it 0.27 A and 0.575 A at T02 and
// T04, each with a sigma near 0.07 A, for the 0.45 A it carries, and warned
// of 0.75 A joining it.
func TestPairEarthWireNoFaultStep(t *testing.T) {
	for _, c := range []struct {
		phase float64
		seeds []int
	}{
		{200, []int{1, 2, 3}},
		{110, []int{1, 2}},
	} {
		rad := math.Pi / 180
		want := cmplx.Abs(cmplx.Rect(30, 20*rad) + cmplx.Rect(27, 200*rad) + cmplx.Rect(0.45, c.phase*rad))
		for _, seed := range c.seeds {
			t.Run(fmt.Sprintf("wire%.0f/seed%d", c.phase, seed), func(t *testing.T) {
				dir := t.TempDir()
				text := strings.Replace(pairEarthWireScenario, "seed = 1", fmt.Sprintf("seed = %d", seed), 1)
				text = strings.Replace(text, "WIREPHASE", fmt.Sprintf("%.1f", c.phase), 1)
				log := simulateText(t, dir, "pairwire", text, ".csv")
				doc := locateInto[pairWireDoc](t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
				if doc.Route == nil || !doc.Route.PairNet || len(doc.Route.Stations) != 6 {
					t.Fatalf("route %+v: want a pair route over 6 stations", doc.Route)
				}
				for _, f := range doc.Findings {
					if !strings.HasPrefix(f.Kind, "current-") {
						continue
					}
					if f.Conductor <= 1 {
						t.Errorf("false finding on the healthy pair: %s %s", f.Severity, f.Message)
					} else if f.Severity == "warning" || !strings.Contains(f.Message, "weak line beside conductor 1's go-and-return pair") {
						// The wire followed as its own conductor: its
						// current trades with the cores' in the fits.
						t.Errorf("change on the wire not worded as resting on a weak line beside the pair: %s %s", f.Severity, f.Message)
					}
				}
				for _, st := range doc.Route.Stations {
					if math.Abs(st.Current-want) > 0.1 {
						t.Errorf("%s: net current %.4f ± %.4f A, want %.3f A (go + return + wire)", st.Key, st.Current, st.CurrentSigma, want)
					}
				}
			})
		}
	}
}
