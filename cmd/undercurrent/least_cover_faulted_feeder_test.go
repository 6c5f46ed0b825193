package main

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// sallowHoltFeeder is an invented survey at Sallow Holt: a feeder 0.9 m
// down along the route (x = 0, running north) carrying FEED A, of which
// LOSS A leave it at y = 150 m (an earth fault; chainage 120 m, under T03),
// beside a supply cable 3 m east and 1.3 m down carrying SUPPLY A the whole
// way; 12 traverses 60 m apart from y = 30 m, 5 nT noise, the sensors 0.3 m
// above the ground at z = 0. A second walk is the same survey on another
// day, its traverses 0.6 m east and 0.8 m north of the first's.
const sallowHoltFeeder = `name = "sallow-holt-feeder"
site = "Sallow Holt feeder and supply cable (invented)"
seed = SEED
start = "START"
[earth]
field_nt = [-180.0, 19150.0, -45250.0]
[sensor]
height_m = 0.3
noise_nt = 5.0
[survey]
route = [[DX, DY], [DX, END]]
count = 12
spacing_m = 60.0
first_at_m = 30.0
length_m = 12.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "feeder"
kind = "polyline"
vertices = [[0.0, -300.0, -0.9], [0.0, 150.0, -0.9], [0.0, 1020.0, -0.9]]
currents_a = [FEED, AFTER]
[[conductor]]
name = "supply cable"
kind = "line"
point = [3.0, 0.0, -1.3]
direction = [0.0, 1.0, 0.0]
current_a = SUPPLY
`

// sallowHoltLog simulates one walk of sallowHoltFeeder with every current
// scaled by scale, its traverses offset (dx, dy) m.
func sallowHoltLog(t *testing.T, dir, name string, seed int, start string, scale, dx, dy float64) string {
	t.Helper()
	f := func(v float64) string { return fmt.Sprintf("%.3f", v) }
	text := strings.NewReplacer("SEED", fmt.Sprint(seed), "START", start,
		"DX", f(dx), "DY", f(dy), "END", f(720+dy),
		"FEED", f(25*scale), "AFTER", f(12*scale), "SUPPLY", f(18*scale)).Replace(sallowHoltFeeder)
	return simulateText(t, dir, name, text, ".csv")
}

// TestLocateLeastCoverFaultedFeederNotDoubted: a 25 A feeder that loses
// 13 A beside an 18 A supply cable becomes a further conductor when
// conductor 1 stays on the steady cable; its current runs from 25 A to
// 12 A along its track, which is the step the same run reports. Simulated
// truth: the least cover over the conductors followed is the feeder's
// 0.9 m (cover = depth below the ground, DOMAIN.md; NEC Table 300.5
// states cover as depth below grade), within kSigma of its sigma plus a
// millimetre, stated plainly: the feeder is a real conductor, and a range
// of current its own reported step explains is no sign of a model
// artefact. Walked once; walked again the next day at 10% more current;
// and walked again at 2.2 times the current, where only the currents at
// the first walk's level (as the steps take them) agree within each side
// of the fault. Before, the sentence called the feeder "a line that may be
// a model artefact (its current runs from 12.0 A to 25.0 A along its
// track)", on a re-walk "from 12.0 A to 27.5 A", mixing the walks' levels.
func TestLocateLeastCoverFaultedFeederNotDoubted(t *testing.T) {
	dir := t.TempDir()
	first := sallowHoltLog(t, dir, "walk1", 72, "2026-06-08T09:00:00Z", 1, 0, 0)
	cases := []struct {
		name  string
		scale float64 // the second walk's currents over the first's; 0 for none
	}{{"once", 0}, {"again-110pc", 1.1}, {"again-220pc", 2.2}}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			logs := []string{first}
			if c.scale > 0 {
				logs = append(logs, sallowHoltLog(t, dir, "walk2-"+c.name, 73, "2026-06-09T09:00:00Z", c.scale, 0.6, 0.8))
			}
			out := mustCLI(t, append([]string{"locate", "--group-by", "group", "--reference-z", "0"}, logs...)...)
			var line string
			step := false
			for _, l := range strings.Split(out, "\n") {
				if strings.HasPrefix(l, "Least cover") {
					line = l
				}
				// The premise: the feeder's loss is reported on the
				// conductor that sets the least cover, 13 A within 3 sigma.
				if i := strings.Index(l, "conductor 2: current falls by "); i >= 0 && strings.Contains(l, "warning") {
					var v, s float64
					if _, err := fmt.Sscanf(l[i+len("conductor 2: current falls by "):], "%g ± %g A", &v, &s); err != nil || math.Abs(v-13) > 3*s {
						t.Errorf("conductor 2's fall %q, truth 13 A (%v)", l, err)
					}
					step = true
				}
			}
			if !step {
				t.Fatalf("no fall of conductor 2's current reported:\n%s", out)
			}
			const over = "Least cover over the 2 conductors followed: "
			if !strings.HasPrefix(line, over) || !strings.Contains(line, "conductor 2 at ") {
				t.Fatalf("%q: want the least cover over 2 conductors on conductor 2, the feeder", line)
			}
			var v, s float64
			if _, err := fmt.Sscanf(strings.TrimPrefix(line, over), "%g ± %g m", &v, &s); err != nil || math.Abs(v-0.9) > kSigma*s+0.001 {
				t.Errorf("%q: least cover %.5f ± %.5f m, truth 0.9 m (%v)", line, v, s, err)
			}
			if strings.Contains(line, "artefact") || strings.Contains(line, "conductor 1's least cover") {
				t.Errorf("the faulted feeder, a real conductor whose current changes at its reported step, is doubted (%s): %q", filepath.Base(logs[len(logs)-1]), line)
			}
		})
	}
}
