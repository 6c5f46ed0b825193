package route

import (
	"math"
	"testing"
)

// TestObjectFindingOwnChainage: a cable along east at north 0, 1 m down,
// carrying 20 A (simulated truth, no noise), traversed every 2 m from
// east 2 (chainage 0); a drum lies at east 21, north -1.3, 0.6 m down,
// midway between T09 (east 20, chainage 18) and T10 (east 22), and the
// fit at T09 reports it. Its finding gives the drum's own chainage, 19 m
// (its position projected on the cable), not T09's 18 m beside an east
// of 21 m (found in review: a crew pacing chainage dug 1 m short).
func TestObjectFindingOwnChainage(t *testing.T) {
	st := make([]Station, 18)
	for i := range st {
		x := 2 + float64(i)*2
		st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1}, Dir: [3]float64{1, 0, 0},
			Current: 20, CurrentSigma: 0.01, Depth: 1, DepthSigma: 0.01, OK: true}
	}
	st[9].Dipole = true
	st[9].Object = &Object{Point: [3]float64{21, -1.3, -0.6}, PointSigma: [3]float64{0.01, 0.01, 0.01},
		Depth: 0.6, DepthSigma: 0.01, Moment: 5, MomentSigma: 0.1, Distance: 1.3, Evidence: 100}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	got := findings(r, KindDipole)
	if len(got) != 1 {
		t.Fatalf("%d object findings, want 1", len(got))
	}
	if f := got[0]; math.Abs(f.From-19) > 1e-6 || math.Abs(f.To-19) > 1e-6 {
		t.Errorf("object at east 21 given chainage %g-%g m, want 19 m (T09 at east 20 is chainage %g m)", f.From, f.To, r.Stations[9].Chainage)
	}
}
