package report

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// faultBelowParallelScenario is testdata/scenarios/open/tallow-brook-fault.toml
// (an invented survey at Tallow Brook: a feeder 1.0 m below the ground along
// the route carrying 25 A, beside a supply cable carrying 18 A the whole
// way, 3 m to the east and 0.8 m below the ground) with the fault at y = at
// m, after A left in the feeder past it and the given seed.
func faultBelowParallelScenario(t *testing.T, at, after float64, seed int64) string {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "testdata", "scenarios", "open", "tallow-brook-fault.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.NewReplacer("seed = 501", fmt.Sprintf("seed = %d", seed),
		"[0.0, 130.0, -1.0]", fmt.Sprintf("[0.0, %g, -1.0]", at),
		"currents_a = [25.0, 12.0]", fmt.Sprintf("currents_a = [25.0, %g]", after)).Replace(string(raw))
	for _, want := range []string{fmt.Sprintf("seed = %d", seed), fmt.Sprintf("[0.0, %g, -1.0]", at), fmt.Sprintf("currents_a = [25.0, %g]", after)} {
		if !strings.Contains(text, want) {
			t.Fatalf("tallow-brook-fault.toml: %q not set (the file no longer holds the values the test replaces)", want)
		}
	}
	return text
}

// TestFaultBelowParallelCableKeepsConductor1: an earth fault takes 13 A of
// a feeder's 25 A, leaving it weaker than an 18 A cable 3 m beside it,
// midway along the route (y = 130 m, chainage 110 m, between T06 and T07)
// and between the last two traverses (y = 230 m, chainage 210 m), each at
// three seeds; and 20 A of the 25 A midway, at two seeds (the feeder past
// the fault then carries under a quarter of its current before it, but
// over a quarter of the cable's). Simulated truth (Biot-Savart through the simulate package):
// conductor 1 is the feeder (E 0 m) at every used station; its current
// falls by 13 A at the fault, reported within 3 sigma of it and bracketing
// it; no other change of current is a warning; the cable, running the
// whole way, is followed as one further conductor at every traverse, and
// nothing is said to end. Before, conductor 1 moved onto the cable past
// the fault (the stronger there, and on the track of half the six nearest
// traverses' conductor 1): the loss was read as 25 A less 18 A (7 A; 8 A
// for the fault near the end; 7 A for the 20 A loss), both the cable and the feeder past the
// fault were said to end at it, and a false 0.36 A fall was reported on
// the feeder past it.
func TestFaultBelowParallelCableKeepsConductor1(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 72 traverses")
	}
	cases := []struct {
		name     string
		at       float64 // the fault's y, m
		chainage float64 // its chainage from T01 (y = 20 m)
		after    float64 // the feeder's current past the fault, A
		seeds    []int64
	}{
		{"mid-route", 130, 110, 12, []int64{501, 11, 12}},
		{"last-two", 230, 210, 12, []int64{501, 11, 12}},
		{"mid-route-20A", 130, 110, 5, []int64{501, 11}},
	}
	for _, c := range cases {
		for _, seed := range c.seeds {
			t.Run(fmt.Sprintf("%s-seed%d", c.name, seed), func(t *testing.T) {
				want := c.after - 25
				sc, err := simulate.Parse([]byte(faultBelowParallelScenario(t, c.at, c.after, seed)), c.name)
				if err != nil {
					t.Fatal(err)
				}
				d := simulatedDoc(t, sc)
				if d.Route == nil {
					t.Fatal("no route")
				}
				used := 0
				for _, s := range d.Route.Stations {
					if !s.Used {
						continue
					}
					used++
					if math.Abs(s.Point[0]) > 1 {
						t.Errorf("conductor 1 at %s lies at E %.2f m carrying %.4g A: the cable (E 3 m), not the feeder (E 0 m)", s.Key, s.Point[0], s.Current)
					}
				}
				if used < len(d.Route.Stations)-1 {
					t.Errorf("only %d of %d stations used", used, len(d.Route.Stations))
				}
				found := false
				var got []string
				for _, f := range d.Findings {
					if strings.Contains(f.Message, "appears to end") {
						t.Errorf("conductor %d said to end (neither the feeder nor the cable ends): %s", max(f.Conductor, 1), f.Message)
					}
					if f.Kind != "current-step" && f.Kind != "current-change" {
						continue
					}
					got = append(got, fmt.Sprintf("[%s %d] %s", f.Severity, f.Conductor, f.Message))
					if f.Severity == SeverityInfo {
						continue
					}
					if f.Conductor != 0 || f.Lone || len(f.Values) == 0 {
						t.Errorf("a change of current on a further line, where the cable carries 18 A throughout: %s", f.Message)
						continue
					}
					if f.ChainageFrom > c.chainage || f.ChainageTo < c.chainage {
						t.Errorf("a change of conductor 1's current bracketed %.1f-%.1f m, not holding the fault at %.0f m: %s", f.ChainageFrom, f.ChainageTo, c.chainage, f.Message)
						continue
					}
					found = true
					v := f.Values[0]
					if z := (v.Value - want) / v.Sigma; math.Abs(z) > 3 {
						t.Errorf("change %.4g ± %.2g A, %.1f sigma from the truth %.3g A: %s", v.Value, v.Sigma, z, want, f.Message)
					}
				}
				if !found {
					t.Errorf("no fall of conductor 1's current reported at the fault (truth %.3g A at chainage %.0f m); current findings: %s", want, c.chainage, strings.Join(got, " | "))
				}
				// The cable: one further conductor, seen at every traverse.
				cable := 0
				for _, tr := range d.Conductors {
					if math.Abs(math.Abs(tr.Offset)-3) < 1 {
						cable++
						if n := len(tr.Route.Stations); n != len(d.Route.Stations) {
							t.Errorf("conductor %d (3 m aside: the cable's place) followed at %d of %d traverses", tr.Number, n, len(d.Route.Stations))
						}
					}
				}
				if cable != 1 || len(d.Conductors) != 1 {
					t.Errorf("%d further conductors, %d of them 3 m aside: want the cable alone, once", len(d.Conductors), cable)
				}
			})
		}
	}
}

