package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// cand is a candidate source for the association tests: label names the
// true conductor it comes from (kept in trackSource.source), so that a
// track can be checked to hold one conductor only.
type cand struct {
	label         int
	offset, depth float64
	current       float64
}

// groupsOf turns per-group candidate lists into the association's input:
// group k at chainage 10 k m.
func groupsOf(in [][]cand) [][]trackSource {
	out := make([][]trackSource, len(in))
	for k, cs := range in {
		for _, c := range cs {
			out[k] = append(out[k], trackSource{
				fit: k, source: c.label, pos: k, chainage: 10 * float64(k),
				offset: c.offset, depth: c.depth, current: c.current,
			})
		}
	}
	return out
}

// The association cases are invented geometry (fixtures, not check
// values): what must hold is which true conductor each track follows.
func TestAssociate(t *testing.T) {
	const n = 8
	noise := func(k int) float64 { return 0.03 * math.Sin(1.7*float64(k)+0.4) } // a few cm of fitting scatter
	parallel := func(k int) []cand {
		return []cand{{label: 1, offset: 1.5 + noise(k), depth: 0.9, current: 20}, {label: 2, offset: -1.5 - noise(k), depth: 1.1, current: 12}}
	}
	build := func(f func(k int) []cand) [][]cand {
		var g [][]cand
		for k := 0; k < n; k++ {
			g = append(g, f(k))
		}
		return g
	}
	tests := []struct {
		name   string
		groups [][]cand
		min    int
		// want lists, per kept track in numbering order, the true
		// conductor it must follow and the groups it must hold.
		want []struct {
			label  int
			groups []int
		}
	}{
		{
			name:   "two parallel lines at +-1.5 m",
			groups: build(parallel),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2, 3, 4, 5, 6, 7}}, {2, []int{0, 1, 2, 3, 4, 5, 6, 7}}},
		},
		{
			name: "source order swapped between groups",
			groups: build(func(k int) []cand {
				c := parallel(k)
				if k%2 == 1 {
					c[0], c[1] = c[1], c[0]
				}
				return c
			}),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2, 3, 4, 5, 6, 7}}, {2, []int{0, 1, 2, 3, 4, 5, 6, 7}}},
		},
		{
			name: "missing detection in one group",
			groups: build(func(k int) []cand {
				c := parallel(k)
				if k == 3 {
					c = c[1:]
				}
				return c
			}),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2, 4, 5, 6, 7}}, {2, []int{0, 1, 2, 3, 4, 5, 6, 7}}},
		},
		{
			// Two conductors crossing in plan: their offsets approach,
			// pass within 0.2 m of each other between groups 3 and 4,
			// and part. The nearer last offset would swap them there;
			// the tracks must follow each conductor through.
			name: "crossing",
			groups: build(func(k int) []cand {
				o := 1.5 - 0.4*float64(k)
				return []cand{{label: 1, offset: o, depth: 1.0, current: 20}, {label: 2, offset: -o, depth: 1.0, current: 12}}
			}),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2, 3, 4, 5, 6, 7}}, {2, []int{0, 1, 2, 3, 4, 5, 6, 7}}},
		},
		{
			// A weak deep source in one group (a fit absorbing misfit)
			// starts a track that is too short to keep and takes nothing
			// from the real ones.
			name: "spurious weak source in one group",
			groups: build(func(k int) []cand {
				c := parallel(k)
				if k == 4 {
					c = append([]cand{{label: 9, offset: 1.1, depth: 2.9, current: 0.3}}, c...)
				}
				return c
			}),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2, 3, 4, 5, 6, 7}}, {2, []int{0, 1, 2, 3, 4, 5, 6, 7}}},
		},
		{
			// Seen in two groups only: not a track with the default
			// minimum of three; kept with a minimum of two.
			name: "too short",
			groups: build(func(k int) []cand {
				if k == 2 || k == 3 {
					return []cand{{label: 1, offset: 2, depth: 1, current: 5}}
				}
				return nil
			}),
		},
		{
			name: "too short, minimum two",
			groups: build(func(k int) []cand {
				if k == 2 || k == 3 {
					return []cand{{label: 1, offset: 2, depth: 1, current: 5}}
				}
				return nil
			}),
			min: 2,
			want: []struct {
				label  int
				groups []int
			}{{1, []int{2, 3}}},
		},
		{
			// A track may miss maxTrackGap (3) groups in a row and go on.
			name: "three groups missed",
			groups: build(func(k int) []cand {
				if k >= 3 && k <= 5 {
					return nil
				}
				return []cand{{label: 1, offset: 1.5 + noise(k), depth: 0.9, current: 20}}
			}),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2, 6, 7}}},
		},
		{
			// After four missed it is closed: the source beyond starts a
			// new track, too short to keep.
			name: "four groups missed",
			groups: build(func(k int) []cand {
				if k >= 3 && k <= 6 {
					return nil
				}
				return []cand{{label: 1, offset: 1.5 + noise(k), depth: 0.9, current: 20}}
			}),
			want: []struct {
				label  int
				groups []int
			}{{1, []int{0, 1, 2}}},
		},
		{
			// Numbered by decreasing median current: the stronger line
			// on the left is conductor 2 although it appears later.
			name: "numbered by current",
			groups: build(func(k int) []cand {
				c := []cand{{label: 1, offset: 1.5, depth: 0.9, current: 5}}
				if k >= 2 {
					c = append(c, cand{label: 2, offset: -1.5, depth: 0.9, current: 30})
				}
				return c
			}),
			want: []struct {
				label  int
				groups []int
			}{{2, []int{2, 3, 4, 5, 6, 7}}, {1, []int{0, 1, 2, 3, 4, 5, 6, 7}}},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			min := tc.min
			if min == 0 {
				min = 3
			}
			got := associate(groupsOf(tc.groups), min)
			if len(got) != len(tc.want) {
				t.Fatalf("%d tracks, want %d: %+v", len(got), len(tc.want), got)
			}
			for i, tr := range got {
				var groups []int
				for _, m := range tr {
					if m.source != tc.want[i].label {
						t.Errorf("track %d holds conductor %d at group %d, want only conductor %d", i+2, m.source, m.fit, tc.want[i].label)
					}
					groups = append(groups, m.fit)
				}
				if fmt.Sprint(groups) != fmt.Sprint(tc.want[i].groups) {
					t.Errorf("track %d has groups %v, want %v", i+2, groups, tc.want[i].groups)
				}
			}
			// Deterministic: the same input gives the same tracks.
			if again := associate(groupsOf(tc.groups), min); fmt.Sprint(again) != fmt.Sprint(got) {
				t.Errorf("a second run differs:\n%v\n%v", again, got)
			}
		})
	}
}

