package main

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// railScenario is a straight 1.5 A main 1.3 m down that loses 0.1 A at
// 525 m, walked by 21 traverses of 16 m, with a rail return of railA
// amperes 40 m to the north at 0.1 m depth, parallel to it.
func railScenario(railA float64) string {
	return fmt.Sprintf(`name = "rail-side"
seed = 7
start = "2026-05-14T10:00:00Z"
[earth]
field_nt = [-300.0, 17900.0, -46300.0]
drift_nt_per_hour = [3.0, -12.0, 6.0]
[sensor]
height_m = 0.25
noise_nt = 1.0
sample_rate_hz = 10.0
[survey]
route = [[0.0,0.0],[1000.0,0.0]]
count = 21
spacing_m = 50.0
length_m = 16.0
speed_m_s = 0.8
turn_s = 45.0
zigzag = true
[base]
sample_rate_hz = 1.0
noise_nt = 0.1
[[conductor]]
name = "main"
kind = "polyline"
vertices = [[-100.0, 0.0, -1.3], [525.0, 0.0, -1.3], [1100.0, 0.0, -1.3]]
currents_a = [1.5, 1.4]
[[conductor]]
name = "rail return"
kind = "line"
point = [0.0, 40.0, -0.1]
direction = [1.0, 0.0, 0.0]
current_a = %.1f
`, railA)
}

// TestLocateRailReturnToTheSide: a far DC line to the side (a traction
// return 40 m off) has a 1/r field, B = mu0 I / (2 pi r) (the Biot-Savart
// law for a long straight line: 75 nT for 15 A at 40 m), whose change
// along a 16 m traverse (about 1.9 nT/m vertical for 15 A) a uniform
// background cannot hold. Before, it went into the main's current and
// depth: with 15 A in the rail 1.32 A for 1.5 and 0.15 m shallow at every
// station, all sound, and the 0.1 A loss not found; with 60 A, 0.92 A and
// 0.83 m. With a background changing along the traverse, chosen where the
// readings need it, the main's current and depth are within kSigma of the
// truth and the 0.1 A step is found between the stations either side of
// 525 m, and a warning names the groups that took the term.
func TestLocateRailReturnToTheSide(t *testing.T) {
	for _, railA := range []float64{15, 60} {
		t.Run(fmt.Sprint(railA), func(t *testing.T) {
			survey, base := simulateWithBase(t, t.TempDir(), railScenario(railA))
			doc := locateDoc(t, "--base", base, "--group-by", "group", "--reference-z", "0", survey)
			if len(doc.Groups) != 21 {
				t.Fatalf("%d groups, want 21", len(doc.Groups))
			}
			for i, g := range doc.Groups {
				if len(g.Sources) == 0 {
					t.Errorf("%s: no conductor", g.Key)
					continue
				}
				s := g.Sources[0]
				want := 1.5
				if g.Chainage != nil && *g.Chainage > 525 || g.Chainage == nil && i > 10 {
					want = 1.4
				}
				if d := math.Abs(s.Current - want); d > kSigma*s.CurrentSigma {
					t.Errorf("%s: current %.4f ± %.4f A, true %.1f", g.Key, s.Current, s.CurrentSigma, want)
				}
				if d := math.Abs(s.Depth - 1.3); d > kSigma*s.DepthSigma {
					t.Errorf("%s: cover %.4f ± %.4f m, true 1.3", g.Key, s.Depth, s.DepthSigma)
				}
			}
			var step bool
			for _, f := range doc.Findings {
				if f.Kind == "current-step" && f.From <= 525 && f.To >= 525 {
					step = true
				}
			}
			if !step {
				t.Errorf("the 0.1 A loss at 525 m not found: %+v", doc.Findings)
			}
			var warned bool
			for _, w := range doc.Warnings {
				warned = warned || strings.Contains(w, "changing steadily along the traverse")
			}
			if !warned {
				t.Errorf("no warning of the background along the traverse: %q", doc.Warnings)
			}
		})
	}
}

