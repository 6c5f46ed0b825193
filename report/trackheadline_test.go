package report

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// crossingDoc is a fixture (an invented Kestrel Moor survey): conductor 1
// runs north 1.3 m below the sensors under nine traverses every 3 m from
// north 2 m (T01, chainage 0) to 26 m, and conductor 2 is the straight
// line through (e0, n0) at az degrees from north, 2.1 m down, seen on the
// traverses first..last (1-based), each station's point where the line
// crosses the traverse (east-west, at north n), as Build places a further
// conductor's station (trackStation; it was the line's point nearest the
// traverse's middle here, where the fits once placed it, and crossingOf
// moved it to the traverse). offset, when not nil, replaces the line:
// conductor 2 then runs north at offset(i) m east on traverse i.
func crossingDoc(e0, n0, az float64, first, last int, offset func(i int) float64) *Document {
	d := &Document{Route: &Route{}}
	for i := 1; i <= 9; i++ {
		n := 2 + 3*float64(i-1)
		d.Route.Stations = append(d.Route.Stations, Station{
			Key: key2(i), Chainage: n - 2, Point: [3]float64{0, n, -1.3}, Direction: [3]float64{0, 1, 0},
			Current: 20, CurrentSigma: 0.02, Depth: 1.3, DepthSigma: 0.002, Used: true,
		})
	}
	u := [2]float64{math.Sin(az * math.Pi / 180), math.Cos(az * math.Pi / 180)}
	tr := Track{Number: 2}
	for i := first; i <= last; i++ {
		n := 2 + 3*float64(i-1)
		var p [3]float64
		dir := [3]float64{u[0], u[1], 0}
		if offset != nil {
			p, dir = [3]float64{offset(i), n, -2.1}, [3]float64{0, 1, 0}
		} else {
			// The line's point nearest the traverse's middle, moved
			// along the line to the traverse.
			k := (0-e0)*u[0] + (n-n0)*u[1]
			p = [3]float64{e0 + k*u[0], n0 + k*u[1], -2.1}
			k = -(p[1] - n) / u[1]
			p[0], p[1] = p[0]+k*u[0], p[1]+k*u[1]
		}
		tr.Route.Stations = append(tr.Route.Stations, Station{
			Key: key2(i), Chainage: 3 * float64(i-first), Point: p, Direction: dir,
			Current: 5, CurrentSigma: 0.05, Depth: 2.1, DepthSigma: 0.01, Used: true,
		})
	}
	tr.Route.Length = 3 * float64(last-first)
	d.Conductors = []Track{tr}
	return d
}

func key2(i int) string { return "T0" + string(rune('0'+i)) }

// TestCrossingConductorSummary: a pipe crossing the cable is said to
// cross it, where and at what angle, instead of by a median offset that
// sweeps from one side to the other. The truth is plane geometry: the
// line through (0, 14) at 45 or 20 degrees meets conductor 1 (east 0) at
// north 14 m, chainage 12 m, at T05; at T03 (north 8 m) it lies
// 6/tan(45°) = 6.00 m west, to the left looking north, and at T07 (north
// 20 m) 6.00 m east. Before, the summary said "0.0025 m to the left of
// conductor 1".
func TestCrossingConductorSummary(t *testing.T) {
	for _, c := range []struct {
		az          float64
		first, last int
		want        []string
	}{
		{45, 3, 7, []string{"Conductor 2 crosses conductor 1 at about 45° near chainage 12.0 m (at T05)",
			"from 6.00 m to the left of conductor 1 at T03 to 6.00 m to the right at T07"}},
		{135, 2, 8, []string{"crosses conductor 1 at about 45° near chainage 12.0 m (at T05)",
			"from 9.00 m to the right of conductor 1 at T02 to 9.00 m to the left at T08"}},
		// 12 tan(20°) = 4.37 m.
		{20, 1, 9, []string{"crosses conductor 1 at about 20° near chainage 12.0 m (at T05)",
			"from 4.37 m to the left of conductor 1 at T01 to 4.37 m to the right at T09"}},
	} {
		d := crossingDoc(0, 14, c.az, c.first, c.last, nil)
		got := ConductorSummary(d, &d.Conductors[0])
		for _, w := range c.want {
			if !strings.Contains(got, w) {
				t.Errorf("azimuth %g: summary %q\nwant it to hold %q", c.az, got, w)
			}
		}
		if strings.Contains(got, "m to the left of conductor 1 (looking") || strings.Contains(got, "m to the right of conductor 1 (looking") {
			t.Errorf("azimuth %g: a crossing summarised by one offset: %q", c.az, got)
		}
		brief := ConductorBrief(d, &d.Conductors[0], "; parallel")
		if !strings.Contains(brief, "crosses conductor 1 at about") {
			t.Errorf("azimuth %g: brief %q, want the crossing", c.az, brief)
		}
	}
}

