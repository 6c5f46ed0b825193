package report

import (
	"strings"
	"testing"
)

// TestLeastCoverSteadyWeakLine: a weak further conductor that keeps its
// current along its track, one station reading more with a sigma that
// allows it, is not said to run from one current to another: brackleyDrove's
// line at 0.8 A (4.2% of the 19 A cable), its T05 fit giving 3.3 ± 0.8 A
// (3.1 of its sigmas from the others, as a tracer's fit beside a crossing
// did in review rv28b). The sentence still says the line is weak, and
// now that it is steady over 7 of its 8 stations. Before, it read "its
// current runs from 0.8 A to 3.3 A along its track".
func TestLeastCoverSteadyWeakLine(t *testing.T) {
	fits := brackleyDrove(func(int) float64 { return 0.8 })
	s := &fits[4].Result.Sources[1]
	s.Current, s.CurrentSigma = 3.3, 0.8
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 3, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) != 1 {
		t.Fatalf("%d further conductors, want the line followed as conductor 2", len(d.Conductors))
	}
	lc := LeastCover(d)
	t.Log(lc)
	if strings.Contains(lc, "its current runs from") {
		t.Errorf("a line steady but at one station, within its sigma there, is said to wander: %q", lc)
	}
	for _, want := range []string{"of the strongest current in its group", "though steady at", "over 7 of its 8 stations"} {
		if !strings.Contains(lc, want) {
			t.Errorf("%q lacks %q", lc, want)
		}
	}
}
