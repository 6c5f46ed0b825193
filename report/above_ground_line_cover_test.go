package report

import (
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// aboveGroundScenario is an invented survey at Hollin Brake: a 3 A pipe
// 1.2 m below the ground along the route, and beside it, 1.5 m to the
// right, a 0.4 A cable lying 0.12 m above the ground (along a fence
// rail), carried along the whole route. The sensors are 0.3 m up.
const aboveGroundScenario = `
name = "hollin-brake-fence"
site = "Hollin Brake, pipe with a cable along a fence rail (invented)"
seed = 3
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [300.0, 19500.0, -45000.0]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = 1.0
[survey]
route = [[0.0, 0.0], [60.0, 0.0]]
count = 7
spacing_m = 8.0
first_at_m = 4.0
length_m = 10.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "pipe"
kind = "line"
point = [0.0, 0.0, -1.2]
direction = [1.0, 0.0, 0.0]
current_a = 3.0
[[conductor]]
name = "fence cable"
kind = "line"
point = [0.0, -1.5, 0.12]
direction = [1.0, 0.0, 0.0]
current_a = 0.4
`

// TestLineAboveGroundNoCover: a line the fit places over 3 sigma above
// the ground is no buried conductor (the poor-fit verdict,
// furtherAboveGround): it must not be followed as a further conductor,
// nor given a cover finding ("confirm before digging") or a place in the
// least-cover headline. Simulated truth (Biot-Savart through the
// simulate package, aboveGroundScenario): the fence cable lies 0.12 m
// above the ground, so any cover given for it is wrong. Before, such
// lines were followed as "conductor 2" with a negative cover that led the
// least-cover headline and a shallow-cover warning; the same cable
// crossing the route on the ground's surface at one traverse (a lone
// line) got a "confirm before digging here" warning with a negative cover.
func TestLineAboveGroundNoCover(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 7 traverses twice")
	}
	along := aboveGroundScenario
	// The cable crossing the route at 60 degrees over T04 (x = 28 m).
	crossing := strings.Replace(aboveGroundScenario, "point = [0.0, -1.5, 0.12]\ndirection = [1.0, 0.0, 0.0]",
		"point = [28.0, 0.0, 0.12]\ndirection = [0.5, 0.8660254037844386, 0.0]", 1)
	if crossing == along {
		t.Fatal("crossing scenario not made")
	}
	for _, c := range []struct {
		name, toml string
		least      int
	}{{"along", along, 3}, {"crossing", crossing, 1}} {
		t.Run(c.name, func(t *testing.T) { checkAboveGroundLine(t, c.toml, c.least) })
	}
}

// checkAboveGroundLine simulates scenario text sc and checks that the
// lines above the ground, at least least groups' worth, get no cover.
func checkAboveGroundLine(t *testing.T, text string, least int) {
	sc, err := simulate.Parse([]byte(text), "hollin-brake-fence")
	if err != nil {
		t.Fatal(err)
	}
	d := simulatedDocWith(t, sc, &BuildSettings{MinCover: 0.9})
	above := 0
	for _, g := range d.Groups {
		if strings.Contains(g.Problem, "above the ground given (over 3 sigma above)") {
			above++
		}
	}
	if above < least {
		for _, g := range d.Groups {
			t.Logf("%s: %q", g.Key, g.Problem)
		}
		t.Fatalf("%d groups say a further line lies above the ground: the check is empty", above)
	}
	for _, c := range d.Conductors {
		t.Errorf("conductor %d followed: %s", c.Number, ConductorSummary(d, &c))
	}
	for _, f := range d.Findings {
		if f.Kind == "shallow-cover" {
			t.Errorf("a cover finding: %s %s", f.Severity, f.Message)
		}
	}
	if lc := LeastCover(d); strings.Contains(lc, "-0.") || strings.Contains(lc, "further line") || strings.Contains(lc, "conductor 2") {
		t.Errorf("least cover names the line above the ground: %q", lc)
	}
}
