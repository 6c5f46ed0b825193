package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// The Kestrel Moor spur's current per segment (kestrel-moor-step.toml):
// segment k runs between vertices k and k+1; vertex k >= 1 lies at
// 10 + 20 (k-1) m east, and traverse T(n) at 20 (n-1) m crosses segment
// n-1. The scenario's coating defect takes 0.3068 A off segments 13 on.
const kestrelDefectA = 1.7156 - 1.4088

// edits applies each edit to the scenario in turn.
func edits(fs ...func(*simulate.Scenario)) func(*simulate.Scenario) {
	return func(sc *simulate.Scenario) {
		for _, f := range fs {
			f(sc)
		}
	}
}

// noDefect mends the spur's coating defect: the current decays smoothly.
func noDefect(sc *simulate.Scenario) {
	for i := range sc.Conductors {
		for k := 13; k < len(sc.Conductors[i].Currents); k++ {
			sc.Conductors[i].Currents[k] += kestrelDefectA
		}
	}
}

// leakFrom makes a new leak of a amperes at vertex k0 (segments k0 on
// carry a less).
func leakFrom(k0 int, a float64) func(*simulate.Scenario) {
	return func(sc *simulate.Scenario) {
		for i := range sc.Conductors {
			for k := k0; k < len(sc.Conductors[i].Currents); k++ {
				sc.Conductors[i].Currents[k] -= a
			}
		}
	}
}

// reverseRoute turns d's route as a walk from the far end would give it:
// chainage measured from the other end, directions and DC currents
// turned, the stations in the new chainage order; current-step findings'
// chainages mapped the same way.
func reverseRoute(d *Document) {
	st := d.Route.Stations
	l := st[len(st)-1].Chainage
	for i, j := 0, len(st)-1; i < j; i, j = i+1, j-1 {
		st[i], st[j] = st[j], st[i]
	}
	for i := range st {
		st[i].Chainage = l - st[i].Chainage
		for k := range st[i].Direction {
			st[i].Direction[k] = -st[i].Direction[k]
		}
		st[i].Current = -st[i].Current
		if st[i].CurrentFirstWalk != nil {
			v := -*st[i].CurrentFirstWalk
			st[i].CurrentFirstWalk = &v
		}
	}
	for i := range d.Findings {
		f := &d.Findings[i]
		f.ChainageFrom, f.ChainageTo = l-f.ChainageTo, l-f.ChainageFrom
	}
}

