package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// wrenbyShallow is an invented site: a 30 A DC feeder 1.0 m below ground
// and, 2 m east of it, a 10 A auxiliary cable laid shallow at 0.35 m,
// under six 10 m traverses with the sensors 0.3 m above ground.
const wrenbyShallow = `name = "wrenby-shallow-second"
site = "Wrenby Lane (invented)"
seed = 8
start = "2026-06-06T09:00:00Z"
[earth]
field_nt = [-180.0, 19150.0, -45250.0]
[sensor]
height_m = 0.3
noise_nt = 3.0
[survey]
route = [[0.0, 0.0], [0.0, 30.0]]
count = 6
spacing_m = 5.0
first_at_m = 2.5
length_m = 10.0
speed_m_s = 0.5
sample_spacing_m = 0.05
turn_s = 10.0
[[conductor]]
name = "Wrenby feeder"
kind = "line"
point = [0.0, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 30.0
[[conductor]]
name = "auxiliary cable"
kind = "line"
point = [2.0, 0.0, -0.35]
direction = [0.0, 1.0, 0.0]
current_a = 10.0
`

// TestLocateSummaryLeastCoverEveryConductor: the terminal summary gives
// the least cover over every conductor, naming the shallow auxiliary
// cable, and conductor 2's sentence gives its cover. Cover is the depth
// below ground (DOMAIN.md, minimum cover; NEC Table 300.5 states it as
// depth below grade): the scenario lays the cable 0.35 m down, and the
// summary's value must agree with it within four of its sigmas plus a
// millimetre. The summary used to give no cover for conductor 2, and the
// report's "least cover" was the feeder's 1.0 m. It also says where
// chainage 0 is on the ground, as the crew report does.
func TestLocateSummaryLeastCoverEveryConductor(t *testing.T) {
	log := simulateText(t, t.TempDir(), "wrenby", wrenbyShallow, ".csv")
	out := mustCLI(t, "locate", "--group-by", "group", "--sensor-height", "0.3", log)
	var line, c2 string
	for _, l := range strings.Split(out, "\n") {
		switch {
		case strings.HasPrefix(l, "Least cover"):
			line = l
		case strings.HasPrefix(l, "Conductor 2 "):
			c2 = l
		}
	}
	if !strings.HasPrefix(line, "Least cover over the 2 conductors followed: ") || !strings.Contains(line, "conductor 2 at T") {
		t.Fatalf("no least-cover line naming conductor 2:\n%s", out)
	}
	var v, s float64
	if _, err := fmt.Sscanf(strings.TrimPrefix(line, "Least cover over the 2 conductors followed: "), "%g ± %g m", &v, &s); err != nil {
		t.Fatalf("%q: %v", line, err)
	}
	if math.Abs(v-0.35) > kSigma*s+0.001 {
		t.Errorf("least cover %.5f ± %.5f m, true 0.35 m", v, s)
	}
	i := strings.Index(c2, "least cover ")
	if i < 0 {
		t.Fatalf("conductor 2's sentence gives no cover: %q", c2)
	}
	if _, err := fmt.Sscanf(c2[i+len("least cover "):], "%g ± %g m", &v, &s); err != nil || math.Abs(v-0.35) > kSigma*s+0.001 {
		t.Errorf("conductor 2's cover %q, true 0.35 m (%v)", c2[i:], err)
	}
	// Where chainage 0 lies, as the crew report says it: the feeder
	// crosses the first traverse (T01, 2.5 m north) at east 0.
	const zero = "Chainage 0 is where the fitted conductor crosses the first traverse along the route, T01, at E "
	j := strings.Index(out, zero)
	if j < 0 {
		t.Fatalf("no chainage-0 sentence:\n%s", out)
	}
	var e, n float64
	if _, err := fmt.Sscanf(out[j+len(zero):], "%g m, N %g m", &e, &n); err != nil || math.Abs(e) > 0.05 || math.Abs(n-2.5) > 0.05 {
		t.Errorf("chainage 0 at E %g, N %g m (%v), want about E 0, N 2.5", e, n, err)
	}
}
