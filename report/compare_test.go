package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// kestrelDoc simulates testdata/scenarios/kestrel-moor-step.toml (the
// invented Kestrel Moor gas spur: 1.8 A of CP current, 0.30 A leaving at a
// coating defect between T13 and T14) with seed, an exact sensor (its
// soft-iron matrix taken out), the scenario changed by edit, fits every
// traverse as scenarioDoc does and builds the document.
func kestrelDoc(t *testing.T, seed int64, edit func(*simulate.Scenario)) (*Document, *simulate.Scenario) {
	t.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "kestrel-moor-step.toml"))
	if err != nil {
		t.Fatal(err)
	}
	sc.Seed = seed
	sc.Sensor.Matrix = nil
	if edit != nil {
		edit(sc)
	}
	back := throughJSON(t, simulatedDoc(t, sc))
	return back, sc
}

// throughJSON returns d written as results.json and read back, as
// compare reads it.
func throughJSON(t *testing.T, d *Document) *Document {
	t.Helper()
	var b bytes.Buffer
	if err := WriteJSON(&b, d); err != nil {
		t.Fatal(err)
	}
	back, err := ReadJSON(&b, "results.json")
	if err != nil {
		t.Fatal(err)
	}
	return back
}

// scaleCurrents multiplies every current of sc by f (a rectifier set
// differently: the coating's leakage scales with the current it drives).
func scaleCurrents(f float64) func(*simulate.Scenario) {
	return func(sc *simulate.Scenario) {
		for i := range sc.Conductors {
			sc.Conductors[i].Current *= f
			for k := range sc.Conductors[i].Currents {
				sc.Conductors[i].Currents[k] *= f
			}
		}
	}
}

// kestrelTruth returns, per traverse key, the scenario's current and depth
// where the traverse crosses the pipe: the segment (between the vertices
// every 20 m) whose east span holds the traverse's crossing, its depth
// interpolated along it. The traverses cross the pipe's first leg near
// its vertices' midpoints, 20 m apart from 0 m east (T01) on.
func kestrelTruth(t *testing.T, d *Document, sc *simulate.Scenario) map[string][2]float64 {
	t.Helper()
	var c simulate.Conductor
	for _, x := range sc.Conductors {
		if len(x.Currents) > 0 {
			c = x
		}
	}
	out := map[string][2]float64{}
	for _, st := range d.Route.Stations {
		e := st.Point[0]
		for i := 1; i < len(c.Vertices); i++ {
			a, b := c.Vertices[i-1], c.Vertices[i]
			if e >= a[0] && e <= b[0] {
				w := (e - a[0]) / (b[0] - a[0])
				out[st.Key] = [2]float64{c.Currents[i-1], -(a[2] + w*(b[2]-a[2]))}
			}
		}
	}
	return out
}

