package simulate

import (
	"math"
	"testing"
)

// TestCrossingsVerticalSegment: a cable that ends in a vertical earth rod
// under a traverse (Corran Leys pumping station, invented: a bond cable
// 0.8 m down ending at east 30 m in a rod to 6.8 m) crosses that traverse
// once, at the rod's top, with the cable's current. The rod is a point in
// plan and crosses no survey line, so it adds no crossing and no NaN row
// to the truth file.
func TestCrossingsVerticalSegment(t *testing.T) {
	sc := parse(t, `
[sensor]
sample_rate_hz = 5
[survey]
route = [[0, 0], [60, 0]]
count = 3
spacing_m = 4
first_at_m = 26
length_m = 12
[[conductor]]
kind = "polyline"
vertices = [[-200, 0, -0.8], [30, 0, -0.8], [30, 0, -6.8]]
current_a = 10
`)
	got := sc.Crossings()
	for _, c := range got {
		for _, v := range []float64{c.Point[0], c.Point[1], c.Point[2], c.Depth, c.Along} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("crossing %+v is not finite", c)
			}
		}
	}
	// Traverses at east 26 and 30 cross the cable; the one at 34 is past
	// its end.
	want := []struct {
		line string
		x    float64
	}{{"T01", 26}, {"T02", 30}}
	if len(got) != len(want) {
		t.Fatalf("%d crossings, want %d: %+v", len(got), len(want), got)
	}
	for i, w := range want {
		g := got[i]
		if g.Line != w.line || g.Conductor != 0 || math.Abs(g.Point[0]-w.x) > geomTol || math.Abs(g.Point[1]) > geomTol ||
			math.Abs(g.Depth-0.8) > geomTol || g.Current != 10 || math.Abs(g.Dir[0]-1) > geomTol {
			t.Errorf("crossing %d = %+v, want %s at east %g, 0.8 m down, 10 A east", i, g, w.line, w.x)
		}
	}
}