// TestLocateForcedPhantomNotTracked: with --count 2 beside the 60 A rail
// return, the second line of many traverses is a phantom far down (in
// review 130 m at -1580 ± 7570 A, or 24 m at 23 ± 16 A), its current
// within 3 sigma of zero (report.NoCurrent: its position is not determined
// by the readings). Before, the track builder linked such lines of
// neighbouring traverses into conductors 2 to 6, with bend cautions; now
// no line whose current the readings do not resolve is followed.
func TestLocateForcedPhantomNotTracked(t *testing.T) {
	survey, base := simulateWithBase(t, t.TempDir(), railScenario(60))
	doc := locateDoc(t, "--base", base, "--group-by", "group", "--reference-z", "0", "--count", "2", survey)
	for _, c := range doc.Conductors {
		resolved := 0
		for _, st := range c.Route.Stations {
			for _, g := range doc.Groups {
				if g.Key != st.Key || len(g.Sources) < 2 {
					continue
				}
				for _, src := range g.Sources[1:] {
					if math.Abs(src.Current) > 3*src.CurrentSigma {
						resolved++
					}
				}
			}
		}
		if resolved == 0 {
			t.Errorf("conductor %d is followed through %d stations whose further lines all carry currents within 3 sigma of zero", c.Number, len(c.Route.Stations))
		}
	}
}

// alongGroups makes n groups whose along refits (invented fixtures) have the
// terms slope(i) ± 0.02 nT/m on the up axis, needed where need(i).
func alongGroups(n int, slope func(int) float64, need func(int) bool) []*group {
	gs := make([]*group, n)
	for i := range gs {
		uni := &inverse.Result{Sources: []inverse.SourceEstimate{{Current: 1}}}
		along := &inverse.Result{Sources: []inverse.SourceEstimate{{Current: 1.1}},
			Along: []float64{0, 0, slope(i)}, AlongSigma: []float64{0.02, 0.02, 0.02}}
		gs[i] = &group{key: fmt.Sprintf("T%02d", i+1), res: uni, along: along, alongNeed: need(i)}
	}
	return gs
}

// TestDecideAlongRouteWide: the along refit is taken for every group or for
// none. A far line's terms agree on every traverse (or follow a smooth trend
// along the route: a line converging on it); a misfit near a cable's end or a
// tee is local to a few traverses, or gives terms that disagree, and then no
// group takes it (with a choice per group, as the branch first had it, 12
// tests of this package failed: TestEndPastTraverseNoFalseFall,
// TestCartSensorsNotTraverses among them).
func TestDecideAlongRouteWide(t *testing.T) {
	all := func(int) bool { return true }
	cases := []struct {
		name  string
		n     int
		slope func(int) float64
		need  func(int) bool
		take  bool
	}{
		{"far line, same slope", 21, func(int) float64 { return 1.9 }, all, true},
		{"far line converging", 21, func(i int) float64 { return 1 + 0.1*float64(i) }, all, true},
		{"end: 3 of 21 traverses", 21, func(i int) float64 { return 2 * float64(max(0, i-17)) }, func(i int) bool { return i > 17 }, false},
		{"slopes disagree", 21, func(i int) float64 { return float64(i%2)*4 - 2 }, all, false},
		{"too few groups", 3, func(int) float64 { return 1.9 }, all, false},
	}
	for _, c := range cases {
		gs := alongGroups(c.n, c.slope, c.need)
		took := decideAlong(gs)
		if took != c.take {
			t.Errorf("%s: took %v, want %v", c.name, took, c.take)
		}
		for _, g := range gs {
			if (g.bg == inverse.BackgroundAlong) != c.take || (g.res.Sources[0].Current == 1.1) != c.take || g.along != nil {
				t.Errorf("%s: %s took bg %v (current %g), want all or none", c.name, g.key, g.bg, g.res.Sources[0].Current)
				break
			}
		}
	}
}