// TestCompareFindsPlantedChanges: two walks of the Kestrel Moor spur with
// different noise (seeds 1 and 2). In the second the coating defect
// between T13 and T14 lets 0.5 A go instead of 0.3 A (0.2 A less current
// past it) and the pipe was re-laid 0.4 m shallower at the vertices at
// 90 m and 110 m (the segment under T06 0.4 m shallower throughout, those
// under T05 and T07 0.2 m at their middles). The comparison must find
// exactly these: a current change at every station past the defect, each
// within 3 sigma of the scenario's change, and at none before it; a step
// of the ratio NEW/OLD between T13 and T14 and no level change; the step
// at the defect grown by 0.2 A within 3 sigma, and no other step new,
// gone or changed; a cover change at T05, T06 and T07, each within 3
// sigma (and 1.5 cm, the model's error on a dipping pipe) of the
// scenario's, and at no other station. The truth is the scenario's own
// currents and vertices, which the forward model (checked against
// Biot-Savart's published values in inverse/simulate) turns into the
// readings.
func TestCompareFindsPlantedChanges(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 42 traverses")
	}
	old, oldSc := kestrelDoc(t, 1, nil)
	newDoc, newSc := kestrelDoc(t, 2, func(sc *simulate.Scenario) {
		lowerFrom(sc, 13, 0.2)
		for i := range sc.Conductors {
			c := &sc.Conductors[i]
			for k := range c.Vertices {
				if x := c.Vertices[k][0]; math.Abs(x-89.89) < 0.1 || math.Abs(x-109.86) < 0.1 {
					c.Vertices[k][2] += 0.4
				}
			}
		}
	})
	c, err := Compare(old, newDoc, "old/results.json", "new/results.json", CompareSettings{MinCurrentChange: 0.05, MinCoverChange: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	ot, nt := kestrelTruth(t, old, oldSc), kestrelTruth(t, newDoc, newSc)
	if len(c.Conductors) != 1 || c.Conductors[0].MatchedBy != "chainage" {
		t.Fatalf("conductors %+v, want conductor 1 matched by chainage", c.Conductors)
	}
	cc := c.Conductors[0]
	if len(cc.Stations) != len(old.Route.Stations) || len(cc.OldOnly)+len(cc.NewOnly) != 0 {
		t.Errorf("%d stations matched of %d, unmatched %v %v", len(cc.Stations), len(old.Route.Stations), cc.OldOnly, cc.NewOnly)
	}
	var curFlags, covFlags []string
	for _, s := range cc.Stations {
		dI := nt[s.NewKey][0] - ot[s.OldKey][0]
		dD := nt[s.NewKey][1] - ot[s.OldKey][1]
		if s.CurrentFlag {
			curFlags = append(curFlags, s.OldKey)
			if !(math.Abs(s.CurrentChange-dI) <= 3*s.CurrentSigma) {
				t.Errorf("%s: current change %.4f ± %.4f A, scenario %.4f A", s.OldKey, s.CurrentChange, s.CurrentSigma, dI)
			}
		}
		if s.CoverFlag {
			covFlags = append(covFlags, s.OldKey)
			if !(math.Abs(*s.CoverChange-dD) <= 3**s.CoverSigma+0.015) {
				t.Errorf("%s: cover change %.4f ± %.4f m, scenario %.4f m", s.OldKey, *s.CoverChange, *s.CoverSigma, dD)
			}
		}
		if s.BeyondLevel != nil {
			t.Errorf("%s: measured beyond a level %.4f that did not change", s.OldKey, cc.Ratio.Level)
		}
	}
	if got := strings.Join(curFlags, " "); got != "T14 T15 T16 T17 T18 T19 T20 T21" {
		t.Errorf("current changes flagged at %q, want every station past the defect, T14-T21", got)
	}
	if got := strings.Join(covFlags, " "); got != "T05 T06 T07" {
		t.Errorf("cover changes flagged at %q, want T05 T06 T07", got)
	}
	r := cc.Ratio
	if r == nil || r.LevelApplied || r.Constant || r.Step == nil || r.Step.FromKey != "T13" || r.Step.ToKey != "T14" {
		t.Fatalf("ratio profile %+v, want a step between T13 and T14 and no level change", r)
	}
	if !(math.Abs(r.Step.CurrentA+0.2) < 0.02) {
		t.Errorf("the ratio's step means %.4f A, want about -0.2 A", r.Step.CurrentA)
	}
	var steps []string
	for _, sp := range c.Steps {
		steps = append(steps, sp.Status)
		if sp.Status == "grown" {
			if sp.ChainageFrom > 250 || sp.ChainageTo < 240 {
				t.Errorf("grown step at %.1f-%.1f m, the defect is at 250 m between T13 (240 m) and T14", sp.ChainageFrom, sp.ChainageTo)
			}
			if !(math.Abs(*sp.Change-0.2) <= 3**sp.ChangeSigma) {
				t.Errorf("step grown by %.4f ± %.4f A, want 0.2 A", *sp.Change, *sp.ChangeSigma)
			}
		}
	}
	if strings.Join(steps, " ") != "grown" {
		t.Errorf("steps %q, want the defect's alone, grown: %+v", steps, c.Steps)
	}
	kinds := map[string]int{}
	for _, ch := range c.Changes {
		kinds[ch.Kind]++
	}
	want := map[string]int{"cover-change": 3, "ratio-step": 1, "step-grown": 1}
	for k, n := range kinds {
		if want[k] != n {
			t.Errorf("%d changes of kind %s, want %d: %+v", n, k, want[k], c.Changes)
		}
	}
	// The stations past the defect restate its ratio step: listed under
	// it, not one change each.
	for _, ch := range c.Changes {
		if ch.Kind == "ratio-step" && strings.Join(ch.Stations, " ") != "T14 T15 T16 T17 T18 T19 T20 T21" {
			t.Errorf("ratio step lists %v, want T14-T21", ch.Stations)
		}
	}
	// The outputs: the cautions in the text and the JSON; one CSV row per
	// matched station.
	var txt, js, cs bytes.Buffer
	if err := WriteComparisonText(&txt, c); err != nil {
		t.Fatal(err)
	}
	if err := WriteComparisonJSON(&js, c); err != nil {
		t.Fatal(err)
	}
	if err := WriteComparisonCSV(&cs, c); err != nil {
		t.Fatal(err)
	}
	for _, caution := range Cautions {
		if !strings.Contains(txt.String(), caution) {
			t.Errorf("terminal output lacks the caution %q", caution)
		}
	}
	var back struct {
		Cautions []string `json:"cautions"`
		Changes  []Change `json:"changes"`
	}
	if err := json.Unmarshal(js.Bytes(), &back); err != nil || len(back.Cautions) != len(Cautions) || back.Cautions[0] != Cautions[0] || len(back.Changes) != len(c.Changes) {
		t.Errorf("JSON: %v, cautions %q, %d changes", err, back.Cautions, len(back.Changes))
	}
	rows, err := csv.NewReader(&cs).ReadAll()
	if err != nil || len(rows) != 1+len(cc.Stations) {
		t.Errorf("CSV: %v, %d rows for %d stations", err, len(rows), len(cc.Stations))
	}
}

// TestCompareScaledCurrent: the same spur walked again with the rectifier
// set 15% higher (every current, the defect's loss too, 1.15 times the
// first walk's). The ratio NEW/OLD is one factor along the route, within
// 3 sigma of 1.15, with no step; the stations' changes beyond that factor
// flag nothing, the defect's step is unchanged beyond the factor, and no
// cover changes.
func TestCompareScaledCurrent(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 42 traverses")
	}
	old, _ := kestrelDoc(t, 1, nil)
	newDoc, _ := kestrelDoc(t, 2, scaleCurrents(1.15))
	c, err := Compare(old, newDoc, "a", "b", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	r := c.Conductors[0].Ratio
	if r == nil || !r.LevelApplied || !r.Constant || !(math.Abs(r.Level-1.15) <= 3*r.LevelSigma) {
		t.Fatalf("ratio profile %+v, want a constant level within 3 sigma of 1.15", r)
	}
	raw := 0
	for _, s := range c.Conductors[0].Stations {
		if math.Abs(s.CurrentZ) > 3 && math.Abs(s.CurrentChange) >= c.Conductors[0].MinCurrentChangeA {
			raw++
		}
		if s.CurrentFlag || s.CoverFlag {
			t.Errorf("%s flagged: current %+.4f ± %.4f beyond the level, cover %+.4f", s.OldKey, *s.BeyondLevel, *s.BeyondLevelSigma, *s.CoverChange)
		}
	}
	// Read as they are, the currents changed at every station: the level
	// is what keeps them from being losses everywhere.
	if raw != len(c.Conductors[0].Stations) {
		t.Errorf("%d of %d stations changed before the level was taken out, want all", raw, len(c.Conductors[0].Stations))
	}
	for _, ch := range c.Changes {
		if ch.Kind != "level-change" {
			t.Errorf("change %s: %s", ch.Kind, ch.Message)
		}
	}
	if len(c.Steps) != 1 || c.Steps[0].Status != "unchanged" {
		t.Errorf("steps %+v, want the defect's, unchanged beyond the level", c.Steps)
	}
}

// TestCompareRefusals: surveys that are not one route in one frame are
// refused, naming both files and what differs.
func TestCompareRefusals(t *testing.T) {
	base := fenwickLane(false)
	for _, c := range []struct {
		name string
		edit func(*Document)
		want string
	}{
		{"modes", func(d *Document) { d.Signal = Signal{Mode: SignalAC, FrequencyHz: 50} }, "OLD is DC and NEW is AC"},
		{"origin", func(d *Document) { d.Frame.Origin = &Origin{Lat: 52.4719, Lon: 0.1623} }, "only in local metres"},
		{"no common station", func(d *Document) {
			for i := range d.Route.Stations {
				d.Route.Stations[i].Point[0] += 500
				d.Route.Stations[i].Chainage += 500
			}
		}, "no station of conductor 1"},
		{"no route", func(d *Document) { d.Route = nil }, "has no route"},
	} {
		nd := fenwickLane(false)
		c.edit(nd)
		_, err := Compare(base, nd, "march/results.json", "june/results.json", CompareSettings{})
		var ce *CompareError
		if !errors.As(err, &ce) || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "march/results.json") || !strings.Contains(err.Error(), "june/results.json") {
			t.Errorf("%s: %v, want a refusal naming both files and %q", c.name, err, c.want)
		}
	}
}