// TestCrossOffset: the offset of a second line is measured square to the
// primary at the primary's point, positive to the right looking along it,
// whichever way the second line's direction points and wherever its own
// point lies along it. Plane geometry.
func TestCrossOffset(t *testing.T) {
	p := [3]float64{10, 20, -1}
	u := [2]float64{0, 1} // primary runs north
	right := [2]float64{u[1], -u[0]}
	s20 := math.Sin(20 * math.Pi / 180)
	c20 := math.Cos(20 * math.Pi / 180)
	tests := []struct {
		name       string
		src        inverse.SourceEstimate
		off, depth float64
	}{
		{"parallel, 2 m east", inverse.SourceEstimate{Point: [3]float64{12, 25, -1.3}, Dir: [3]float64{0, 1, 0}, Depth: 1.3}, 2, 1.3},
		{"parallel reversed, 2 m west", inverse.SourceEstimate{Point: [3]float64{8, 14, -1.3}, Dir: [3]float64{0, -1, 0}, Depth: 1.3}, -2, 1.3},
		// 20 degrees east of north through (12, 20): its own point 5 m
		// along it lies 3.71 m east, but it meets the cross-section at 2 m.
		{"skew", inverse.SourceEstimate{Point: [3]float64{12 + 5*s20, 20 + 5*c20, -1}, Dir: [3]float64{s20, c20, 0}, Depth: 1}, 2, 1},
		// Descending 0.1 m per metre along it: 5 m back it is 0.5 m shallower.
		{"dipping", inverse.SourceEstimate{Point: [3]float64{11, 25, -1.5}, Dir: [3]float64{0, 0.995037, -0.0995037}, Depth: 1.5}, 1, 1.0},
		// Square to the primary: placed by its own point.
		{"square", inverse.SourceEstimate{Point: [3]float64{7, 21, -1}, Dir: [3]float64{1, 0, 0}, Depth: 1}, -3, 1},
	}
	for _, tc := range tests {
		off, depth := crossOffset(p, u, right, tc.src)
		if math.Abs(off-tc.off) > 1e-9 || math.Abs(depth-tc.depth) > 1e-6 {
			t.Errorf("%s: offset %.6f m, depth %.6f m; want %g, %g", tc.name, off, depth, tc.off, tc.depth)
		}
	}
}