// TestCompareLevelFromUpstream: the spur (its defect mended) walked again
// after the rectifier was set 30% higher and a new 0.4 A leak opened. The
// supply's factor is 1.30 wherever the leak lies: the stations upstream of
// it read 1.30 and those past it 1.30 less the leak's share. Before, the
// level was the median station ratio, so a leak in the first half of the
// route (or a partial walk that sees mostly the far side) gave the far
// side's ratio (about 1.07) as the rectifier's factor and flagged every
// upstream station as current gained. Each case must give a level within
// 3 sigma of 1.30, read from upstream; no current change flagged upstream
// of the leak; one ratio step, a loss of about 0.4 A along the flow, with
// the stations past it listed under it rather than one change each. The
// truth is the scenario's own currents, which the forward model (checked
// against Biot-Savart's published values in inverse/simulate) turns into
// the readings.
func TestCompareLevelFromUpstream(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 21 traverses per survey")
	}
	old, _ := kestrelDoc(t, 1, noDefect)
	for _, c := range []struct {
		name   string
		k0     int     // the leak's vertex
		leakM  float64 // its chainage (OLD's), m
		edit   func(*Document)
		minSta int
	}{
		{"leak early", 4, 70, nil, 21},
		{"leak late", 15, 290, nil, 21},
		{"partial walk, far side", 12, 230, func(d *Document) {
			for i := range d.Route.Stations {
				if d.Route.Stations[i].Chainage < 150 {
					d.Route.Stations[i].Used = false
				}
			}
		}, 13},
		{"leak early, walked back", 4, 70, reverseRoute, 21},
	} {
		t.Run(c.name, func(t *testing.T) {
			newDoc, _ := kestrelDoc(t, 2, edits(noDefect, scaleCurrents(1.3), leakFrom(c.k0, 0.4)))
			if c.edit != nil {
				c.edit(newDoc)
			}
			cmp, err := Compare(old, newDoc, "old", "new", CompareSettings{})
			if err != nil {
				t.Fatal(err)
			}
			cc := cmp.Conductors[0]
			if len(cc.Stations) < c.minSta {
				t.Fatalf("%d stations matched, want %d", len(cc.Stations), c.minSta)
			}
			r := cc.Ratio
			if r == nil || r.Step == nil || r.LevelFrom != "upstream" || !r.LevelApplied {
				t.Fatalf("ratio %+v, want a step and the level from upstream", r)
			}
			if !(math.Abs(r.Level-1.3) <= 3*r.LevelSigma) {
				t.Errorf("level %.5f ± %.5f, want 1.30 within 3 sigma (the median's reading %.4f)", r.Level, r.LevelSigma, r.MedianLevel)
			}
			if !(r.Step.ChainageFrom < c.leakM && c.leakM < r.Step.ChainageTo) {
				t.Errorf("ratio step at %.1f-%.1f m, the leak is at %g m", r.Step.ChainageFrom, r.Step.ChainageTo, c.leakM)
			}
			for _, s := range cc.Stations {
				if s.CurrentFlag && s.Chainage < c.leakM {
					t.Errorf("%s at %.1f m, upstream of the leak, flagged: %+.4f A beyond the level", s.OldKey, s.Chainage, *s.BeyondLevel)
				}
			}
			var level, step *Change
			for i, ch := range cmp.Changes {
				switch ch.Kind {
				case "level-change":
					level = &cmp.Changes[i]
				case "ratio-step":
					step = &cmp.Changes[i]
				case "current-change":
					t.Errorf("a current change listed on its own: %s", ch.Message)
				}
			}
			if level == nil || level.Value == nil || level.Sigma == nil || *level.Value != r.Level || level.Unit != "ratio" {
				t.Fatalf("level-change %+v, want the level as its value", level)
			}
			if step == nil || step.Value == nil || step.Sigma == nil || !(math.Abs(*step.Value+0.4) < 0.05) || !strings.Contains(step.Message, "falls") {
				t.Fatalf("ratio-step %+v, want a loss of about 0.4 A along the flow", step)
			}
			// Every flagged station past the leak is listed under the step.
			listed := map[string]bool{}
			for _, k := range step.Stations {
				listed[k] = true
			}
			for _, s := range cc.Stations {
				if s.CurrentFlag && !listed[s.OldKey] {
					t.Errorf("%s flagged and not under the ratio step %v", s.OldKey, step.Stations)
				}
			}
			if len(step.Stations) == 0 {
				t.Errorf("no station listed under the ratio step")
			}
		})
	}
}

