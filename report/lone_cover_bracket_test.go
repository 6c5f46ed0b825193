package report

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// loneStretchCheck checks that finding f, a lone line's shallow cover, is
// bracketed as the route brackets its own shallow runs: its chainage range
// runs from one used station to another (from and to), no used station
// lies strictly between them but the finding's own groups, and the
// GeoJSON draws it as a LineString along conductor 1's route through the
// used stations of that range (stretchLine), as the route's own shallow
// stretch is drawn.
func loneStretchCheck(t *testing.T, d *Document, f *Finding, from, to string) {
	t.Helper()
	ch := map[string]Station{}
	var used []Station
	for _, s := range d.Route.Stations {
		ch[s.Key] = s
		if s.Used {
			used = append(used, s)
		}
	}
	const chTol = 1e-9 // m: the bracket is the stations' own chainages
	if math.Abs(f.ChainageFrom-ch[from].Chainage) > chTol || math.Abs(f.ChainageTo-ch[to].Chainage) > chTol {
		t.Errorf("stretch %g-%g m, want %s %g to %s %g m", f.ChainageFrom, f.ChainageTo, from, ch[from].Chainage, to, ch[to].Chainage)
	}
	own := map[string]bool{}
	for _, g := range f.Groups {
		own[g] = true
	}
	var want []string
	for _, s := range used {
		if s.Chainage < f.ChainageFrom-chTol || s.Chainage > f.ChainageTo+chTol {
			continue
		}
		want = append(want, s.Key)
		if s.Chainage > f.ChainageFrom+chTol && s.Chainage < f.ChainageTo-chTol && !own[s.Key] {
			t.Errorf("used station %s (%g m) lies inside the bracket %g-%g m and is not the finding's", s.Key, s.Chainage, f.ChainageFrom, f.ChainageTo)
		}
	}
	_, feats := geoCollection(t, d)
	n := 0
	for _, g := range feats {
		if g.Properties["feature"] != "finding" || g.Properties["message"] != f.Message {
			continue
		}
		n++
		if g.Geometry.Type != "LineString" {
			t.Fatalf("lone shallow stretch drawn as a %s, want a LineString", g.Geometry.Type)
		}
		var pos [][2]float64
		if err := json.Unmarshal(g.Geometry.Coordinates, &pos); err != nil {
			t.Fatal(err)
		}
		if len(pos) != len(want) {
			t.Fatalf("line of %d positions, want %d (%v)", len(pos), len(want), want)
		}
		const posTol = 1e-3 // m: positions are written to the millimetre without an origin
		for i, k := range want {
			p := ch[k].Point
			if math.Abs(pos[i][0]-p[0]) > posTol || math.Abs(pos[i][1]-p[1]) > posTol {
				t.Errorf("position %d %v, want %s's %v", i, pos[i], k, p[:2])
			}
		}
	}
	if n != 1 {
		t.Errorf("%d GeoJSON features for the finding, want 1", n)
	}
}

// TestPairCoverBracket: a go-and-return pair beside conductor 1 whose
// centre lies under the minimum at T03-T05 is bracketed as the route's own
// shallow runs are (route.Bracket): back to T02, where the pair is seen
// with enough cover, and on to T06, whose fit does not show the pair,
// which bounds the stretch but says nothing of its cover there. Before,
// its range was T03-T05, the run's own ends, while the route's findings
// gave the bracket: one kind with two meanings of chainage_from_m and
// chainage_to_m (found in review). The fixture (pairBesideCableDepthFits,
// Biot-Savart) lays the pair 1.2 m down at T01, T02 and T07, 0.6 m at
// T03-T05 and leaves it out at T06; the minimum is 0.8 m below the ground
// (cover of its centre, DOMAIN.md), so the true shallow stretch runs from
// somewhere between T02 and T03 to somewhere past T05, which the range
// must hold.
func TestPairCoverBracket(t *testing.T) {
	fits := pairBesideCableDepthFits(t, 1, []float64{1.2, 1.2, 0.6, 0.6, 0.6, 0, 1.2})
	d, err := Build(Document{}, fits, &BuildSettings{MinCover: 0.8, TrackMinStations: len(fits) + 1})
	if err != nil {
		t.Fatal(err)
	}
	var pair []*Finding
	for i := range d.Findings {
		if f := &d.Findings[i]; f.Kind == "shallow-cover" && strings.Contains(f.Message, "go-and-return pair") {
			pair = append(pair, f)
		}
	}
	if len(pair) != 1 {
		t.Fatalf("%d shallow-cover findings about the pair, want 1: %+v", len(pair), d.Findings)
	}
	f := pair[0]
	if got := strings.Join(f.Groups, " "); got != "T03 T04 T05" {
		t.Fatalf("finding names %q, want T03 T04 T05 (the pair's shallow traverses): %s", got, f.Message)
	}
	loneStretchCheck(t, d, f, "T02", "T06")
	for _, want := range []string{
		"the shallow stretch may reach back to T02 (chainage 5.0 m), the nearest station before it where the pair is seen with enough cover",
		"and on to T06 (chainage 25.0 m), the nearest station after it, whose fit does not show the pair, which says nothing of its cover there",
	} {
		if !strings.Contains(f.Message, want) {
			t.Errorf("message %q does not say %q", f.Message, want)
		}
	}
}

