package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strconv"
	"testing"

	"undercurrent/inverse/simulate"
)

// sameObjectRun simulates scenario sc (at path) with the given seed and
// locates it through the command line as a user would, returning the
// document and the route's stations by key.
func sameObjectRun(t *testing.T, path string, seed int) (resultDoc, map[string]routeStationDoc) {
	t.Helper()
	log := filepath.Join(t.TempDir(), "log.csv")
	mustCLI(t, "simulate", "--seed", strconv.Itoa(seed), path, "-o", log)
	out := mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", log)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("seed %d: locate --json output is not JSON: %v", seed, err)
	}
	var rd struct {
		Route struct {
			Stations []routeStationDoc `json:"stations"`
		} `json:"route"`
	}
	if err := json.Unmarshal([]byte(out), &rd); err != nil {
		t.Fatal(err)
	}
	st := map[string]routeStationDoc{}
	for _, s := range rd.Route.Stations {
		st[s.Key] = s
	}
	return doc, st
}

// routeStationDoc is a route station as the result document writes it.
type routeStationDoc struct {
	Key          string  `json:"key"`
	Current      float64 `json:"current_a"`
	CurrentSigma float64 `json:"current_sigma_a"`
	Used         bool    `json:"used"`
}

// nearestTraverse is the key of the group whose first source lies nearest
// east to x (the scenarios' traverses run north-south across an east-going
// cable).
func nearestTraverse(doc *resultDoc, x float64) string {
	at, best := "", math.Inf(1)
	for _, g := range doc.Groups {
		if len(g.Sources) > 0 {
			if e := math.Abs(g.Sources[0].Point[0] - x); e < best {
				at, best = g.Key, e
			}
		}
	}
	return at
}

// objectAt checks a dipole-anomaly finding against an object of the
// simulated truth: its east and north within kSigma of their sigmas.
func objectAt(t *testing.T, seed int, f *docFinding, pos [3]float64) {
	t.Helper()
	want := map[string]float64{"east": pos[0], "north": pos[1]}
	for _, v := range f.Values {
		if w, ok := want[v.Name]; ok {
			delete(want, v.Name)
			if !within(v.Value, w, v.Sigma) {
				t.Errorf("seed %d: object %s %.4f ± %.4f m, true %.4f m", seed, v.Name, v.Value, v.Sigma, w)
			}
		}
	}
	if len(want) != 0 {
		t.Errorf("seed %d: finding lacks %v", seed, want)
	}
}

// TestOneDrumOneObject: a steel drum 1.3 m beside a plain 20 A DC cable
// (testdata/scenarios/open/drum-beside-cable.toml, the invented Pellow
// Bank), simulated with seeds 4 and 11, where the traverse 2 m from the
// drum's own was also better explained with a point dipole beside the
// cable, placed within its sigmas of the drum's traverse's (0.13 m off,
// sigmas of 5-9 cm against 1-2 mm): the survey reported two objects, and
// the cable's station beside the drum was left out of the profile (found
// in review). The simulated truth is the reference: one magnetised object,
// reported at the traverse nearest the drum, its east and north within
// kSigma sigmas of the scenario's; any other traverse its finding names is
// on the route (used) with the cable's 20 A within kSigma sigmas (its fit
// with the drum's field taken out).
func TestOneDrumOneObject(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses per seed with the object search")
	}
	sc, path := scenario(t, filepath.Join("open", "drum-beside-cable.toml"))
	pos, cable := drumAndCable(sc, "drum")
	for _, seed := range []int{4, 11} {
		doc, st := sameObjectRun(t, path, seed)
		at := nearestTraverse(&doc, pos[0])
		found := 0
		for i := range doc.Findings {
			f := &doc.Findings[i]
			if f.Kind != "dipole-anomaly" {
				continue
			}
			found++
			if len(f.Groups) == 0 || f.Groups[0] != at {
				t.Errorf("seed %d: object reported at %v, want %s first: %s", seed, f.Groups, at, f.Message)
			}
			objectAt(t, seed, f, pos)
			for _, k := range f.Groups[1:] {
				s, ok := st[k]
				if !ok || !s.Used {
					t.Errorf("seed %d: %s, named as seeing the same object, is not on the route: %+v", seed, k, s)
					continue
				}
				if !within(math.Abs(s.Current), cable, s.CurrentSigma) {
					t.Errorf("seed %d: %s reads %.4f ± %.4f A, true %g A", seed, k, math.Abs(s.Current), s.CurrentSigma, cable)
				}
			}
		}
		if found != 1 {
			t.Errorf("seed %d: %d magnetised objects, want 1 at %s", seed, found, at)
		}
	}
}

