package main

// End-to-end test of conductor tracks: two parallel cables, the weaker of
// which loses current halfway along. The step must be reported on the
// weaker cable's own track (conductor 2), sized and placed within its
// reported uncertainty, and not on the stronger one. The truth comes from
// the scenario: its per-segment currents and where each traverse crosses
// each cable (simulate.Crossings).

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// trackDoc is the part of the result document this test reads, by the
// field names the document defines.
type trackDoc struct {
	Groups []struct {
		Key     string `json:"key"`
		Sources []struct {
			docSource
			Conductor int `json:"conductor"`
		} `json:"sources"`
	} `json:"groups"`
	Route *struct {
		Stations []trackStation `json:"stations"`
	} `json:"route"`
	Conductors []struct {
		Number int     `json:"number"`
		Offset float64 `json:"offset_m"`
		Route  struct {
			Length   float64        `json:"length_m"`
			Stations []trackStation `json:"stations"`
		} `json:"route"`
	} `json:"conductors"`
	Findings []docFinding `json:"findings"`
}

type trackStation struct {
	Key       string     `json:"key"`
	Chainage  float64    `json:"chainage_m"`
	Point     [3]float64 `json:"point_m"`
	Direction [3]float64 `json:"direction"`
	Used      bool       `json:"used"`
}

