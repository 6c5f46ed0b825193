package route

import (
	"math"
	"strings"
	"testing"
)

// TestUnsearchedPlacedOnConductor: a straight conductor along east at
// north 0, 1.5 m down, carrying 2 A (simulated truth, no noise), traversed
// every 20 m; stations T05-T07 failed, and a failed station's Point is
// its readings' centre, 4.9 m north and 0.3 m up (the sensors' height),
// as a traverse cut short gives. The unsearched stretch T04-T08 is
// placed at its middle on the conductor, east 120, north 0, up -1.5.
// Before, it took the middle failed station's readings' centre: 4.9 m
// off the route and above the ground (found in review).
func TestUnsearchedPlacedOnConductor(t *testing.T) {
	st := make([]Station, 12)
	for i := range st {
		x := float64(i) * 20
		st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1.5}, Dir: [3]float64{1, 0, 0},
			Current: 2, CurrentSigma: 0.01, Depth: 1.5, DepthSigma: 0.01, OK: true}
		if i >= 5 && i <= 7 {
			st[i].OK, st[i].Problem = false, "no current found"
			st[i].Current, st[i].CurrentSigma = 0, 0
			st[i].Point = [3]float64{x, 4.9, 0.3}
		}
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	got := findings(r, KindUnsearched)
	if len(got) != 1 {
		t.Fatalf("%d unsearched findings, want 1", len(got))
	}
	p := got[0].Position
	want := [3]float64{120, 0, -1.5}
	for i := range p {
		if math.Abs(p[i]-want[i]) > 0.01 {
			t.Errorf("unsearched stretch placed at %.3f, want on the conductor at %.3f", p, want)
			break
		}
	}
}

// TestUnsearchedWordedByCause: a route of 12 stations 2 m apart carrying
// 19.997 A, then 19.972 A past T08 (simulated truth, sigma 0.01 A):
// stations T09 and T10 hold magnetised objects (their fits converged).
// The caution names them as objects, not as failed fits, advises
// surveying clear of them, and prints the levels either side to the
// decimals of the change they bracket (19.997 and 19.972, not "20" and
// "19.97"). With T10 a failed fit instead, both causes are named, each
// beside its station. Before, the caution said "find why those fits
// failed" of two drums (found in review).
func TestUnsearchedWordedByCause(t *testing.T) {
	build := func(failed bool) Finding {
		st := make([]Station, 12)
		for i := range st {
			x := float64(i) * 2
			cur := 19.997
			if i > 8 {
				cur = 19.972
			}
			st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1.0}, Dir: [3]float64{1, 0, 0},
				Current: cur, CurrentSigma: 0.01, Depth: 1.0, DepthSigma: 0.01, OK: true}
		}
		st[9].Dipole = true
		st[10].Dipole = true
		if failed {
			st[10].Dipole, st[10].OK, st[10].Problem = false, false, "no current found"
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		got := findings(r, KindUnsearched)
		if len(got) != 1 {
			t.Fatalf("%d unsearched findings, want 1", len(got))
		}
		return got[0]
	}
	m := build(false).Message
	for _, want := range []string{key(9) + ", " + key(10) + ": magnetised objects", "clear of the objects",
		key(8) + " 19.997 A", key(11) + " 19.972 A"} {
		if !strings.Contains(m, want) {
			t.Errorf("message lacks %q: %s", want, m)
		}
	}
	if strings.Contains(m, "failed") {
		t.Errorf("message speaks of failed fits where none failed: %s", m)
	}
	m = build(true).Message
	for _, want := range []string{key(9) + ": a magnetised object", key(10) + ": fit failed", "why the other fits failed"} {
		if !strings.Contains(m, want) {
			t.Errorf("mixed causes: message lacks %q: %s", want, m)
		}
	}
}