// bendBesideParallelScenario is an invented survey at Osier Bend: a 25 A
// feeder 1.0 m down running north from y = -300 m, turning 20 degrees west
// at (0, 110) m, and an 18 A cable 0.8 m down 3 m to its right (outside
// the bend) the whole way, turning with it; the route follows the feeder,
// 12 traverses 20 m apart from 20 m along it (T06 10 m past the bend),
// 5 nT noise. The feeder at T06 lies 3.4 m from T05's feeder line carried
// on, the cable 0.4 m from it.
func bendBesideParallelScenario(seed int64) string {
	th := 20 * math.Pi / 180
	ux, uy := -math.Sin(th), math.Cos(th)
	// The cable's corner: x = 3 met by the line 3 m right of the feeder's
	// bent leg.
	px, py := 3*uy, 110-3*ux
	cy := py + (3-px)/ux*uy
	return fmt.Sprintf(`
name = "osier-bend"
site = "Osier Bend feeder and cable (invented)"
seed = %d
start = "2026-06-04T09:00:00Z"
[earth]
field_nt = [-180.0, 19150.0, -45250.0]
[sensor]
height_m = 0.3
noise_nt = 5.0
[survey]
route = [[0.0, 0.0], [0.0, 110.0], [%.4f, %.4f]]
count = 12
spacing_m = 20.0
first_at_m = 20.0
length_m = 12.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "feeder"
kind = "polyline"
vertices = [[0.0, -300.0, -1.0], [0.0, 110.0, -1.0], [%.4f, %.4f, -1.0]]
currents_a = [25.0, 25.0]
[[conductor]]
name = "cable"
kind = "polyline"
vertices = [[3.0, -300.0, -0.8], [3.0, %.4f, -0.8], [%.4f, %.4f, -0.8]]
currents_a = [18.0, 18.0]
`, seed, 300*ux, 110+300*uy, 600*ux, 110+600*uy, cy, px+600*ux, py+600*uy)
}

// TestBendBesideParallelCableNotASwap: where the route bends 20 degrees
// between two traverses, the feeder's line jumps 3.4 m off its line
// carried on from the traverses before the bend, and the cable beside it
// comes to lie on that line: the groups past the bend form a track apart
// from those before it, yet their lines are not parallel to the others'
// (leadBySwap's swapParallel), so no lead is exchanged. Simulated truth:
// conductor 1 is the feeder (the stronger at every traverse) at every
// station, and the cable is followed at all 12 traverses, with no change
// of current reported. With the parallel test taken out, conductor 1
// moved onto the cable at the traverses before the bend.
func TestBendBesideParallelCableNotASwap(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 24 traverses")
	}
	th := 20 * math.Pi / 180
	ux, uy := -math.Sin(th), math.Cos(th)
	// offFeeder is the plan distance of p from the feeder.
	offFeeder := func(p [3]float64) float64 {
		if p[1] <= 110 && p[0]*uy-(p[1]-110)*ux <= 0 {
			return math.Abs(p[0])
		}
		dx, dy := p[0], p[1]-110
		return math.Abs(dx*uy - dy*ux)
	}
	for _, seed := range []int64{5, 6} {
		sc, err := simulate.Parse([]byte(bendBesideParallelScenario(seed)), "osier-bend")
		if err != nil {
			t.Fatal(err)
		}
		d := simulatedDoc(t, sc)
		if d.Route == nil {
			t.Fatal("no route")
		}
		for _, s := range d.Route.Stations {
			if !s.Used {
				t.Errorf("seed %d: %s not used", seed, s.Key)
				continue
			}
			if off := offFeeder(s.Point); off > 1 {
				t.Errorf("seed %d: conductor 1 at %s lies %.2f m from the feeder carrying %.4g A (the cable lies 3 m from it)", seed, s.Key, off, s.Current)
			}
		}
		if len(d.Conductors) != 1 || len(d.Conductors[0].Route.Stations) != len(d.Route.Stations) {
			t.Errorf("seed %d: %d further conductors, want the cable alone at every traverse", seed, len(d.Conductors))
		}
		for _, f := range d.Findings {
			if (f.Kind == "current-step" || f.Kind == "current-change") && f.Severity != SeverityInfo {
				t.Errorf("seed %d: a change of current where none is: %s", seed, f.Message)
			}
		}
	}
}