// TestDivergingConductorSummary: a pipe at 10 degrees to the cable through
// east 1.5 m, north 0 does not cross it over the traverses: it lies
// 1.5 + 2 tan(10°) = 1.85 m east at T01 and 1.5 + 26 tan(10°) = 6.08 m at
// T09, and the lines meet at north -1.5/tan(10°) = -8.51 m, chainage
// -10.5 m.
func TestDivergingConductorSummary(t *testing.T) {
	d := crossingDoc(1.5, 0, 10, 1, 9, nil)
	got := ConductorSummary(d, &d.Conductors[0])
	for _, w := range []string{"runs at about 10° to conductor 1 and does not cross it where it was followed",
		"near chainage -10.5 m", "from 1.85 m to the right of conductor 1 at T01 to 6.08 m to the right at T09"} {
		if !strings.Contains(got, w) {
			t.Errorf("summary %q\nwant it to hold %q", got, w)
		}
	}
}

// TestParallelConductorSummaryUnchanged: a conductor alongside conductor 1
// keeps the offset summary, also where conductor 1 takes turns between two
// parallel cables 0.7 m apart and the other one's offsets jump from side
// to side (a sign change alone is no crossing), or where its fitted
// position wanders by a few tenths of a metre.
func TestParallelConductorSummaryUnchanged(t *testing.T) {
	for name, off := range map[string]func(int) float64{
		"2 m east": func(int) float64 { return 2 },
		"hopping": func(i int) float64 {
			if i <= 4 || i == 7 {
				return -0.7
			}
			return 0.7
		},
		"wandering": func(i int) float64 { return 1.5 + 0.3*math.Sin(float64(i)) },
	} {
		d := crossingDoc(0, 0, 0, 1, 9, off)
		if got, want := ConductorSummary(d, &d.Conductors[0]), trackHeadline(d, &d.Conductors[0]); got != want {
			t.Errorf("%s: summary %q, want the offset summary %q", name, got, want)
		}
		if got := ConductorBrief(d, &d.Conductors[0], "; parallel"); got != "; parallel" {
			t.Errorf("%s: brief %q, want the caller's", name, got)
		}
	}
}

// TestCrossingInDocument: results.json carries what the summary says of a
// crossing (Track.Crossing): a pipe at 45 degrees crossing the cable at
// chainage 12 m, followed from 6 m left of it to 6 m right, has an angle
// of 45 degrees, crosses at 12 m, and was followed for 12/cos(45°) = 16.97 m
// along itself (plane geometry); the diverging pipe of
// TestDivergingConductorSummary runs at 10 degrees and does not cross; a
// parallel conductor has no crossing.
func TestCrossingInDocument(t *testing.T) {
	d := crossingDoc(0, 14, 45, 3, 7, nil)
	d.addCrossings()
	c := d.Conductors[0].Crossing
	if c == nil || math.Abs(c.AngleDeg-45) > 0.5 || c.ChainageM == nil || math.Abs(*c.ChainageM-12) > 0.05 || !c.Crosses || c.OneSide ||
		math.Abs(c.LengthM-12/math.Cos(math.Pi/4)) > 0.1 {
		t.Errorf("45 degree crossing: %+v", c)
	}
	d = crossingDoc(1.5, 0, 10, 1, 9, nil)
	d.addCrossings()
	if c := d.Conductors[0].Crossing; c == nil || math.Abs(c.AngleDeg-10) > 0.5 || c.Crosses {
		t.Errorf("diverging pipe: %+v", c)
	}
	b, err := json.Marshal(d.Conductors[0])
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"crossing":{"angle_deg":10`) {
		t.Errorf("the conductor's JSON does not carry the crossing: %.600s", b)
	}
}
