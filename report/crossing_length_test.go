package report

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// TestCrossingSummaryLengthAlongItself: the length a crossing conductor
// was followed is its own length between the first and last traverses
// that show it, not the length along its fitted points nearest the
// traverses' middles (which lie closer together, by cos² of the angle).
// The truth is plane geometry: the traverses cross conductor 1 (north) at
// north 2 + 3(i-1) m, so a straight line at angle a to it runs
// (north_last - north_first)/cos(a) between them: 12/cos 45° = 16.97 m
// from T03 to T07, 24/cos 20° = 25.54 m from T01 to T09.
func TestCrossingSummaryLengthAlongItself(t *testing.T) {
	for _, c := range []struct {
		az          float64
		first, last int
	}{{45, 3, 7}, {20, 1, 9}, {135, 2, 8}} {
		d := crossingDoc(0, 14, c.az, c.first, c.last, nil)
		want := 3 * float64(c.last-c.first) / math.Abs(math.Cos(c.az*math.Pi/180))
		got := ConductorSummary(d, &d.Conductors[0])
		if w := fmt.Sprintf("it was followed for %.0f m in", want); !strings.Contains(got, w) {
			t.Errorf("azimuth %g: summary %q\nwant it to hold %q", c.az, got, w)
		}
	}
}

// TestCrossingSummaryFlow: a crossing conductor's DC current is signed
// along its direction of increasing chainage, so a negative current flows
// from its last station towards its first; the summary says which way, as
// the parallel summary says it against conductor 1. The line at 45° from
// north through (0, 14), seen T03 to T07, runs north-east (45°) along
// increasing chainage: positive current flows from T03 towards T07 at 45°
// (north-east), negative from T07 towards T03 at 225° (south-west). An AC
// magnitude carries no direction and gets none.
func TestCrossingSummaryFlow(t *testing.T) {
	for _, c := range []struct {
		current float64
		ac      bool
		want    string
	}{
		{5, false, "flowing from T03 towards T07 (setting off 45° from north, about north-east)"},
		{-5, false, "flowing from T07 towards T03 (setting off 225° from north, about south-west)"},
		{5, true, ""},
	} {
		d := crossingDoc(0, 14, 45, 3, 7, nil)
		st := d.Conductors[0].Route.Stations
		for i := range st {
			st[i].Current = c.current
			if c.ac {
				ph, phs := 10.0, 1.0
				st[i].Phase, st[i].PhaseSigma = &ph, &phs
			}
		}
		got := ConductorSummary(d, &d.Conductors[0])
		if c.want == "" {
			if strings.Contains(got, "flowing") {
				t.Errorf("AC: summary %q gives a direction", got)
			}
			continue
		}
		if !strings.Contains(got, c.want) {
			t.Errorf("current %g A: summary %q\nwant it to hold %q", c.current, got, c.want)
		}
	}
}
