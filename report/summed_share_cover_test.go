package report

import (
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// summedShareDoc simulates scenario name with seed and builds its document
// as simulatedDoc does, with a --min-cover minimum.
func summedShareDoc(t *testing.T, name string, seed int64, minCover float64) *Document {
	t.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", name))
	if err != nil {
		t.Fatal(err)
	}
	sc.Seed = seed
	return simulatedDocWith(t, sc, &BuildSettings{MinCover: minCover})
}

// TestSummedShareNotAFurtherLine: the two lines of a same-way split whose
// sum the route takes (Group.SummedSources) are one conductor, so neither
// may be reported as a further line no conductor follows, in the least
// cover headline or as a lone line's shallow cover. Simulated truth: one
// pipe along weld-main (testdata/scenarios/open/weld-main.toml, girth
// welds splitting its field; 1.74 m deep at T17) and one cable along
// wrenbeck-dive (testdata/scenarios/wrenbeck-dive.toml, 1 m deep where it
// does not dive), no other line. Before, weld-main seed 4's headline added
// "a further line that no conductor follows (... a crossing service ...)
// lies shallower, under 1.309 ± 0.064 m at T17", T17's second share, and
// wrenbeck-dive seeds 3 and 4 with a 1.0 m minimum warned that T08's
// second share (and T05's) "is not followed along the route" with cover
// under the minimum.
func TestSummedShareNotAFurtherLine(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 26 traverses per seed")
	}
	cases := []struct {
		name     string
		seed     int64
		minCover float64
	}{
		{filepath.Join("open", "weld-main.toml"), 4, 1.0},
		{filepath.Join("open", "weld-main.toml"), 9, 1.0},
		{"wrenbeck-dive.toml", 3, 1.0},
		{"wrenbeck-dive.toml", 4, 1.0},
	}
	summed := 0
	for _, c := range cases {
		d := summedShareDoc(t, c.name, c.seed, c.minCover)
		sums := map[string]bool{}
		for i := range d.Groups {
			if d.Groups[i].SummedSources != nil && d.groupUsed(&d.Groups[i]) {
				sums[d.Groups[i].Key] = true
				summed++
			}
		}
		if l, ok := d.shallowLoneLine(); ok && sums[l.key] {
			t.Errorf("%s seed %d: least cover names a share of summed %s as a further line: %s", c.name, c.seed, l.key, LeastCover(d))
		}
		for _, f := range d.Findings {
			if f.Lone && slices.ContainsFunc(f.Groups, func(k string) bool { return sums[k] }) && strings.Contains(f.Message, "not followed") {
				t.Errorf("%s seed %d: a summed share reported as a lone line: %s", c.name, c.seed, f.Message)
			}
		}
	}
	if summed == 0 {
		t.Fatal("no summed station: the check is empty")
	}
}