// twoCables makes hand-made fits (synthetic results, not fitted) for ten
// traverses 10 m apart along a route 30 degrees east of north at the
// invented Harrow Fen substation: a 60 A cable at 1.0 m and, 1.8 m to its
// right, a second cable at 1.3 m carrying 20 A that loses 7 A between G06
// and G07. Estimates scatter by their sigmas (fixed seed); some fits report
// a conductor the other way round, as fits may. G03's fit is poor (reduced
// chi-square 50). With second == false the groups hold the first cable
// only.
func twoCables(second bool) []Fit {
	rng := rand.New(rand.NewPCG(7, 2026))
	az := 30 * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	right := [3]float64{u[1], -u[0], 0}
	var fits []Fit
	for i := 0; i < 10; i++ {
		c := [3]float64{float64(i) * 10 * u[0], float64(i) * 10 * u[1], 0}
		var pts [][3]float64
		for k := -10; k <= 10; k++ {
			pts = append(pts, [3]float64{c[0] + 0.5*float64(k)*right[0], c[1] + 0.5*float64(k)*right[1], 0})
		}
		src := func(off, depth, cur, sigI float64, flip bool) inverse.SourceEstimate {
			s := inverse.SourceEstimate{
				Kind:  "line",
				Point: [3]float64{c[0] + off*right[0], c[1] + off*right[1], -depth}, Dir: u,
				Current: cur + sigI*rng.NormFloat64(), CurrentSigma: sigI,
				Depth: depth + 0.02*rng.NormFloat64(), DepthSigma: 0.02,
				Offset: off, OffsetSigma: 0.02, Azimuth: 30, AzimuthSigma: 0.5,
				Identifiable: inverse.Identifiable{Current: true, Depth: true, Offset: true, Azimuth: true, Dip: true},
			}
			s.Point[0] += 0.02 * rng.NormFloat64()
			if flip {
				s.Dir = [3]float64{-u[0], -u[1], 0}
				s.Current = -s.Current
			}
			return s
		}
		res := &inverse.Result{Status: inverse.ConvergedResidual, Sigma: 2, RMS: 2, Chi2: 60, DOF: 58}
		res.Sources = append(res.Sources, src(0, 1.0, 60, 0.3, i%3 == 1))
		if second {
			cur := 20.0
			if i >= 6 {
				cur = 13
			}
			res.Sources = append(res.Sources, src(1.8, 1.3, cur, 0.15, i%4 == 2))
		}
		if i == 2 {
			res.Chi2 = 50 * 58
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("G%02d", i+1), Problem: &inverse.Problem{Points: pts}, Result: res})
	}
	return fits
}

