package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"testing"

	"undercurrent/inverse/simulate"
)

// docPoorFits returns the groups the poor-fit findings of doc name, sorted.
func docPoorFits(doc *resultDoc) []string {
	var out []string
	for _, f := range doc.Findings {
		if f.Kind == "poor-fit" {
			out = append(out, f.Groups...)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// symDiff returns the keys in one of a and b (sorted, no repeats) but not
// in both.
func symDiff(a, b []string) []string {
	var out []string
	for _, k := range a {
		if !slices.Contains(b, k) {
			out = append(out, k)
		}
	}
	for _, k := range b {
		if !slices.Contains(a, k) {
			out = append(out, k)
		}
	}
	return out
}

// TestDemoPoorFitsSteadyAcrossSeeds: on the demo survey (Fenwick Lane,
// testdata/demo/fenwick-lane.toml) the straight-line fits miss the
// readings near the cable's vertices (its bends, changes of depth and the
// earth fault) by 6-125 times the windows' own noise, and fit within
// 1.3-3.5 times it elsewhere. The fits that miss were about half the
// traverses, so the median of the fits' noise estimates, the poor-fit
// yardstick, fell on one side or the other with the noise draw: 13 poor
// fits on the file's seed (1402), 8 on seed 2 and 7 on seed 5, with
// T11 and T28 (within 2.1 and 0.3 m of a vertex) passed as sound on
// seed 2. Against the simulated truth (the scenario's vertices and the
// traverses' lines, simulate.Scenario.Lines), on each seed:
//
//   - every traverse called poor lies within 10.5 m of an interior vertex
//     of the 11 kV cable;
//   - every traverse within 3 m of one is called poor, unless its fit
//     holds a further line that takes up the bend (T13's weak steep line
//     where the cable rises on seed 1402: three sources where the two
//     cables give two);
//   - the traverses called poor on any two seeds differ by at most two,
//     leaving out those fitted with such a further line on any seed.
//
// The bounds were 8 m and one traverse while the demo's cables stopped
// dead 25 m beyond the end traverses: the open ends' field made the end
// stations' fits miss by about twice the noise, and those set the
// reference noise at 1.18 nT. With the cables run on (to the substations
// and a feeder pillar hundreds of metres away) it is 0.78 nT against the
// windows' 0.57 nT, and the misfit of a vertex one traverse length (10 m)
// away shows: T26, 10.0 m from the vertex at 135 m, is called poor on
// every seed (with information, its sigma widened), and T10 and T21, 7 m
// from the dip at 52 m and 9.9 m from the bend at 90 m, on seeds 2 and 5
// but not on 1402.
func TestDemoPoorFitsSteadyAcrossSeeds(t *testing.T) {
	path := filepath.Join("..", "..", simulate.DemoPath)
	sc, err := simulate.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	cable := sc.Conductors[0].Vertices
	if len(cable) < 3 || len(sc.Conductors) < 2 {
		t.Fatalf("the demo's 11 kV cable has %d vertices and the demo %d conductors; want a polyline and the LV cable", len(cable), len(sc.Conductors))
	}
	near := map[string]float64{} // each traverse's distance to the nearest interior vertex, m
	for _, l := range sc.Lines() {
		m := [2]float64{(l.From[0] + l.To[0]) / 2, (l.From[1] + l.To[1]) / 2}
		d := math.Inf(1)
		for _, v := range cable[1 : len(cable)-1] {
			d = math.Min(d, math.Hypot(v[0]-m[0], v[1]-m[1]))
		}
		near[l.Key] = d
	}
	dir := t.TempDir()
	var sets [][]string
	more := map[string]bool{} // traverses fitted with a further line on some seed
	seeds := []int{1402, 2, 5}
	for _, seed := range seeds {
		log := filepath.Join(dir, fmt.Sprintf("demo-%d.csv", seed))
		mustCLI(t, "simulate", "--seed", strconv.Itoa(seed), path, "-o", log)
		doc := locateDoc(t, "--freq", "50", "--window", "0.1", "--group-by", "group", "--sensor-height", "0.3", log)
		poor := docPoorFits(doc)
		sets = append(sets, poor)
		t.Logf("seed %d: poor fits %v", seed, poor)
		for _, k := range poor {
			if near[k] > 10.5 {
				t.Errorf("seed %d: %s called poor, %.1f m from the nearest vertex of the cable", seed, k, near[k])
			}
		}
		for _, g := range doc.Groups {
			if len(g.Sources) > 2 {
				more[g.Key] = true
			}
			if near[g.Key] <= 3 && len(g.Sources) <= 2 && !slices.Contains(poor, g.Key) {
				t.Errorf("seed %d: %s, %.1f m from a vertex of the cable and fitted with %d lines, not called poor", seed, g.Key, near[g.Key], len(g.Sources))
			}
		}
	}
	for i := range sets {
		for j := i + 1; j < len(sets); j++ {
			d := slices.DeleteFunc(symDiff(sets[i], sets[j]), func(k string) bool { return more[k] })
			if len(d) > 2 {
				t.Errorf("seeds %d and %d: the poor fits differ at %v, want at most two traverses", seeds[i], seeds[j], d)
			}
		}
	}
}

// quenbyDrove simulates (seed 1) nine traverses 10 m long every 5 m from
// east 5 m (T01) to east 45 m (T09) across an invented 50 Hz feeder at
// Quenby Drove, logged at 500 Hz with 4 nT of noise and walked at 1 m/s,
// with the conductors given in TOML; it returns the log's path.
func quenbyDrove(t *testing.T, dir, name, conductors string) string {
	t.Helper()
	scen := `name = "` + name + `"
site = "Quenby Drove (invented)"
seed = 1
start = "2026-05-10T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 4.0
sample_rate_hz = 500.0
[survey]
route = [[0.0, 0.0], [50.0, 0.0]]
count = 9
spacing_m = 5.0
first_at_m = 5.0
length_m = 10.0
speed_m_s = 1.0
turn_s = 8.0
zigzag = true
` + conductors
	p := filepath.Join(dir, name+".toml")
	if err := os.WriteFile(p, []byte(scen), 0o644); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, name+".csv")
	mustCLI(t, "simulate", p, "-o", log)
	return log
}

// TestPoorFitOwnNoiseQuenbyDrove: each traverse's fit is judged against
// the noise its own windows show, the survey's reference ratio taken from
// the fits that meet it (simulated truth, Quenby Drove, quenbyDrove):
//
//   - a straight 30 A feeder 0.9 m down: no poor fit (each fit within a
//     few per cent of its windows' noise);
//   - the feeder turning 30 degrees under T05: T04-T06 are poor, T05 (at
//     the bend) with a caution, its misfit over 1% of the signal, and
//     T01, T02, T08 and T09, 15 m or more from the bend, are not;
//   - the feeder weaving 0.3 m either side of its line from east 22.5 m
//     (vertices every 5 m, half-way between traverses): T04-T09 miss by
//     2.6-7.7 times their windows' noise, T01-T03 fit within it. With the
//     median of the fits' noise as the yardstick (T05's, among the
//     misfits) none was called poor, and T04-T05 gave a 0.17% "current
//     falls" instead; all six must be poor, and T01-T03 not;
//   - a steel object 2.5 m beside the feeder at T05: T05 must be named,
//     as poor or as a magnetised object.
func TestPoorFitOwnNoiseQuenbyDrove(t *testing.T) {
	const feeder = "[[conductor]]\nname = \"feeder\"\nfrequency_hz = 50.0\nphase_deg = 20.0\ncurrent_a = 30.0\n"
	dir := t.TempDir()
	for _, c := range []struct {
		name, conductors string
		poor, sound      []string
		named, caution   string
	}{
		{name: "straight", conductors: feeder + "kind = \"line\"\npoint = [0.0, 0.3, -0.9]\ndirection = [1.0, 0.0, 0.0]\n",
			sound: []string{"T01", "T02", "T03", "T04", "T05", "T06", "T07", "T08", "T09"}},
		{name: "bend", conductors: feeder + "kind = \"polyline\"\nvertices = [[-100.0, 0.3, -0.9], [25.0, 0.3, -0.9], [125.0, 58.0, -0.9]]\n",
			poor: []string{"T04", "T05", "T06"}, sound: []string{"T01", "T02", "T08", "T09"}, caution: "T05"},
		{name: "weave", conductors: feeder + "kind = \"polyline\"\nvertices = [[-100.0, 0.3, -0.9], [22.5, 0.3, -0.9], [27.5, 0.6, -0.9], [32.5, 0.0, -0.9], [37.5, 0.6, -0.9], [42.5, 0.0, -0.9], [47.5, 0.6, -0.9], [150.0, 0.6, -0.9]]\n",
			poor: []string{"T04", "T05", "T06", "T07", "T08", "T09"}, sound: []string{"T01", "T02", "T03"}},
		{name: "object", conductors: feeder + "kind = \"line\"\npoint = [0.0, 0.3, -0.9]\ndirection = [1.0, 0.0, 0.0]\n" +
			"[[conductor]]\nname = \"valve body\"\nkind = \"dipole\"\nposition = [25.0, 2.5, -0.6]\nmoment_a_m2 = [0.3, 0.2, -0.8]\nfrequency_hz = 50.0\nphase_deg = 20.0\n",
			named: "T05"},
	} {
		log := quenbyDrove(t, dir, c.name, c.conductors)
		doc := locateDoc(t, "--freq", "50", "--window", "0.1", "--group-by", "group", "--reference-z", "0", log)
		poor := docPoorFits(doc)
		t.Logf("%s: poor fits %v", c.name, poor)
		for _, k := range c.poor {
			if !slices.Contains(poor, k) {
				t.Errorf("%s: %s not called poor (poor: %v)", c.name, k, poor)
			}
		}
		for _, k := range c.sound {
			if slices.Contains(poor, k) {
				t.Errorf("%s: %s called poor", c.name, k)
			}
		}
		if c.named != "" {
			found := false
			for _, f := range doc.Findings {
				if (f.Kind == "poor-fit" || f.Kind == "dipole-anomaly") && slices.Contains(f.Groups, c.named) {
					found = true
				}
			}
			if !found {
				t.Errorf("%s: no poor-fit or magnetised-object finding names %s", c.name, c.named)
			}
		}
		if c.caution != "" {
			found := false
			for _, f := range doc.Findings {
				if f.Kind == "poor-fit" && f.Severity != "info" && slices.Contains(f.Groups, c.caution) {
					found = true
				}
			}
			if !found {
				t.Errorf("%s: no poor-fit caution names %s", c.name, c.caution)
			}
		}
	}
}