// TestCompareLevelFlowUnknown: the leak-early pair read as AC magnitudes
// (no direction of flow): neither side is chosen. The level-change states
// both readings (1.30 before the step, about 1.07 past it, each within 3
// sigma of the scenario's), each station is measured against its own
// side's, and none is flagged. The cause is worded for a mains load.
func TestCompareLevelFlowUnknown(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 21 traverses per survey")
	}
	old, oldSc := kestrelDoc(t, 1, noDefect)
	newDoc, newSc := kestrelDoc(t, 2, edits(noDefect, scaleCurrents(1.3), leakFrom(4, 0.4)))
	for _, d := range []*Document{old, newDoc} {
		d.Signal = Signal{Mode: SignalAC, FrequencyHz: 50}
	}
	cmp, err := Compare(old, newDoc, "old", "new", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	cc := cmp.Conductors[0]
	r := cc.Ratio
	if r == nil || r.Step == nil || r.LevelFrom != "unknown" || !r.SideLevels {
		t.Fatalf("ratio %+v, want a step read from neither side", r)
	}
	// The scenario's ratio past the leak: NEW's over OLD's current at the
	// stations past it, their mean (the decay makes it vary by 0.3%).
	ot, nt := kestrelTruth(t, old, oldSc), kestrelTruth(t, newDoc, newSc)
	var past float64
	var n int
	for _, s := range cc.Stations {
		if s.Chainage > 70 {
			past += nt[s.NewKey][0] / ot[s.OldKey][0]
			n++
		}
		if s.CurrentFlag {
			t.Errorf("%s flagged against a side chosen: %+.4f A", s.OldKey, *s.BeyondLevel)
		}
	}
	past /= float64(n)
	var level *Change
	for i, ch := range cmp.Changes {
		if ch.Kind == "level-change" {
			level = &cmp.Changes[i]
		}
		if ch.Kind == "current-change" {
			t.Errorf("current change listed: %s", ch.Message)
		}
	}
	if level == nil || level.ValuePast == nil || level.Value == nil {
		t.Fatalf("level-change %+v, want both readings", level)
	}
	if !(math.Abs(*level.Value-1.3) <= 3**level.Sigma) || !(math.Abs(*level.ValuePast-past) <= 3**level.SigmaPast+0.003) {
		t.Errorf("readings %.5f ± %.5f and %.5f ± %.5f, want 1.30 and %.4f", *level.Value, *level.Sigma, *level.ValuePast, *level.SigmaPast, past)
	}
	if !strings.Contains(level.Message, "load") || strings.Contains(level.Message, "rectifier") {
		t.Errorf("an AC mains change worded %q, want the load", level.Message)
	}
}

// TestCompareDepthOffset: the spur walked again with every depth 0.12 m
// greater (a sensor height left out of one survey, or the ground given
// differently, moves every depth by one amount) and the pipe lifted
// 0.4 m at the vertex at 110 m (the segments either side, under T06 and
// T07, 0.2 m shallower at their middles: roadworks). Before, all 21
// stations were flagged. The offset must be reported once, within 3 sigma
// (and 1.5 cm, the model's error on a dipping pipe) of +0.12 m, and only
// T06 and T07 flagged, beyond it by the scenario's -0.2 m.
func TestCompareDepthOffset(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 21 traverses per survey")
	}
	old, oldSc := kestrelDoc(t, 1, nil)
	newDoc, newSc := kestrelDoc(t, 2, func(sc *simulate.Scenario) {
		for i := range sc.Conductors {
			c := &sc.Conductors[i]
			for k := range c.Vertices {
				c.Vertices[k][2] -= 0.12
				if math.Abs(c.Vertices[k][0]-109.86) < 0.1 {
					c.Vertices[k][2] += 0.4
				}
			}
		}
	})
	cmp, err := Compare(old, newDoc, "old", "new", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	ot, nt := kestrelTruth(t, old, oldSc), kestrelTruth(t, newDoc, newSc)
	cc := cmp.Conductors[0]
	o := cc.DepthOffset
	if o == nil || !o.Applied || !(math.Abs(o.Offset-0.12) <= 3*o.Sigma+0.015) {
		t.Fatalf("depth offset %+v, want +0.12 m applied", o)
	}
	var flagged []string
	for _, s := range cc.Stations {
		if !s.CoverFlag {
			continue
		}
		flagged = append(flagged, s.OldKey)
		want := nt[s.NewKey][1] - ot[s.OldKey][1] - 0.12
		if !(math.Abs(*s.CoverBeyondOffset-want) <= 3**s.CoverBeyondOffsetSigma+0.015) {
			t.Errorf("%s: %+.4f ± %.4f m beyond the offset, scenario %+.4f m", s.OldKey, *s.CoverBeyondOffset, *s.CoverBeyondOffsetSigma, want)
		}
	}
	if got := strings.Join(flagged, " "); got != "T06 T07" {
		t.Errorf("cover flagged at %q, want T06 T07", got)
	}
	kinds := map[string]int{}
	for _, ch := range cmp.Changes {
		kinds[ch.Kind]++
		if ch.Kind == "depth-offset" && (ch.Value == nil || !strings.Contains(ch.Message, "sensor height")) {
			t.Errorf("depth-offset %+v, want its value and the likely causes", ch)
		}
	}
	if kinds["depth-offset"] != 1 || kinds["cover-change"] != 2 || len(cmp.Changes) != 3 {
		t.Errorf("changes %v, want one depth-offset and two cover changes", kinds)
	}
}