// TestCompareReprojectsOrigin: the same survey placed about an origin 30 m
// further north (a re-walk whose log starts elsewhere) matches station
// for station once NEW's positions are taken into OLD's frame, and
// nothing changed.
func TestCompareReprojectsOrigin(t *testing.T) {
	old := fenwickLane(true)
	nd := fenwickLane(true)
	dLat := 30 / 6371000.0 * 180 / math.Pi
	nd.Frame.Origin.Lat += dLat
	for i := range nd.Route.Stations {
		nd.Route.Stations[i].Point[1] -= 30
	}
	// Its chainage measured from another start: matched in plan.
	for i := range nd.Route.Stations {
		nd.Route.Stations[i].Chainage += 7
	}
	c, err := Compare(old, nd, "a", "b", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	cc := c.Conductors[0]
	used := 0
	for _, s := range old.Route.Stations {
		if s.Used {
			used++
		}
	}
	if cc.MatchedBy != "plan" || len(cc.Stations) != used || used < 10 {
		t.Fatalf("matched by %s, %d of %d used stations", cc.MatchedBy, len(cc.Stations), used)
	}
	var seps []float64
	for _, s := range cc.Stations {
		seps = append(seps, s.Separation)
		if s.CurrentChange != 0 || s.OldKey != s.NewKey {
			t.Errorf("%s matched with %s, change %g", s.OldKey, s.NewKey, s.CurrentChange)
		}
	}
	sort.Float64s(seps)
	if seps[len(seps)-1] > 0.05 {
		t.Errorf("stations %.3f m apart after reprojection, want the same place", seps[len(seps)-1])
	}
	for _, ch := range c.Changes {
		t.Errorf("change in an unchanged survey: %s", ch.Message)
	}
}

// TestCompareHeldSigmaJSON: a station whose current and cover sigmas are 0
// (held, not estimated) gave a z-score of ±Inf, which encoding/json
// refuses: the JSON is written, the change not judged against a sigma.
func TestCompareHeldSigmaJSON(t *testing.T) {
	old, nd := fenwickLane(false), fenwickLane(false)
	for _, d := range []*Document{old, nd} {
		s := &d.Route.Stations[2]
		s.CurrentSigma, s.DepthSigma = 0, 0
		if s.CoverSigma != nil {
			z := 0.0
			s.CoverSigma = &z
		}
	}
	nd.Route.Stations[2].Current += 5
	c, err := Compare(old, nd, "a", "b", CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteComparisonJSON(&b, c); err != nil {
		t.Fatalf("JSON with a held sigma: %v", err)
	}
	for _, s := range c.Conductors[0].Stations {
		if s.OldKey == old.Route.Stations[2].Key && (s.CurrentZ != 0 || s.CurrentFlag) {
			t.Errorf("%s: z %g, flagged %v, want a change not judged against a sigma of 0", s.OldKey, s.CurrentZ, s.CurrentFlag)
		}
	}
}

// lowerFrom plants a loss in a scenario: every conductor's current from
// segment k0 on is lowered by amount amperes.
func lowerFrom(sc *simulate.Scenario, k0 int, amount float64) {
	for i := range sc.Conductors {
		c := &sc.Conductors[i]
		for k := k0; k < len(c.Currents); k++ {
			c.Currents[k] -= amount
		}
	}
}
