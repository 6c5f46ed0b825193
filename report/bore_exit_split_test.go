package report

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/route"
	"undercurrent/inverse/simulate"
)

// boreExitDoc simulates scenario name at seed and builds its document with
// a 0.90 m minimum cover, the ground at up = 0.
func boreExitDoc(t *testing.T, name string, seed int64) *Document {
	t.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", name))
	if err != nil {
		t.Fatal(err)
	}
	sc.Seed = seed
	return simulatedDocWith(t, sc, &BuildSettings{MinCover: 0.9})
}

// groupOf returns d's group keyed key, or fails t.
func groupOf(t *testing.T, d *Document, key string) *Group {
	t.Helper()
	for i := range d.Groups {
		if d.Groups[i].Key == key {
			return &d.Groups[i]
		}
	}
	t.Fatalf("no group %s", key)
	return nil
}

// TestBoreExitSplitSummed: a 20 A DC cable drawn up a bore to 1 m at x =
// 142 m and on at 1 m (testdata/scenarios/bore-exit.toml, invented). No
// current leaves it, so by Ampere's law the whole 20 A crosses every
// traverse. The traverse at x = 150 m, 8 m past the bend, is fitted as two
// same-way lines whose shares the readings do not part (10.6 ± 4.2 and
// 8.7 ± 4.2 A) but whose sum is known to 0.05 A: a field about 1000 times
// the noise. On seeds 1 and 3 (those of the review) neither share passed 3
// sigma, and the fit was refused as "a conductor ... too deep or weak ...
// longer traverses or a stronger current would", the station left out of
// the profile. Now the sum is taken whenever it carries a current found.
func TestBoreExitSplitSummed(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 6 traverses per seed")
	}
	for _, seed := range []int64{1, 3} {
		d := boreExitDoc(t, "bore-exit.toml", seed)
		for _, g := range d.Groups {
			if strings.Contains(g.Problem, "too deep or weak") {
				t.Errorf("seed %d: %s: a field far above the noise worded too deep or weak: %s", seed, g.Key, g.Problem)
			}
		}
		if g := groupOf(t, d, "T03"); g.SummedSources == nil {
			t.Errorf("seed %d: T03 (8 m past the bend) does not take its split's sum; problem %q", seed, g.Problem)
		}
		found := false
		for _, s := range d.Route.Stations {
			if s.Key != "T03" {
				continue
			}
			found = true
			// Within 10%: the straight-line model's own error beside a
			// bend, which the fit's sigma does not hold (19.36 ± 0.05 A).
			if !s.Used || math.Abs(math.Abs(s.Current)-20) > 2 {
				t.Errorf("seed %d: T03 used %v, %.4g ± %.2g A, want used and the cable's 20 A within 10%%", seed, s.Used, s.Current, s.CurrentSigma)
			}
		}
		if !found {
			t.Errorf("seed %d: no station T03", seed)
		}
	}
}

// TestBoreExitPoleSplitCover: bore-exit.toml with the sensor on a 4 m pole
// (bore-exit-pole.toml, invented), the cable 1.00 m deep past the bend. The
// traverses there are fitted as same-way splits of lines about 1.4 m apart
// in plan, each about 0.7 m deep, and the summed split's centre read 0.68-
// 0.72 ± 0.036 m cover: a false "cover is less than the 0.90 m minimum"
// warning on every seed (review seeds 2-4 here). The sum's depth now holds
// half the split's spacing as uncertainty: the true 1.00 m lies within 2
// sigma of every summed station's cover, and no warning is given.
func TestBoreExitPoleSplitCover(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 6 traverses per seed")
	}
	for _, seed := range []int64{2, 3, 4} {
		d := boreExitDoc(t, "bore-exit-pole.toml", seed)
		for _, f := range d.Findings {
			if f.Kind == string(route.KindShallowCover) && f.Severity == SeverityWarning {
				t.Errorf("seed %d: a shallow-cover warning over a cable 1.00 m deep: %s", seed, f.Message)
			}
		}
		summed := 0
		for _, s := range d.Route.Stations {
			if g := groupOf(t, d, s.Key); g.SummedSources == nil || !s.Used || s.Cover == nil || s.CoverSigma == nil {
				continue
			}
			summed++
			if math.Abs(*s.Cover-1) > 2**s.CoverSigma {
				t.Errorf("seed %d: %s: summed split's cover %.3g ± %.2g m, want the cable's 1.00 m within 2 sigma", seed, s.Key, *s.Cover, *s.CoverSigma)
			}
		}
		if summed == 0 {
			t.Errorf("seed %d: no station takes a split's sum: the test no longer covers it", seed)
		}
	}
}
