package report

import (
	"math"
	"slices"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestDiveSplitFollowsSum: a 2 A feeder diving from 1 m to 6 m under a
// culvert and rising again (testdata/scenarios/wrenbeck-dive.toml, invented).
// No current leaves it, so by Ampere's law the whole 2 A crosses every
// traverse. The traverses beside the bends in its depth are fitted as two
// lines a few decimetres apart carrying the current between them in shares
// the readings do not part; the route took the stronger share alone, 0.88-0.92
// A, and reported the current there 1.1 A "below both neighbours". It now
// takes their sum (inverse.Result.SameWay): every used station within 20% of
// the 2 A (the straight-line model's own error at a bend, which the fits'
// sigmas do not hold), and no change of current reported along the route.
func TestDiveSplitFollowsSum(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 11 traverses per seed")
	}
	splits := 0
	for _, seed := range []int64{1, 2, 3} {
		d := scenarioDoc(t, "wrenbeck-dive.toml", seed)
		for _, s := range d.Route.Stations {
			if s.Used && math.Abs(math.Abs(s.Current)-2) > 0.4 {
				t.Errorf("seed %d: station %s at %.1f m carries %.4g ± %.2g A, want the feeder's 2 A within 20%%", seed, s.Key, s.Chainage, s.Current, s.CurrentSigma)
			}
		}
		for _, g := range d.Groups {
			if slices.ContainsFunc(g.Notes, func(n string) bool { return strings.HasPrefix(n, inverse.SameWayNote) }) {
				splits++
			}
		}
		for _, f := range d.Findings {
			if f.Kind == "current-step" || f.Kind == "current-change" {
				t.Errorf("seed %d: a change of current on a feeder that loses none: %s", seed, f.Message)
			}
		}
	}
	if splits == 0 {
		t.Error("no traverse was fitted as a same-way split: the test no longer covers the sum")
	}
}
