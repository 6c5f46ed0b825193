package report

import (
	"strings"
	"testing"
)

// TestAboveGroundRefusalWording: a 10 A bore 10 m down along the
// traverses' route and a 30 A cable 1 m down crossing it at 45 degrees,
// passing about 10 m beyond the first traverse's end
// (testdata/scenarios/bore-cable-beyond.toml, invented). The first
// traverse's fit puts its line about 0.5 m above the ground and is
// refused; the refusal said "no buried conductor lies there" over the
// bore. It now says the fit is not usable at this traverse.
func TestAboveGroundRefusalWording(t *testing.T) {
	for _, seed := range []int64{1, 2} {
		d := boreExitDoc(t, "bore-cable-beyond.toml", seed)
		g := groupOf(t, d, "T01")
		if !strings.Contains(g.Problem, "above the ground given") {
			t.Fatalf("seed %d: T01 is not refused as lying above the ground: %q", seed, g.Problem)
		}
		if strings.Contains(g.Problem, "no buried conductor lies there") || !strings.Contains(g.Problem, "not usable at this traverse") {
			t.Errorf("seed %d: T01's refusal words a conductor's absence over a 10 A bore: %s", seed, g.Problem)
		}
	}
}
