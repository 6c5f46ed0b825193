package report

import (
	"path/filepath"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

// TestSameWaySplitWhateverDatum: whether a traverse's two lines are one
// conductor split in two (inverse.Result.SameWay, which the route sums)
// is a matter of the readings' geometry, not of the level depths are
// reported from. A 2 A feeder diving from 1 m to 6 m under a culvert
// (testdata/scenarios/wrenbeck-dive.toml, invented; simulated truth: the
// traverses beside the bends split it) is fitted with the ground at up =
// 0 and again with a flat datum 0.9 m lower (a --reference-z below the
// ground, as one flat level on a climbing survey is at its high end):
// every traverse must be split, or not, alike. Before, the spacing was
// measured against the depth below the datum, and on a climbing weld main
// two splits were no longer summed, putting two false current steps on
// the route (found in review).
func TestSameWaySplitWhateverDatum(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 11 traverses twice")
	}
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "wrenbeck-dive.toml"))
	if err != nil {
		t.Fatal(err)
	}
	sc.Seed = 1
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	byKey, keys := groupProblems(s)
	ground, low := 0.0, -0.9
	splits := 0
	for _, k := range keys {
		a, errA := inverse.FitLines(byKey[k], &inverse.Settings{ReferenceZ: &ground})
		b, errB := inverse.FitLines(byKey[k], &inverse.Settings{ReferenceZ: &low})
		if errA != nil || errB != nil {
			continue
		}
		if len(a.SameWay) > 0 {
			splits++
		}
		if len(a.SameWay) != len(b.SameWay) {
			t.Errorf("%s: %d same-way splits below the ground, %d below a datum 0.9 m lower", k, len(a.SameWay), len(b.SameWay))
		}
	}
	if splits == 0 {
		t.Error("no traverse was fitted as a same-way split: the test no longer covers it")
	}
}
