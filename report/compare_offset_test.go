package report

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// rewalkScenario is a 64 m pipe 1.2 m deep whose current falls from 10 A
// to lossTo at chainage 34 m (a leak), crossed by count traverses 4 m
// apart from firstAt m on, the sensor height m above the ground.
func rewalkScenario(seed int64, firstAt float64, count int, height, lossTo float64) string {
	return fmt.Sprintf(`name = "rewalk"
seed = %d
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = %g
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [64.0, 0.0]]
count = %d
spacing_m = 4.0
first_at_m = %g
length_m = 8.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "pipe"
kind = "polyline"
vertices = [[-30.0, 0.3, -1.2], [34.0, 0.3, -1.2], [100.0, 0.3, -1.2]]
currents_a = [10.0, %g]
`, seed, height, count, firstAt, lossTo)
}

// rewalkDoc simulates the scenario text, fits each traverse and builds the
// result document, through results.json as compare reads it.
func rewalkDoc(t *testing.T, text string) *Document {
	t.Helper()
	path := filepath.Join(t.TempDir(), "s.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	sc, err := simulate.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	back := throughJSON(t, simulatedDoc(t, sc))
	return back
}

// TestCompareRewalkOffset: a route walked again with its first traverse
// 1 m (then 2 m, half the 4 m spacing) on from the first survey's, so
// that each walk's chainage 0 lies at another place, and a leak at 34 m
// (between OLD's T09 at 32 m and T10 at 36 m) grown from 1 A to 1.5 A.
// NEW's stations are placed on OLD's chainage by their plan positions:
// the ratio's step is bracketed in OLD's chainage and the bracket holds
// the scenario's 34 m, and NEW's offset is stated. Before, the stations
// were paired by each walk's own chainage and the bracket, 28-32 m, was
// read off one chainage column for both: it missed the leak; the walk
// 2 m on was refused (its stations 2.00 m from OLD's, just past the 2 m
// tolerance in their last digits).
func TestCompareRewalkOffset(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 43 traverses")
	}
	const leakM = 34.0
	old := rewalkDoc(t, rewalkScenario(7, 0, 17, 0.3, 9))
	for _, c := range []struct {
		name    string
		firstAt float64
	}{
		{"1 m on", 1},
		{"2 m on, half the spacing", 2},
	} {
		t.Run(c.name, func(t *testing.T) {
			nd := rewalkDoc(t, rewalkScenario(8, c.firstAt, 13, 0.5, 8.5))
			cmp, err := Compare(old, nd, "old", "new", CompareSettings{})
			if err != nil {
				t.Fatal(err)
			}
			cc := cmp.Conductors[0]
			if cc.NewChainageOffset == nil || math.Abs(*cc.NewChainageOffset-c.firstAt) > 0.05 || cc.NewChainageReversed {
				t.Errorf("NEW's chainage offset %v (reversed %v), want %g m", cc.NewChainageOffset, cc.NewChainageReversed, c.firstAt)
			}
			if len(cc.Stations) != 13 {
				t.Errorf("%d stations paired, want NEW's 13", len(cc.Stations))
			}
			for _, s := range cc.Stations {
				if math.Abs(s.NewOnOld-s.Chainage-c.firstAt) > 0.05 || s.OldKey != s.NewKey {
					t.Errorf("OLD's %s at %.2f m paired with NEW's %s at %.2f m on OLD's chainage, want the one %g m on", s.OldKey, s.Chainage, s.NewKey, s.NewOnOld, c.firstAt)
				}
			}
			var note bool
			for _, n := range cmp.Notes {
				note = note || strings.Contains(n, fmt.Sprintf("NEW's chainage starts %.2f m along OLD's route", c.firstAt))
			}
			if !note {
				t.Errorf("notes %q, want NEW's offset stated", cmp.Notes)
			}
			r := cc.Ratio
			if r == nil || r.Step == nil {
				t.Fatalf("ratio %+v, want a step", r)
			}
			if !(r.Step.ChainageFrom < leakM && leakM < r.Step.ChainageTo) {
				t.Errorf("ratio step at %.2f-%.2f m (%s-%s), the leak is at %g m", r.Step.ChainageFrom, r.Step.ChainageTo, r.Step.FromKey, r.Step.ToKey, leakM)
			}
			var step *Change
			for i, ch := range cmp.Changes {
				if ch.Kind == "ratio-step" {
					step = &cmp.Changes[i]
				}
			}
			if step == nil || !(*step.ChainageFrom < leakM && leakM < *step.ChainageTo) || !strings.Contains(step.Message, fmt.Sprintf("chainage %.1f-%.1f m", *step.ChainageFrom, *step.ChainageTo)) {
				t.Errorf("ratio-step change %+v, want its bracket around %g m", step, leakM)
			}
			// The NEW step's leak: 1.5 A against OLD's 1.0 A, a loss of
			// 0.5 A more along the flow.
			if step != nil && (step.Value == nil || math.Abs(*step.Value+0.5) > 0.1) {
				t.Errorf("ratio-step value %v, want about -0.5 A", step.Value)
			}
		})
	}
	// A tolerance under the offset refuses, naming the one that pairs.
	nd := rewalkDoc(t, rewalkScenario(8, 2, 13, 0.5, 8.5))
	_, err := Compare(old, nd, "old", "new", CompareSettings{Tolerance: 1.5})
	if err == nil || !strings.Contains(err.Error(), "2.00 m apart in plan (2.00 m along the route)") || !strings.Contains(err.Error(), "--tolerance 3") {
		t.Errorf("error %v, want the 2 m separation and --tolerance 3 named", err)
	}
}
