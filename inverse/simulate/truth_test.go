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

// TestCrossingsCurrentAfterChange: the truth file's current is the one
// each traverse carried when it was walked over the conductor, not the
// current before a change (found in review: a scenario stepping from 150
// to 105 A at 100 s listed 150 A for every traverse). Invented: a return
// cable 0.9 m down at a tram depot, 15 traverses of 10 m at 0.5 m/s with
// 10 s turns, the current stepping at 100 s, during the fourth traverse.
// Each crossing's current is checked against the log itself: the reading
// over the cable, with the Earth's field taken off, must be the field of
// an infinite straight line, mu0 I / (2 pi r) (the Biot-Savart law for a
// long straight conductor), at r = 0.9 m of cover plus 0.3 m of sensor
// height, for the truth's current.
func TestCrossingsCurrentAfterChange(t *testing.T) {
	sc := parse(t, `
start = "2026-03-02T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 0
[survey]
count = 15
spacing_m = 5.0
first_at_m = 2.0
length_m = 10.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
kind = "line"
point = [0.0, 0.0, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 150.0
change_at_s = 100.0
current_after_a = 105.0
`)
	cs := sc.Crossings()
	if len(cs) != 15 {
		t.Fatalf("%d crossings, want 15", len(cs))
	}
	// The walk: 20 s per traverse and 10 s turns, so T04 runs from 90 to
	// 110 s and crosses the cable at its middle, 100 s: the change.
	n, get := simulate(t, sc)
	earth := [3]float64{-150, 19200, -45100}
	const mu0 = 4e-7 * math.Pi
	n105, compared := 0, 0
	for _, c := range cs {
		want := 150.0
		if c.Time >= 100 {
			want = 105
			n105++
		}
		if c.Current != want {
			t.Errorf("%s crossed at %.2f s: current %g A, want %g", c.Line, c.Time, c.Current, want)
		}
		// The reading nearest the crossing in time.
		best, bestDT := -1, math.Inf(1)
		for i := range n {
			tm, _, _, g := get(i)
			if dt := math.Abs(tm - sc.StartTime() - c.Time); g == c.Line && dt < bestDT {
				best, bestDT = i, dt
			}
		}
		_, r, b, _ := get(best)
		if math.Abs(r[1]) > 1e-6 {
			// Only a reading right over the cable is compared.
			continue
		}
		compared++
		d := [3]float64{b[0] - earth[0], b[1] - earth[1], b[2] - earth[2]}
		got := math.Hypot(math.Hypot(d[0], d[1]), d[2]) * 1e-9 * 2 * math.Pi * 1.2 / mu0
		if math.Abs(got-c.Current) > 1e-6*c.Current {
			t.Errorf("%s: the reading over the cable at %.2f s carries %.6f A, the truth says %g", c.Line, c.Time, got, c.Current)
		}
	}
	// T04 crosses at 100 s exactly, the change: it and the 11 after it
	// carried 105 A.
	if n105 != 12 {
		t.Errorf("%d crossings at 105 A, want 12", n105)
	}
	if compared != len(cs) {
		t.Errorf("%d of %d crossings had a reading right over the cable", compared, len(cs))
	}
}