// TestLoneCoverBracket: a service crossing the route, seen at one traverse
// and followed along no track, is bracketed as the route's own shallow
// runs are: its range runs to the nearest used stations either side,
// whose fits do not show the line (which the message says tells nothing
// of its cover there), and holds the stretch of route where the simulated
// service lies within the surveyed strip. Before, its range was its one
// station's chainage (From = To), and the map drew it as one dot.
// Simulated truth (Biot-Savart through the simulate package):
// strongServiceScenario, the Harrow Fen crossing
// (testdata/scenarios/crossing-service.toml) with a 15 A service at 0.6 m
// crossing a 3 A feeder at x = 30 m, 60 degrees to it; with traverses
// 12 m long (6 m either side of the route, along y) the service lies
// within them from x = 30 - 6/tan 60 to 30 + 6/tan 60 (plain geometry),
// chainage being x on this straight route from the origin.
func TestLoneCoverBracket(t *testing.T) {
	sc, err := simulate.Parse([]byte(strongServiceScenario), "crossing-service-strong")
	if err != nil {
		t.Fatal(err)
	}
	d := simulatedDocWith(t, sc, &BuildSettings{MinCover: 0.9})
	var lone, own []*Finding
	for i := range d.Findings {
		if f := &d.Findings[i]; f.Kind == "shallow-cover" && f.Lone {
			lone = append(lone, f)
		} else if f.Kind == "shallow-cover" && f.Conductor == 2 {
			own = append(own, f)
		}
	}
	if len(lone) == 0 && len(own) == 1 {
		// Since fix-fx29k the fits at T03 and T05, where the service is
		// line 1 beyond the traverse's end and more than 60 degrees from
		// square, keep their free fits beside the feeder under the readings
		// (before, the angles were held square, rejected, and both failed):
		// the feeder reads 2.988 ± 0.008 A at 1.193 m there (truth 3 A,
		// 1.2 m), and the service, seen at three traverses, is followed as
		// conductor 2 with its own shallow-cover finding. Its range must
		// still hold the service's stretch under the survey; the lone
		// bracket itself is checked on the pair above.
		f := own[0]
		t.Log(f.Message)
		const halfWidth = 6.0 // m, half the scenario's length_m
		in := halfWidth / math.Tan(60*math.Pi/180)
		if lo, hi := 30-in, 30+in; f.ChainageFrom > lo || f.ChainageTo < hi {
			t.Errorf("range %g-%g m does not hold the service's stretch under the survey, %.2f-%.2f m", f.ChainageFrom, f.ChainageTo, lo, hi)
		}
		if got := strings.Join(f.Groups, " "); got != "T03 T04 T05" {
			t.Errorf("conductor 2's finding names %q, want T03 T04 T05", got)
		}
		return
	}
	if len(lone) != 1 {
		t.Fatalf("%d lone shallow-cover findings, want 1 (the service): %+v", len(lone), d.Findings)
	}
	f := lone[0]
	t.Log(f.Message)
	if !(f.ChainageTo > f.ChainageFrom) {
		t.Fatalf("range %g-%g m: one chainage, not bracketed", f.ChainageFrom, f.ChainageTo)
	}
	const halfWidth = 6.0 // m, half the scenario's length_m
	in := halfWidth / math.Tan(60*math.Pi/180)
	if lo, hi := 30-in, 30+in; f.ChainageFrom > lo || f.ChainageTo < hi {
		t.Errorf("range %g-%g m does not hold the service's stretch under the survey, %.2f-%.2f m", f.ChainageFrom, f.ChainageTo, lo, hi)
	}
	var from, to string
	for _, s := range d.Route.Stations {
		if s.Chainage == f.ChainageFrom {
			from = s.Key
		}
		if s.Chainage == f.ChainageTo {
			to = s.Key
		}
	}
	loneStretchCheck(t, d, f, from, to)
	want := "the nearest stations either side whose fits do not show the line, which says nothing of its cover there"
	if !strings.Contains(f.Message, want) || !strings.Contains(f.Message, "back to "+from+" (chainage") || !strings.Contains(f.Message, "on to "+to+" (chainage") {
		t.Errorf("message %q does not name %s and %s as %q", f.Message, from, to, want)
	}
}
