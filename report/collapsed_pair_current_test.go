package report

import (
	"encoding/json"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestCollapsedPairCurrentsUndetermined: a go-and-return pair that the
// readings do not separate collapses onto one place, its two lines'
// currents large, opposite and undetermined (inverse Identifiable.Current
// false, sigma not estimated: 0). In review (lines of +236.6 and -234.9 A)
// the group's problem said "237 A, is within 3 sigma of zero", a test
// against a sigma of 0 that was never made, and results.json wrote
// current_sigma_a 0, which reads as an exact current, while results.csv
// left it empty. The problem must say the currents are not determined
// (they cancel) and results.json leave their sigma out; a line whose
// current was tested keeps its sigma and the 3-sigma wording. (The
// fixture's numbers are the review's; the fixture is invented.)
func TestCollapsedPairCurrentsUndetermined(t *testing.T) {
	f := noCurrentFixture(nil,
		inverse.SourceEstimate{Current: 236.629, Depth: 1.4634, DepthSigma: 0.049},
		inverse.SourceEstimate{Current: -234.942, Depth: 1.4629, DepthSigma: 0.049})
	for i := range f.Result.Sources {
		f.Result.Sources[i].Identifiable.Current = false
	}
	g, _ := buildGroup(f, false, 0, 0, false, 0)
	if g.OK {
		t.Fatalf("collapsed pair: OK, problem %q; want no current found", g.Problem)
	}
	if strings.Contains(g.Problem, "uncertainty of zero") || !strings.Contains(g.Problem, "currents (237 A and 235 A, in opposite directions) are not determined") || !strings.Contains(g.Problem, "cancel") {
		t.Errorf("collapsed pair's problem %q; want the two currents named as not determined (they cancel), no 3-sigma test", g.Problem)
	}
	raw, err := json.Marshal(g)
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		Sources []map[string]any `json:"sources"`
	}
	if err := json.Unmarshal(raw, &back); err != nil {
		t.Fatal(err)
	}
	if len(back.Sources) != 2 {
		t.Fatalf("%d sources in %s", len(back.Sources), raw)
	}
	for _, s := range back.Sources {
		if v, ok := s["current_sigma_a"]; ok {
			t.Errorf("a line of undetermined current has current_sigma_a %v in results.json; want it left out", v)
		}
		if _, ok := s["current_a"]; !ok {
			t.Errorf("current_a left out too: %v", s)
		}
	}
	// A weak line whose current was tested keeps both.
	weak := noCurrentFixture(nil, inverse.SourceEstimate{Current: 2.1, CurrentSigma: 0.8, Depth: 1.5, DepthSigma: 0.4})
	g, _ = buildGroup(weak, false, 0, 0, false, 0)
	if !strings.Contains(g.Problem, "within 3 times its uncertainty of zero") {
		t.Errorf("weak line's problem %q; want the 3-sigma wording", g.Problem)
	}
	raw, _ = json.Marshal(g)
	if !strings.Contains(string(raw), `"current_sigma_a":0.8`) {
		t.Errorf("weak line's sigma missing from %s", raw)
	}
}