// TestCompareCloserSpacing: NEW walked at 10 m spacing over OLD's 20 m,
// the pipe lifted 0.4 m at the vertex at 110 m, under NEW's T12, which
// has no partner in OLD (between OLD's T06 and T07). NEW's stations
// without a partner are a note, not a change; T12's cover is compared
// with OLD's interpolated between T06 and T07 and flagged, within 3 sigma
// (and 1.5 cm) of the scenario's -0.4 m. Before, T12 was dropped and the
// 20 unmatched stations were listed as a change.
func TestCompareCloserSpacing(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 62 traverses")
	}
	old, _ := kestrelDoc(t, 1, nil)
	newDoc, _ := kestrelDoc(t, 2, func(sc *simulate.Scenario) {
		sc.Survey.Count, sc.Survey.Spacing = 41, 10
		if err := sc.Validate(); err != nil { // lays the traverses out again
			t.Fatal(err)
		}
		for i := range sc.Conductors {
			c := &sc.Conductors[i]
			for k := range c.Vertices {
				if math.Abs(c.Vertices[k][0]-109.86) < 0.1 {
					c.Vertices[k][2] += 0.4
				}
			}
		}
	})
	cmp, err := Compare(old, newDoc, "old", "new", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	cc := cmp.Conductors[0]
	if len(cc.NewOnly) != 20 || len(cc.Between) != 20 {
		t.Errorf("%d of NEW's stations without a partner, %d compared between OLD's; want 20 and 20", len(cc.NewOnly), len(cc.Between))
	}
	var found bool
	for _, ch := range cmp.Changes {
		if ch.Kind == "station-unmatched" {
			t.Errorf("unmatched stations listed as a change: %s", ch.Message)
		}
		if ch.Kind == "cover-change" && len(ch.NewGroups) == 1 && ch.NewGroups[0] == "T12" {
			found = true
			if ch.Value == nil || !(math.Abs(*ch.Value+0.4) <= 3**ch.Sigma+0.015) || !strings.Contains(ch.Message, "between OLD's T06 and T07") {
				t.Errorf("T12's cover change %+v, want -0.4 m against OLD interpolated", ch)
			}
		}
	}
	if !found {
		t.Errorf("NEW's T12 (the lift at 110 m) not among the changes: %+v", cmp.Changes)
	}
	var note bool
	for _, n := range cmp.Notes {
		note = note || strings.Contains(n, "lie between OLD's")
	}
	if !note {
		t.Errorf("notes %q, want the stations between OLD's", cmp.Notes)
	}
}

// TestCompareToleranceRefusal: NEW's traverses 4 m (in plan) from OLD's.
// The refusal names --tolerance, the nearest separation and a tolerance
// that would match them.
func TestCompareToleranceRefusal(t *testing.T) {
	old, nd := fenwickLane(false), fenwickLane(false)
	for i := range nd.Route.Stations {
		p := &nd.Route.Stations[i].Point
		d := nd.Route.Stations[i].Direction
		p[0] += 4 * d[0]
		p[1] += 4 * d[1]
	}
	_, err := Compare(old, nd, "a", "b", CompareSettings{})
	if err == nil || !strings.Contains(err.Error(), "--tolerance") || !strings.Contains(err.Error(), "4.00 m apart in plan") || !strings.Contains(err.Error(), "--tolerance 5") {
		t.Fatalf("error %v, want --tolerance named with the nearest separation, 4.00 m", err)
	}
	if _, err := Compare(old, nd, "a", "b", CompareSettings{Tolerance: 5}); err != nil {
		t.Errorf("with the tolerance it names: %v", err)
	}
}

