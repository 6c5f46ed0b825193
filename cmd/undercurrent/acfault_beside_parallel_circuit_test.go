package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// sorrelFault is a 20 A 50 Hz feeder at 1 m along N (an invented site)
// with 3 A leaving at 90° to its current at N FAULT (a -3 A at 90°, that
// is 3 A at 270°, polyline superposed from the fault on) and a parallel
// 15 A 50 Hz circuit at PHASE° 3 m east at 0.8 m; every conductor at
// exactly 50 Hz. Fifteen 10 m traverses every 5 m from N 5, walked back
// and forth at 0.5 m/s, 5 nT readings at 1 kHz.
const sorrelFault = `name = "sorrel-fault"
site = "Sorrel Row (invented), 50 Hz feeder beside a parallel circuit"
seed = SEED
start = "2026-06-02T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 5.0
sample_rate_hz = 1000.0
[survey]
route = [[0.0, 0.0], [0.0, 80.0]]
count = 15
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
current_a = 20.0
frequency_hz = 50.0
phase_deg = 0.0
[[conductor]]
name = "fault share"
kind = "polyline"
vertices = [[0.0, FAULT, -1.0], [0.0, 1000.0, -1.0]]
current_a = 3.0
frequency_hz = 50.0
phase_deg = 270.0
[[conductor]]
name = "parallel circuit"
kind = "line"
point = [3.0, 0.0, -0.8]
direction = [0.0, 1.0, 0.0]
current_a = 15.0
frequency_hz = 50.0
phase_deg = PHASE
`

// TestACFaultBesideParallelCircuit: beside a parallel circuit of another
// phase (or the same), the field's phase changes along each traverse, and
// near the fault the lines' model misses the partial field of the current
// leaving. Part of that misfit lines up with a turn in time (a traverse is
// walked at a steady pace): the groups near the fault kept phase ramps of
// 2e-5 to 3.6e-4 Hz, the two either side of it turning 2.2-2.6° and
// raising a warning that the frequency was off or wandered (it is exactly
// 50 Hz), and the ramps of different frequencies blocked the phasor-step
// test, so the 3 A loss was reported nowhere, near the start, mid-route or
// near the end (found in review). Simulated truth: no warning of the
// frequency, no ramp, and one current step of 3 A at 90° to the line
// current (within four sigmas) at the fault's chainage (N - 5 m, within
// four sigmas), for the fault near the start, mid-route and near the end,
// the parallel circuit at 120° and at 0°, over two seeds (one with -short).
func TestACFaultBesideParallelCircuit(t *testing.T) {
	seeds := []int{71, 72}
	if testing.Short() {
		seeds = seeds[:1]
	}
	for _, fault := range []float64{12.5, 42.5, 67.5} {
		for _, phase := range []float64{120, 0} {
			for _, seed := range seeds {
				name := fmt.Sprintf("fault N %g, parallel at %g°, seed %d", fault, phase, seed)
				text := strings.NewReplacer("SEED", fmt.Sprint(seed), "FAULT", fmt.Sprintf("%.1f", fault), "PHASE", fmt.Sprintf("%.1f", phase)).Replace(sorrelFault)
				log := simulateText(t, t.TempDir(), "sorrel", text, ".arrows")
				doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
				for _, w := range doc.Warnings {
					if strings.Contains(w, "Hz") {
						t.Errorf("%s: warning %q", name, w)
					}
				}
				for _, g := range doc.Groups {
					if g.RampHz != nil {
						t.Errorf("%s: %s kept a phase ramp of %.3g Hz at the exact frequency", name, g.Key, *g.RampHz)
					}
				}
				var steps []docFinding
				for _, f := range doc.Findings {
					if f.Kind == "current-step" {
						steps = append(steps, f)
					}
				}
				if len(steps) != 1 {
					var all []string
					for _, f := range doc.Findings {
						all = append(all, f.Kind+": "+f.Message)
					}
					t.Errorf("%s: %d current steps, want the one loss; findings:\n%s", name, len(steps), strings.Join(all, "\n"))
					continue
				}
				want := map[string]float64{"current leaving": 3, "angle to line current": 90, "location (chainage)": fault - 5}
				for _, v := range steps[0].Values {
					w, ok := want[v.Name]
					if !ok {
						continue
					}
					delete(want, v.Name)
					if !(math.Abs(v.Value-w) <= kSigma*v.Sigma) {
						t.Errorf("%s: %s %.4g ± %.2g, true %g", name, v.Name, v.Value, v.Sigma, w)
					}
				}
				for k := range want {
					t.Errorf("%s: the step gives no %q: %s", name, k, steps[0].Message)
				}
			}
		}
	}
}
