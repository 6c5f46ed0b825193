package report

import (
	"bytes"
	"math"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"undercurrent/inverse/simulate"
)

// spurEndScenario is an 8 A DC spur 1.2 m under level ground that runs
// east and ends at east 31 m (there it turns straight down, to an earth
// electrode 30 m deep), under thirteen 8 m traverses every 5 m from east 0
// to 60 m, read 0.3 m over the ground with 2 nT noise: an invented
// Larkhollow Lane survey. SEED is replaced by the seed.
const spurEndScenario = `name = "spur-end"
site = "Larkhollow Lane spur (invented)"
seed = SEED
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [60.0, 0.0]]
count = 13
spacing_m = 5.0
length_m = 8.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "spur"
kind = "polyline"
vertices = [[-200.0, 0.0, -1.2], [31.0, 0.0, -1.2], [31.0, 0.0, -30.0]]
currents_a = [8.0, 8.0]
`

// spurEndDoc simulates spurEndScenario with seed and builds its document
// as scenarioDoc does: one or two lines per traverse, depths below the
// ground at up = 0.
func spurEndDoc(t *testing.T, seed int) *Document {
	t.Helper()
	sc, err := simulate.Parse([]byte(strings.ReplaceAll(spurEndScenario, "SEED", strconv.Itoa(seed))), "spur-end.toml")
	if err != nil {
		t.Fatal(err)
	}
	return simulatedDoc(t, sc)
}

// TestAlongPlotsPastTheEnd: past the end of a conductor the route leaves
// out stations whose sound fits find only the end's field, a line far
// deeper and weaker than the conductor (the half-line's field,
// Biot-Savart; inverse/route ends.go). No magnetised object lies there
// (the simulated truth has none), so
//
//   - neither the along-route figures' legends nor results.csv's
//     left_out may call those stations objects: before, they were grey
//     rings under "not used (object)" and left_out read "a magnetised
//     object at this station";
//   - the depth figure's axis must keep the conductor's profile readable:
//     the truth is 1.2 m under the ground everywhere it runs, and the
//     fits past the end read 8 to 20 m, which stretched the axis to about
//     21 m (the profile in its top twelfth). The axis must end within
//     twice the truth depth, and the stations beyond it must still be
//     marked (at the axis's edge).
func TestAlongPlotsPastTheEnd(t *testing.T) {
	const truthDepth, end = 1.2, 31.0 // m under the ground; east of the end
	for _, seed := range []int{1, 2, 3} {
		d := spurEndDoc(t, seed)
		ended := false
		for _, f := range d.Findings {
			ended = ended || strings.Contains(f.Message, "appears to end")
			if f.Kind == "dipole-anomaly" {
				t.Errorf("seed %d: an object finding where the truth has none: %s", seed, f.Message)
			}
		}
		if !ended {
			t.Fatalf("seed %d: no finding that the spur ends", seed)
		}
		past := map[string]bool{} // stations past the end with a value, left out
		for i := range d.Route.Stations {
			st := &d.Route.Stations[i]
			if st.Used || st.Point[0] < end || d.whyLeftOut(st, 0) == leftFailed {
				continue
			}
			past[st.Key] = true
			if got := d.whyLeftOut(st, 0); got != leftPastEnd {
				t.Errorf("seed %d: %s, past the end, left out for reason %d, want past the end (%d)", seed, st.Key, got, leftPastEnd)
			}
		}
		if len(past) == 0 {
			t.Fatalf("seed %d: no station past the end keeps a value; the test checks nothing", seed)
		}
		for _, row := range csvRows(t, d, func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) }) {
			if !past[row["group"]] || row["source"] != "1" {
				continue
			}
			if lo := row["left_out"]; strings.Contains(lo, "object") || !strings.Contains(lo, "past the conductor's end") {
				t.Errorf("seed %d: results.csv %s left_out %q, want past the conductor's end", seed, row["group"], lo)
			}
		}

		for _, which := range []string{"current", "depth"} {
			p, err := alongPlot(d, d.Route, 0, which, false)
			if err != nil {
				t.Fatal(err)
			}
			c := vgsvg.New(20*vg.Centimeter, 8.5*vg.Centimeter)
			p.Draw(draw.New(c))
			var buf bytes.Buffer
			if _, err := c.WriteTo(&buf); err != nil {
				t.Fatal(err)
			}
			svg := buf.String()
			if strings.Contains(svg, "(object)") {
				t.Errorf("seed %d: the %s figure's legend names an object", seed, which)
			}
			if !strings.Contains(svg, "not used (past the end)") && !strings.Contains(svg, "off the scale") {
				t.Errorf("seed %d: the %s figure does not mark the stations past the end", seed, which)
			}
			if which == "depth" && !(p.Y.Max < 2*truthDepth) {
				t.Errorf("seed %d: the depth axis runs to %.2f m, over twice the spur's %.1f m", seed, p.Y.Max, truthDepth)
			}
			if which == "depth" && !(math.Max(p.Y.Min, 0) <= truthDepth) {
				t.Errorf("seed %d: the depth axis, %.2f to %.2f m, leaves out the spur's %.1f m", seed, p.Y.Min, p.Y.Max, truthDepth)
			}
		}
	}
}
