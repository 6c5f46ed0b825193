package report

import (
	"bytes"
	"encoding/csv"
	"math"
	"strings"
	"testing"
)

// TestPairBesideCableFollowed: a go-and-return pair found beside conductor 1
// on every traverse (the seven traverses of pairBesideCableFits: a balanced
// 10 A pair 0.2 m apart at 0.6 m, 2 m from a 6 A cable at 1.0 m) is followed
// along the route as conductor 2, one conductor at the pair's centre, not as
// two lines. Before, it was reported with each group (Group.Pair) but
// followed along no route, its cover checked group by group as a lone line.
//
// The truth is the simulated geometry: by Biot-Savart the field of the two
// filaments seen from afar is that of their net current (Ampère's law: the
// current through any loop round both cores is their sum, here 0) plus a line
// dipole at their centre, so each station of conductor 2 must give the
// centre's depth (0.6 m below the ground at up = 0) and a net current of 0,
// each within three sigma; both lines of each group's pair carry the
// conductor's number, the track says it is a pair's net current and centre
// depth, and its cover finding (under a 0.8 m minimum, as codes state cover,
// e.g. NEC Table 300.5) is conductor 2's, naming the cores' unknown spacing,
// with no lone finding about the pair besides. results.csv gives both lines
// conductor 2 and the GeoJSON a track line for it. Each group's AC net
// current, an RMS, is not negative (turning a pair whose net current has no
// phase along the route negated it).
func TestPairBesideCableFollowed(t *testing.T) {
	const pairDepth = 0.6
	fits := pairBesideCableFits(t, 1, pairDepth)
	d, err := Build(Document{Title: "Sallow Hythe feeder"}, fits, &BuildSettings{MinCover: 0.8})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) != 1 {
		t.Fatalf("%d further conductors, want the pair alone", len(d.Conductors))
	}
	tr := &d.Conductors[0]
	if tr.Number != 2 || !tr.Route.PairNet {
		t.Fatalf("conductor %d, pair_net %v: want conductor 2, a pair", tr.Number, tr.Route.PairNet)
	}
	if len(tr.Route.Stations) != len(fits) {
		t.Errorf("conductor 2 has %d stations, want one per traverse (%d)", len(tr.Route.Stations), len(fits))
	}
	if math.Abs(tr.Offset+2) > 0.1 {
		t.Errorf("conductor 2 lies %.3f m to the right of conductor 1, want 2 m to its left (-2)", tr.Offset)
	}
	for _, s := range tr.Route.Stations {
		if math.Abs(s.Depth-pairDepth) > 3*s.DepthSigma {
			t.Errorf("%s: centre depth %.4f ± %.4f m, want %.1f m within three sigma", s.Key, s.Depth, s.DepthSigma, pairDepth)
		}
		if math.Abs(s.Current) > 3*s.CurrentSigma {
			t.Errorf("%s: net current %.4f ± %.4f A, want 0 within three sigma", s.Key, s.Current, s.CurrentSigma)
		}
	}
	for _, g := range d.Groups {
		p := g.Pair
		if p == nil {
			t.Errorf("%s: no pair", g.Key)
			continue
		}
		if p.NetCurrent < 0 {
			// An RMS; turning the pair along the route turns its phase.
			t.Errorf("%s: AC net current %.4g A, an RMS, is negative", g.Key, p.NetCurrent)
		}
		for _, j := range p.Sources {
			if c := g.Sources[j].Conductor; c != 2 {
				t.Errorf("%s: line %d of the pair is conductor %d, want 2", g.Key, j+1, c)
			}
		}
	}
	head := ConductorSummary(d, tr)
	if !strings.Contains(head, "a go-and-return pair") || !strings.Contains(head, "net current") || !strings.Contains(head, "centre depth") {
		t.Errorf("conductor 2's summary %q does not say it is a pair's net current and centre depth", head)
	}
	var cover *Finding
	for k := range d.Findings {
		f := &d.Findings[k]
		if f.Lone && strings.Contains(f.Message, "go-and-return pair") {
			t.Errorf("the followed pair is still reported as a lone line: %q", f.Message)
		}
		if f.Kind == "shallow-cover" && f.Conductor == 2 {
			cover = f
		}
	}
	if cover == nil {
		t.Fatalf("no shallow-cover finding on conductor 2: %+v", d.Findings)
	}
	t.Log(cover.Message)
	if !strings.HasPrefix(cover.Message, "conductor 2: "+PairTrackNote) || !strings.Contains(cover.Message, PairCoreNote) {
		t.Errorf("conductor 2's cover finding %q: want it to say it is a pair's centre and that a core may lie shallower", cover.Message)
	}
	if c := cover.Values[0]; c.Name != "cover" || math.Abs(c.Value-pairDepth) > 3*c.Sigma+0.003 {
		t.Errorf("cover finding's cover %+v, want %.1f m within three sigma", c, pairDepth)
	}
	if lc := LeastCover(d); !strings.Contains(lc, "the centre of conductor 2, a go-and-return pair") || !strings.Contains(lc, PairCoreNote) ||
		strings.Contains(lc, "model artefact") {
		t.Errorf("least cover %q: want conductor 2's centre, a pair, with the note on the cores and no doubt from its net current", lc)
	}

	var b bytes.Buffer
	if err := WriteCSV(&b, d); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	pairRows := 0
	for _, r := range rows[1:] {
		if r[col["pair_net_current_a"]] == "" {
			continue
		}
		pairRows++
		if r[col["conductor"]] != "2" {
			t.Errorf("results.csv: %s source %s, a line of the pair, is conductor %q, want 2", r[col["group"]], r[col["source"]], r[col["conductor"]])
		}
	}
	if pairRows != 2*len(fits) {
		t.Errorf("results.csv: %d rows of pair lines, want %d", pairRows, 2*len(fits))
	}

	line := false
	for _, f := range geoFeatures(t, d) {
		if f.Geometry.Type == "LineString" && f.Properties["conductor"] == 2.0 {
			line = true
		}
	}
	if !line {
		t.Error("GeoJSON: no track line for conductor 2")
	}
}
