package main

import (
	"math/rand/v2"
	"testing"
)

// memoGroup is an invented group of two sensors logged in turn (0.3 and
// 0.8 m up on one pole) walked 10 m, with sd nT of noise on a smooth
// field: sensorTracks splits it into two tracks.
func memoGroup(sd float64, seed uint64) *group {
	rng := rand.New(rand.NewPCG(seed, 3))
	g := &group{key: "T01", memo: &groupMemo{}}
	for i := range 400 {
		x := -5 + 0.05*float64(i/2)
		up := 0.3 + 0.5*float64(i%2)
		g.points = append(g.points, [3]float64{x, 0, up})
		g.fields = append(g.fields, [3]float64{100*x + sd*rng.NormFloat64(), 50/up + sd*rng.NormFloat64(), sd * rng.NormFloat64()})
	}
	return g
}

// TestGroupMemoFollowsReadings: the kept tracks and measured noise
// (groupMemo) are those of the readings asked about: the same as computed
// afresh, again on a second call, for a copy of the group with other
// fields (as refitWith makes: it shares the memo), and after readings are
// appended.
func TestGroupMemoFollowsReadings(t *testing.T) {
	g := memoGroup(2, 1)
	want := tracksNoise(g.fields, sensorTracks(g.points))
	if len(sensorTracks(g.points)) != 2 {
		t.Fatalf("fixture: %d tracks, want the two sensors'", len(sensorTracks(g.points)))
	}
	for range 2 {
		if got := g.measuredNoise(false); got != want || !(got > 0) {
			t.Errorf("noise %g, computed afresh %g", got, want)
		}
		if tr := g.memo.sensorTracks(g.points); len(tr) != 2 {
			t.Errorf("kept tracks %d, want 2", len(tr))
		}
	}
	// A copy with noisier fields (it shares g's memo) has its own noise,
	// and g keeps its.
	other := memoGroup(8, 2)
	h := *g
	h.fields = other.fields
	wantH := tracksNoise(h.fields, sensorTracks(h.points))
	if got := h.measuredNoise(false); got != wantH || !(wantH > 2*want) {
		t.Errorf("copy with other fields: noise %g, computed afresh %g (the original's %g)", got, wantH, want)
	}
	if got := g.measuredNoise(false); got != want {
		t.Errorf("original after the copy: noise %g, want %g", got, want)
	}
	// Readings appended: noise and tracks of all of them.
	more := memoGroup(8, 3)
	g.points = append(g.points, more.points...)
	g.fields = append(g.fields, more.fields...)
	if got, w := g.measuredNoise(false), tracksNoise(g.fields, sensorTracks(g.points)); got != w {
		t.Errorf("after appending: noise %g, computed afresh %g", got, w)
	}
	// A group without a memo computes it every time.
	g.memo = nil
	if got, w := g.measuredNoise(false), tracksNoise(g.fields, sensorTracks(g.points)); got != w {
		t.Errorf("without a memo: noise %g, want %g", got, w)
	}
}
