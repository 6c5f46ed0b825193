package route

import (
	"strings"
	"testing"
)

// TestLoneWhyShallowStrong: a further line carrying tens of amperes within 0.2 m
// of the ground (a DC railway's rail, 75 A 0.05 m down, fitted right in review
// rv29c) is worded as a shallow line to be treated as live, rails or a cable at
// the surface, with its current; a 2 A line 0.8 m down, or 75 A at 0.6 m, stays
// "a crossing service". Before, the rails were "a crossing service, for
// example".
func TestLoneWhyShallowStrong(t *testing.T) {
	dir := [3]float64{1, 0, 0}
	for _, c := range []struct {
		current, depth float64
		keys           []string
		live           bool
	}{
		{75, 0.05, []string{"T09"}, true},
		{-148, 0.05, []string{"T08", "T09"}, true},
		{2, 0.8, []string{"T09"}, false},
		{75, 0.6, []string{"T08", "T09"}, false},
	} {
		l := Line{Dir: [3]float64{0.5, 0.866, 0}, Current: c.current, Depth: c.depth}
		why := loneWhy(c.keys, nil, l, dir)
		live := strings.Contains(why, "treat it as live") && strings.Contains(why, "rails") && !strings.Contains(why, "crossing service")
		if live != c.live {
			t.Errorf("%g A at %g m: %q, want worded live %v", c.current, c.depth, why, c.live)
		}
	}
}