// TestTwoDrumsTwoObjects: two steel drums 4 m apart along a plain 20 A DC
// cable, both 1.3 m south of it and 0.6 m down
// (testdata/scenarios/open/two-drums-beside-cable.toml, the invented
// Hobb's Garth), each beside its own traverse. Two objects must not be
// merged into one because each is seen from the traverses beside it. The
// simulated truth is the reference: on seeds 1-3 two magnetised objects,
// each at the traverse nearest its drum, each finding naming that traverse
// alone, east and north within kSigma sigmas of that drum's.
func TestTwoDrumsTwoObjects(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses per seed with the object search")
	}
	sc, path := scenario(t, filepath.Join("open", "two-drums-beside-cable.toml"))
	west, _ := drumAndCable(sc, "drum-west")
	east, _ := drumAndCable(sc, "drum-east")
	for _, seed := range []int{1, 2, 3} {
		doc, _ := sameObjectRun(t, path, seed)
		want := map[string][3]float64{nearestTraverse(&doc, west[0]): west, nearestTraverse(&doc, east[0]): east}
		if len(want) != 2 {
			t.Fatalf("seed %d: the drums' traverses are not two: %v", seed, want)
		}
		for i := range doc.Findings {
			f := &doc.Findings[i]
			if f.Kind != "dipole-anomaly" {
				continue
			}
			if len(f.Groups) != 1 {
				t.Errorf("seed %d: object named at %v, want one traverse: %s", seed, f.Groups, f.Message)
				continue
			}
			pos, ok := want[f.Groups[0]]
			if !ok {
				t.Errorf("seed %d: object at %s, not at either drum's traverse: %s", seed, f.Groups[0], f.Message)
				continue
			}
			delete(want, f.Groups[0])
			objectAt(t, seed, f, pos)
		}
		if len(want) != 0 {
			t.Errorf("seed %d: no object reported at %v", seed, want)
		}
	}
}

// drumAndCable returns the position of sc's dipole conductor of the given
// name and the current of its conductor "main".
func drumAndCable(sc *simulate.Scenario, name string) (pos [3]float64, cable float64) {
	for _, c := range sc.Conductors {
		switch c.Name {
		case name:
			pos = *c.Position
		case "main":
			cable = c.Currents[0]
		}
	}
	return pos, cable
}

// TestDrumTailTakenOutOfNeighbours: the steel drum 1.3 m beside a plain
// 20 A DC cable (testdata/scenarios/open/drum-beside-cable.toml, the
// invented Pellow Bank), seeds 17 and 21, where the traverse 2 m before
// the drum's is not itself taken for the object: its fit kept the drum's
// tail, read the cable 0.35-0.39 A high (about 4 sigma) with a -0.4 A
// second line beside it, and the route gave it a current-anomaly caution
// though the drum was reported at the next traverse (found in review).
// The simulated truth is the reference: one magnetised object, no current
// anomaly or step, and every station on the route within kSigma sigmas of
// the cable's 20 A.
func TestDrumTailTakenOutOfNeighbours(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses per seed with the object search")
	}
	sc, path := scenario(t, filepath.Join("open", "drum-beside-cable.toml"))
	_, cable := drumAndCable(sc, "drum")
	for _, seed := range []int{17, 21} {
		doc, st := sameObjectRun(t, path, seed)
		objects := 0
		for i := range doc.Findings {
			switch f := &doc.Findings[i]; f.Kind {
			case "dipole-anomaly":
				objects++
			case "current-anomaly", "current-step":
				t.Errorf("seed %d: %s: %s", seed, f.Kind, f.Message)
			}
		}
		if objects != 1 {
			t.Errorf("seed %d: %d magnetised objects, want 1", seed, objects)
		}
		for k, s := range st {
			if s.Used && !within(math.Abs(s.Current), cable, s.CurrentSigma) {
				t.Errorf("seed %d: %s reads %.4f ± %.4f A, true %g A", seed, k, math.Abs(s.Current), s.CurrentSigma, cable)
			}
		}
	}
}
