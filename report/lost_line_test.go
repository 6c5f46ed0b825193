package report

import (
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestLostLoneLineNotSound: a group whose only line inverse left held at the
// minimum depth, at the edge of the region searched or above the sensors (its
// notes) is never sound. On six fixed sensors over a 0.02 A pipe (the invented
// Brackwater Heath crossing, simulated) locate reported such a line, 1.24 m above
// the sensors at the edge of the region, as "1 sound" with no finding, though the
// true line fitted 1950 units of chi-square better. Edge or above: a failed fit
// whose station keeps no position; held at the depth bound only: poor, with the
// reason in Problem (and so a finding).
func TestLostLoneLineNotSound(t *testing.T) {
	held := "held at the minimum depth below the sensors: the depth is not determined"
	cases := []struct {
		name  string
		notes []string
		fail  bool
	}{
		{"all three", []string{held, inverse.EdgeOfSearchNote, inverse.AboveSensorsNote}, true},
		{"edge", []string{inverse.EdgeOfSearchNote}, true},
		{"above", []string{inverse.AboveSensorsNote}, true},
		{"depth bound", []string{held}, false},
	}
	for _, c := range cases {
		s := inverse.SourceEstimate{Current: 5, CurrentSigma: 0.1, Depth: 1.5, DepthSigma: 0.05, Notes: c.notes}
		g, st := buildGroup(noCurrentFixture(nil, s), false, 0, 0, false, 0)
		if g.Problem == "" || st.Problem != g.Problem {
			t.Errorf("%s: problem %q, station problem %q; want the reason in both", c.name, g.Problem, st.Problem)
		}
		if c.fail && (g.OK || st.OK || !strings.HasPrefix(g.Problem, "the fit failed")) {
			t.Errorf("%s: OK %v, station OK %v, problem %q; want a failed fit", c.name, g.OK, st.OK, g.Problem)
		}
		if !c.fail && !g.OK {
			t.Errorf("%s: OK false, problem %q; want a poor fit (OK with a problem)", c.name, g.Problem)
		}
	}
	// The same line without the notes is sound: the check reads them, not the numbers.
	s := inverse.SourceEstimate{Current: 5, CurrentSigma: 0.1, Depth: 1.5, DepthSigma: 0.05}
	if g, _ := buildGroup(noCurrentFixture(nil, s), false, 0, 0, false, 0); !g.OK || g.Problem != "" {
		t.Errorf("no notes: OK %v, problem %q; want sound", g.OK, g.Problem)
	}
}
