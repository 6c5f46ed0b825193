package report

import (
	"math"
	"path/filepath"
	"testing"

	"undercurrent/inverse/simulate"
)

// nearestSegment returns the index of polyline conductor c's segment
// nearest point p in plan, and p's distance from it, m.
func nearestSegment(c *simulate.Conductor, p [3]float64) (seg int, dist float64) {
	dist = math.Inf(1)
	for i := 0; i+1 < len(c.Vertices); i++ {
		a, b := c.Vertices[i], c.Vertices[i+1]
		dx, dy := b[0]-a[0], b[1]-a[1]
		u := math.Min(math.Max(((p[0]-a[0])*dx+(p[1]-a[1])*dy)/(dx*dx+dy*dy), 0), 1)
		if d := math.Hypot(a[0]+u*dx-p[0], a[1]+u*dy-p[1]); d < dist {
			seg, dist = i, d
		}
	}
	return seg, dist
}

// pipeCurrentAt is the current of polyline conductor c in the segment
// nearest point p in plan: by Ampere's law the current that crosses a
// traverse over it.
func pipeCurrentAt(c *simulate.Conductor, p [3]float64) float64 {
	seg, _ := nearestSegment(c, p)
	return c.Currents[seg]
}

// TestWeldMainCurrentAndDefect: a steel main with girth welds every 12 m
// (testdata/scenarios/open/weld-main.toml, invented: 0.6 A, 20% leaving at
// a coating defect at chainage 252 m, the welds' fields 20-60 nT against
// the pipe's 70-100 nT). The fits split the pipe at many traverses into two
// same-way lines whose sum is its current, and the route took one share:
// station currents 40-65% low, the defect missed on seeds 1-3 ("findings:
// none" on two of them). Every used station now reads the pipe's current
// (simulated truth, by Ampere's law) within 15%, the defect is found
// between the stations either side of it with its size within 3 sigma of
// the truth, no other current step is reported, and no further conductor
// is followed.
func TestWeldMainCurrentAndDefect(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 26 traverses per seed")
	}
	name := filepath.Join("open", "weld-main.toml")
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", name))
	if err != nil {
		t.Fatal(err)
	}
	pipe := &sc.Conductors[0]
	const defect = 252.0 // m along the route, from the scenario's header
	// The current that leaves: the difference of the segments' currents
	// either side of the defect's vertex.
	lost := 0.0
	for i := 0; i+1 < len(pipe.Currents); i++ {
		if d := pipe.Currents[i] - pipe.Currents[i+1]; d > lost {
			lost = d
		}
	}
	for _, seed := range []int64{1, 2} {
		d := scenarioDoc(t, name, seed)
		for _, s := range d.Route.Stations {
			if !s.Used {
				continue
			}
			want := pipeCurrentAt(pipe, s.Point)
			if math.Abs(math.Abs(s.Current)-want) > 0.15*want {
				t.Errorf("seed %d: %s at %.1f m reads %.4g ± %.2g A, want the pipe's %.4g A within 15%%", seed, s.Key, s.Chainage, s.Current, s.CurrentSigma, want)
			}
		}
		steps := 0
		for _, f := range d.Findings {
			if f.Kind != "current-step" {
				continue
			}
			steps++
			if !(f.ChainageFrom < defect && f.ChainageTo > defect) {
				t.Errorf("seed %d: a current step away from the defect at %.0f m: %s", seed, defect, f.Message)
				continue
			}
			for _, v := range f.Values {
				if v.Name == "step" && math.Abs(math.Abs(v.Value)-lost) > 3*v.Sigma {
					t.Errorf("seed %d: step of %.4g ± %.2g A, want the %.4g A leaving within 3 sigma", seed, v.Value, v.Sigma, lost)
				}
			}
		}
		if steps != 1 {
			t.Errorf("seed %d: %d current steps reported, want the one defect", seed, steps)
		}
		if len(d.Conductors) > 0 {
			t.Errorf("seed %d: %d further conductors followed beside a lone pipe", seed, len(d.Conductors))
		}
	}
}