func TestBuildSecondConductorStep(t *testing.T) {
	head := Document{Title: "Harrow Fen substation feeders", Site: "Harrow Fen substation"}
	d, err := Build(head, twoCables(true), &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) != 1 {
		t.Fatalf("%d further conductors, want 1", len(d.Conductors))
	}
	tr := d.Conductors[0]
	if tr.Number != 2 || len(tr.Route.Stations) != 10 || math.Abs(tr.Offset-1.8) > 0.1 {
		t.Errorf("conductor %d: %d stations, offset %.3f m; want conductor 2, 10 stations, 1.8 m to the right", tr.Number, len(tr.Route.Stations), tr.Offset)
	}
	for _, g := range d.Groups {
		if len(g.Sources) != 2 || g.Sources[0].Conductor != 0 || g.Sources[1].Conductor != 2 {
			t.Errorf("%s: sources not marked with their conductor: %+v", g.Key, g.Sources)
		}
	}
	var steps, poor int
	for _, f := range d.Findings {
		switch f.Kind {
		case "current-step":
			steps++
			if f.Conductor != 2 {
				t.Errorf("a step on conductor %d, which carries a steady current: %s", max(f.Conductor, 1), f.Message)
				continue
			}
			if strings.Join(f.Groups, ",") != "G06,G07" || !strings.HasPrefix(f.Message, "conductor 2: ") {
				t.Errorf("step on conductor 2 between %v: %s; want between G06 and G07", f.Groups, f.Message)
			}
			// Chainage along conductor 2: the stations are 10 m apart.
			if f.ChainageFrom > 50.5 || f.ChainageTo < 59.5 {
				t.Errorf("step bracketed at chainage %.1f-%.1f m, want 50-60 m", f.ChainageFrom, f.ChainageTo)
			}
			// The true loss is 7 A (the fixture's currents); its
			// reported sigma must cover it.
			if v := f.Values[0]; v.Name != "step" || math.Abs(v.Value-(-7)) > 3*v.Sigma {
				t.Errorf("step %+v, want -7 A within 3 sigma", v)
			}
		case "poor-fit":
			poor++
			if f.Conductor != 0 || strings.Join(f.Groups, ",") != "G03" {
				t.Errorf("poor fit %q on conductor %d, want G03's once on the primary", f.Message, f.Conductor)
			}
		}
	}
	if steps != 1 || poor != 1 {
		t.Errorf("%d steps and %d poor fits, want 1 and 1", steps, poor)
	}

	// The writers carry the conductor: JSON round trip, GeoJSON, HTML.
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	back, err := ReadJSON(bytes.NewReader(buf.Bytes()), "results.json")
	if err != nil {
		t.Fatal(err)
	}
	if len(back.Conductors) != 1 || back.Conductors[0].Number != 2 || len(back.Conductors[0].Route.Stations) != 10 {
		t.Errorf("conductors lost in the JSON round trip: %+v", back.Conductors)
	}
	buf.Reset()
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var gj struct {
		Features []struct {
			Geometry struct {
				Type string `json:"type"`
			} `json:"geometry"`
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(buf.Bytes(), &gj); err != nil {
		t.Fatal(err)
	}
	routes := map[float64]bool{}
	for _, f := range gj.Features {
		if f.Properties["feature"] == "route" && f.Geometry.Type == "LineString" {
			n, _ := f.Properties["conductor"].(float64)
			routes[n] = true
		}
	}
	if !routes[1] || !routes[2] || len(routes) != 2 {
		t.Errorf("GeoJSON route features for conductors %v, want the primary (conductor 1) and conductor 2", routes)
	}
	buf.Reset()
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Conductor 2 along the route", "conductor 2: current"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("the crew report lacks %q", want)
		}
	}

	// With one conductor per group nothing of this appears.
	one, err := Build(head, twoCables(false), &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	buf.Reset()
	if err := WriteJSON(&buf, one); err != nil {
		t.Fatal(err)
	}
	if one.Conductors != nil || bytes.Contains(buf.Bytes(), []byte(`"conductor`)) {
		t.Errorf("a single-conductor survey names further conductors")
	}
	// A negative minimum follows none.
	none, err := Build(head, twoCables(true), &BuildSettings{Noise: 2, TrackMinStations: -1})
	if err != nil {
		t.Fatal(err)
	}
	if len(none.Conductors) != 0 {
		t.Errorf("TrackMinStations -1 still followed %d conductors", len(none.Conductors))
	}
}

// Build follows the second cable of twoCables as conductor 2 and reports
// the 7 A it loses between G06 and G07 there.
func ExampleBuild_conductors() {
	d, err := Build(Document{Site: "Harrow Fen substation"}, twoCables(true), &BuildSettings{Noise: 2})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, t := range d.Conductors {
		fmt.Printf("conductor %d: %d stations, %.1f m to the right of conductor 1\n", t.Number, len(t.Route.Stations), t.Offset)
	}
	for _, f := range d.Findings {
		if f.Kind == "current-step" {
			fmt.Printf("conductor %d: %s between %s, about %.0f A\n", f.Conductor, f.Kind, strings.Join(f.Groups, " and "), f.Values[0].Value)
		}
	}
	// Output:
	// conductor 2: 10 stations, 1.8 m to the right of conductor 1
	// conductor 2: current-step between G06 and G07, about -7 A
}

// BenchmarkAssociate links the sources of 500 groups: two parallel
// conductors in every group and a weak deep one in every seventh (a third
// track).
func BenchmarkAssociate(b *testing.B) {
	var in [][]cand
	for k := 0; k < 500; k++ {
		c := []cand{{label: 1, offset: 1.5, depth: 0.9, current: 20}, {label: 2, offset: -1.5, depth: 1.1, current: 12}}
		if k%7 == 3 {
			c = append(c, cand{label: 9, offset: 4, depth: 2.5, current: 0.3})
		}
		in = append(in, c)
	}
	groups := groupsOf(in)
	b.ReportAllocs()
	for b.Loop() {
		if got := associate(groups, 3); len(got) != 3 {
			b.Fatalf("%d tracks", len(got))
		}
	}
}

// BenchmarkBuildTwoConductors is Build over ten groups of two conductors,
// the second followed as a track with its own route analysis.
func BenchmarkBuildTwoConductors(b *testing.B) {
	fits := twoCables(true)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Build(Document{}, fits, &BuildSettings{Noise: 2}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkBuildOneConductor is the same survey without the second
// conductor, for comparison.
func BenchmarkBuildOneConductor(b *testing.B) {
	fits := twoCables(false)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Build(Document{}, fits, &BuildSettings{Noise: 2}); err != nil {
			b.Fatal(err)
		}
	}
}

// A further source with a number the route cannot use (a NaN sigma) is a
// gap in its track, not a failed Build.
func TestBuildTrackSkipsUnsoundSource(t *testing.T) {
	fits := twoCables(true)
	fits[4].Result.Sources[1].CurrentSigma = math.NaN()
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) != 1 || len(d.Conductors[0].Route.Stations) != 9 {
		t.Fatalf("conductors %+v, want one with 9 stations (G05 left out)", d.Conductors)
	}
	for _, s := range d.Conductors[0].Route.Stations {
		if s.Key == "G05" {
			t.Error("G05's unsound source was followed")
		}
	}
}
