package report

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// TestDrumBesideCableFound: a steel drum 1.3 m beside a plain 20 A DC cable
// (testdata/scenarios/open/drum-beside-cable.toml, the invented Pellow
// Bank), no fault. The drum's field reaches the traverses 2 m either side
// and pulls their currents apart (20.3 and 19.9 A), which the rule added
// for a right-angle tee (TestTeeServiceStep) took for a step between them:
// the object was refused on every seed, its traverse used at 28.8 A and a
// 0.46 m "further line" named in the least-cover headline (found in
// review). The simulated truth is the reference: one magnetised object at
// the drum's traverse, its position and moment within 4 sigma of the
// scenario's, the cable's 20 A within 4 sigma at that traverse and no
// further line in the least-cover headline, on seeds 1-4. (The tail still
// pulls the neighbours' own currents, by up to 0.5 A on seed 2, which the
// route may size as small steps either side of the object, as it did
// before the tee rule: DEVELOPERS.md, Known limits.)
func TestDrumBesideCableFound(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses per seed with the object search")
	}
	drumFoundOnSeeds(t, filepath.Join("open", "drum-beside-cable.toml"), []int64{1, 2, 3, 4})
}

// TestDrumNorthOfCableFound: the same drum on the cable's other side, 1.3 m
// north (testdata/scenarios/open/drum-north-of-cable.toml, the invented
// Quillet Hythe). The fit split the cable at the drum's traverse into 14.1
// and 3.0 A lines 1.9 m apart (chi-square per degree of freedom about 2000);
// the search from both found the drum but kept a -0.11 A line 0.35 m down
// beside it, whose geometry the readings do not fix, so the object's moment
// had no sigma and it was refused on every seed, and the route used the
// traverse at 14.1 A (found while making drum-beside-cable.toml). The
// simulated truth is the reference, as above, on seeds 1-3.
func TestDrumNorthOfCableFound(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses per seed with the object search")
	}
	drumFoundOnSeeds(t, filepath.Join("open", "drum-north-of-cable.toml"), []int64{1, 2, 3})
}

// drumFoundOnSeeds checks that the scenario's drum is found once, at its
// traverse, within 4 sigma of the truth, on each seed, with the cable's
// current there and no further line in the least-cover headline.
func drumFoundOnSeeds(t *testing.T, name string, seeds []int64) {
	t.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", name))
	if err != nil {
		t.Fatal(err)
	}
	var pos, mom [3]float64
	var cable float64
	for _, c := range sc.Conductors {
		switch c.Name {
		case "drum":
			pos, mom = *c.Position, *c.Moment
		case "main":
			cable = c.Currents[0]
		}
	}
	// The drum's traverse: the nearest to it along the route (east).
	at := ""
	for _, seed := range seeds {
		d := scenarioDoc(t, name, seed)
		if at == "" {
			best := math.Inf(1)
			for _, g := range d.Groups {
				if len(g.Sources) == 0 {
					continue
				}
				if e := math.Abs(g.Sources[0].Point[0] - pos[0]); e < best {
					at, best = g.Key, e
				}
			}
		}
		found := 0
		for _, f := range d.Findings {
			switch f.Kind {
			case "dipole-anomaly":
				found++
				if len(f.Groups) != 1 || f.Groups[0] != at {
					t.Errorf("seed %d: object at %v, want %s: %s", seed, f.Groups, at, f.Message)
				}
				want := map[string]float64{"east": pos[0], "north": pos[1],
					"moment": math.Sqrt(mom[0]*mom[0] + mom[1]*mom[1] + mom[2]*mom[2])}
				for _, v := range f.Values {
					if w, ok := want[v.Name]; ok {
						delete(want, v.Name)
						if !(v.Sigma > 0) || math.Abs(v.Value-w) > 4*v.Sigma {
							t.Errorf("seed %d: object %s %.4f ± %.4f, true %.4f", seed, v.Name, v.Value, v.Sigma, w)
						}
					}
				}
				if len(want) != 0 {
					t.Errorf("seed %d: finding lacks %v", seed, want)
				}
			}
		}
		if found != 1 {
			t.Errorf("seed %d: %d magnetised objects, want 1 at %s: %+v", seed, found, at, d.Findings)
		}
		for _, g := range d.Groups {
			if g.Key != at {
				continue
			}
			for _, s := range g.Sources {
				if s.Kind == KindLine && math.Abs(math.Abs(s.Current)-cable) > 4*s.CurrentSigma+1e-3*cable {
					t.Errorf("seed %d: %s cable %.4f ± %.2g A, true %g A", seed, at, math.Abs(s.Current), s.CurrentSigma, cable)
				}
				break
			}
		}
		if lc := LeastCover(d); strings.Contains(lc, "further line") {
			t.Errorf("seed %d: the least cover names a further line where there is only the drum: %s", seed, lc)
		}
	}
}