// TestComparePhantomConductor: NEW holds a further line that a forced
// --count invented: 0.05 A beside conductor 1, its cover above the
// ground, its sources noted "not a buried conductor" by locate. The
// unmatched conductor's change names NEW's conductor in a field, gives
// its current and share, and carries locate's doubts.
func TestComparePhantomConductor(t *testing.T) {
	old, nd := fenwickLane(false), fenwickLane(false)
	tr := Track{Number: 2, Offset: 0.1}
	const doubt = "the line passes above the sensors near the readings' centre (it dips steeply): not a buried conductor; it stands for field the other lines leave unexplained"
	for _, st := range nd.Route.Stations {
		cov := -0.5
		tr.Route.Stations = append(tr.Route.Stations, Station{Key: st.Key, Chainage: st.Chainage, Point: st.Point, Direction: st.Direction,
			Current: 0.05, CurrentSigma: 0.02, Depth: -0.25, DepthSigma: 0.5, Cover: &cov, Used: true})
		for g := range nd.Groups {
			if nd.Groups[g].Key == st.Key {
				nd.Groups[g].Sources = append(nd.Groups[g].Sources, Source{Kind: "line", Current: 0.05, Conductor: 2, Notes: []string{doubt}})
			}
		}
	}
	nd.Conductors = append(nd.Conductors, tr)
	c, err := Compare(old, nd, "a", "b", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	var ch *Change
	for i := range c.Changes {
		if c.Changes[i].Kind == "conductor-unmatched" {
			ch = &c.Changes[i]
		}
	}
	if ch == nil || ch.NewConductor != 2 || ch.Value == nil || math.Abs(*ch.Value-0.05) > 1e-12 {
		t.Fatalf("unmatched conductor %+v, want NEW's conductor 2 with its current", ch)
	}
	if len(ch.Notes) == 0 || !strings.Contains(ch.Notes[0], "not a buried conductor") || !strings.Contains(ch.Message, "not a buried conductor") || !strings.Contains(ch.Message, "%") {
		t.Errorf("unmatched conductor %+v, want locate's doubt and its share", ch)
	}
}

// TestCompareTextFigures: the terminal output prints no sigma of 0 where
// one was estimated ("± 0.0000") and no "OLD - A" for a step OLD lacks;
// the JSON's chainages are rounded to the centimetre and a current
// change's groups are parted into OLD's and NEW's.
func TestCompareTextFigures(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 21 traverses per survey")
	}
	old, _ := kestrelDoc(t, 1, noDefect)
	newDoc, _ := kestrelDoc(t, 2, edits(noDefect, leakFrom(4, 0.4), func(sc *simulate.Scenario) {
		for i := range sc.Conductors {
			sc.Conductors[i].Currents[18] += 0.3 // a lone station (T19)'s current changed
		}
	}))
	cmp, err := Compare(old, newDoc, "old", "new", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	var txt, js bytes.Buffer
	if err := WriteComparisonText(&txt, cmp); err != nil {
		t.Fatal(err)
	}
	for _, bad := range []string{"± 0.0000 ", "± 0.000 ", "OLD - A", "± 0 "} {
		if strings.Contains(txt.String(), bad) {
			t.Errorf("text holds %q:\n%s", bad, txt.String())
		}
	}
	if err := WriteComparisonJSON(&js, cmp); err != nil {
		t.Fatal(err)
	}
	var back struct {
		Changes []map[string]any `json:"changes"`
	}
	if err := json.Unmarshal(js.Bytes(), &back); err != nil {
		t.Fatal(err)
	}
	parted := false
	for _, ch := range back.Changes {
		if v, ok := ch["chainage_m"].(float64); ok && math.Abs(v*100-math.Round(v*100)) > 1e-6 {
			t.Errorf("chainage %v not rounded", v)
		}
		if ch["kind"] == "current-change" {
			parted = ch["old_groups"] != nil && ch["new_groups"] != nil && ch["value"] != nil && ch["sigma"] != nil
		}
	}
	if !parted {
		t.Errorf("no current-change with old_groups, new_groups, value and sigma: %s", js.String())
	}
}