// TestE2ESecondConductorFault: testdata/scenarios/two-conductors-fault.toml
// holds a 30 A feeder and, 3 m to its east, a cable carrying 20 A that
// loses 7 A at north 360 m, between T06 and T07.
func TestE2ESecondConductorFault(t *testing.T) {
	sc, path := scenario(t, "two-conductors-fault.toml")
	dir := t.TempDir()
	log := filepath.Join(dir, "log.csv")
	mustCLI(t, "simulate", path, "-o", log)
	out := mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", log)
	var doc trackDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("locate --json output is not JSON: %v\n%.500s", err, out)
	}

	// The truth: the faulted cable is the polyline; its crossings give the
	// current each traverse sees and the traverses either side of the
	// fault, where the current changes.
	weak := -1
	for i, c := range sc.Conductors {
		if c.Kind == "polyline" {
			weak = i
		}
	}
	if weak < 0 {
		t.Fatal("the scenario has no polyline cable")
	}
	var cross []simulate.Crossing
	for _, c := range sc.Crossings() {
		if c.Conductor == weak {
			cross = append(cross, c)
		}
	}
	before, after := -1, -1
	for i := 1; i < len(cross); i++ {
		if cross[i].Current != cross[i-1].Current {
			if before >= 0 {
				t.Fatal("the scenario's cable changes current more than once")
			}
			before, after = i-1, i
		}
	}
	if before < 0 {
		t.Fatal("the scenario's cable carries one current throughout")
	}
	// The fault is the vertex where the segments' currents change.
	v, cur := sc.Conductors[weak].Vertices, sc.Conductors[weak].Currents
	var fault [3]float64
	for j := 0; j+1 < len(cur); j++ {
		if cur[j] != cur[j+1] {
			fault = v[j+1]
		}
	}

	// Conductor 2 follows the weaker cable under every traverse.
	if len(doc.Conductors) != 1 {
		t.Fatalf("%d further conductors, want 1", len(doc.Conductors))
	}
	c2 := doc.Conductors[0]
	if c2.Number != 2 || len(c2.Route.Stations) != len(cross) {
		t.Fatalf("conductor %d with %d stations, want conductor 2 under all %d traverses", c2.Number, len(c2.Route.Stations), len(cross))
	}
	truth := crossingsByLine(sc)
	var maxOffSigma float64
	for _, g := range doc.Groups {
		var srcs []docSource
		for _, s := range g.Sources {
			srcs = append(srcs, s.docSource)
		}
		for _, c := range truth[g.Key] {
			s, ok := matchSource(srcs, c)
			if !ok {
				t.Errorf("%s: no source for %s", g.Key, sc.Conductors[c.Conductor].Name)
				continue
			}
			for _, gs := range g.Sources {
				if gs.docSource != s {
					continue
				}
				want := 0
				if c.Conductor == weak {
					want = 2
					maxOffSigma = math.Max(maxOffSigma, gs.OffsetSigma)
				}
				if gs.Conductor != want {
					t.Errorf("%s: the source of %s is marked conductor %d, want %d", g.Key, sc.Conductors[c.Conductor].Name, gs.Conductor, want)
				}
			}
		}
	}
	// The offset from the feeder, positive to the right looking along the
	// route: the route runs north (its stations' direction), so the cable
	// 3 m east lies 3 m to the right. The median of twelve offsets, each
	// within kSigma of its sigma.
	feeder := sc.Conductors[0]
	if doc.Route == nil || len(doc.Route.Stations) == 0 {
		t.Fatal("no route")
	}
	fd, rd := *feeder.Direction, doc.Route.Stations[0].Direction
	if fd[0]*rd[0]+fd[1]*rd[1] < 0 {
		fd = [3]float64{-fd[0], -fd[1], -fd[2]}
	}
	wantOff := planDistance(v[0], *feeder.Point, fd)
	if math.Abs(c2.Offset-wantOff) > kSigma*maxOffSigma {
		t.Errorf("conductor 2 runs %.4f m from conductor 1, true %.4f m (sigma %.2g m)", c2.Offset, wantOff, maxOffSigma)
	}

	// The step: on conductor 2, between the traverses either side of the
	// fault, sized within 3 of its sigmas.
	chain := map[string]trackStation{}
	for _, s := range c2.Route.Stations {
		chain[s.Key] = s
	}
	a, b := chain[cross[before].Line], chain[cross[after].Line]
	var steps int
	for _, f := range doc.Findings {
		if f.Kind != "current-step" {
			continue
		}
		if f.Conductor != 2 {
			t.Errorf("a step on conductor 1, whose current is steady: %s", f.Message)
			continue
		}
		steps++
		if !strings.Contains(strings.Join(f.Groups, ","), a.Key+","+b.Key) || len(f.Groups) > 4 {
			t.Errorf("step between %v, want between %s and %s: %s", f.Groups, a.Key, b.Key, f.Message)
		}
		if f.From > a.Chainage+1e-6 || f.To < b.Chainage-1e-6 {
			t.Errorf("step bracketed at chainage %.1f-%.1f m along conductor 2, want %s (%.1f m) to %s (%.1f m)", f.From, f.To, a.Key, a.Chainage, b.Key, b.Chainage)
		}
		if d := math.Hypot(f.Position[0]-fault[0], f.Position[1]-fault[1]); d > (b.Chainage-a.Chainage)/2 {
			t.Errorf("step placed at %v, %.1f m from the fault at %v", f.Position, d, fault)
		}
		if !strings.HasPrefix(f.Message, "conductor 2: ") || f.Severity != "warning" {
			t.Errorf("step finding %q (%s), want a warning about conductor 2", f.Message, f.Severity)
		}
		// The truth along conductor 2's direction at the bracket.
		align := math.Copysign(1, a.Direction[0]*cross[before].Dir[0]+a.Direction[1]*cross[before].Dir[1])
		want := align * (cross[after].Current - cross[before].Current)
		var size, sigma float64
		for _, x := range f.Values {
			if x.Name == "step" {
				size, sigma = x.Value, x.Sigma
			}
		}
		if sigma <= 0 || math.Abs(size-want) > 3*sigma {
			t.Errorf("step %.4g ± %.2g A, true %.4g A: %s", size, sigma, want, f.Message)
		}
	}
	if steps != 1 {
		t.Errorf("%d steps on conductor 2, want 1", steps)
	}
}

// TestLocateSummaryConductors: locate's table for a person says which conductor
// along the route each source belongs to when further conductors are followed.
func TestLocateSummaryConductors(t *testing.T) {
	_, path := scenario(t, "two-conductors-fault.toml")
	dir := t.TempDir()
	log := filepath.Join(dir, "log.csv")
	mustCLI(t, "simulate", path, "-o", log)
	out := mustCLI(t, "locate", "--group-by", "group", log)
	lines := strings.Split(out, "\n")
	var header string
	ones, twos := 0, 0
	for _, l := range lines {
		f := strings.Fields(l)
		switch {
		case strings.HasPrefix(l, "group "):
			header = l
		case len(f) > 0 && f[len(f)-1] == "1" && strings.Contains(l, "±"):
			ones++
		case len(f) > 0 && f[len(f)-1] == "2" && strings.Contains(l, "±"):
			twos++
		}
	}
	if !strings.HasSuffix(strings.TrimSpace(header), "conductor") {
		t.Errorf("table header %q has no conductor column", header)
	}
	if ones != 12 || twos != 12 {
		t.Errorf("%d sources marked conductor 1 and %d marked 2, want 12 each (12 traverses):\n%s", ones, twos, out)
	}
}
