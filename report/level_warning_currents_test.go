package report

import (
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestFlatLevelWarningNamesCurrents: on a route climbing 10% (simulated
// truth, groundSurvey: 2.4 m over 24 m, sensors 0.3 m over the ground,
// --reference-z 0 at the start), the warning that one flat level does not
// hold says that the currents and current findings where it does not hold
// are affected too, and names those groups, not only depths and cover.
// Before it spoke of depths and cover only, while on a climbing weld main
// the same level left two weld splits unsummed and put two false current
// steps on the route (found in review).
func TestFlatLevelWarningNamesCurrents(t *testing.T) {
	zero := 0.0
	rise := func(e, n float64) float64 { return 0.1 * n }
	fits := groundSurvey(t, 7, -4, 4, 0.1, rise, []float64{0.3}, inverse.Settings{ReferenceZ: &zero})
	d, err := Build(Document{}, fits, &BuildSettings{MinCover: 1.0})
	if err != nil {
		t.Fatal(err)
	}
	var w string
	for _, s := range d.Warnings {
		if strings.Contains(s, "one flat ground level") {
			w = s
		}
	}
	if w == "" {
		t.Fatalf("no flat-level warning in %q", d.Warnings)
	}
	last := fits[len(fits)-1].Key // the highest traverse, where the level holds least
	for _, want := range []string{"the currents and the current findings there", "current steps beside those groups can be false or missed", " to " + last + ", over 0.5 m higher"} {
		if !strings.Contains(w, want) {
			t.Errorf("warning lacks %q: %s", want, w)
		}
	}
	// Two close lines are summed by their distance below the sensors,
	// whatever the level (sameWayOf): the warning no longer says the level
	// decides it.
	if strings.Contains(w, "summed") {
		t.Errorf("warning says the level decides which lines are summed: %s", w)
	}
}
