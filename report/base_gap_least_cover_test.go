package report

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
	"undercurrent/inverse/simulate"
)

// TestBaseGapKeepsLeastCover: a group marked only for a gap in the base
// record (its Problem the base-gap mark, as locate adds it after Build,
// cmd/undercurrent basegaps.go) has a sound fit; the base correction under
// it is what needs review. The least-cover headline must keep a further
// line seen there and must not call conductor 1's cover there the cover of
// a "poor or ambiguous" fit. Simulated truth: the Harrow Fen crossing
// (testdata/scenarios/crossing-service.toml: a 30 A feeder under 1.00 m
// of cover, a 10 A service crossing it under 0.35 m) with traverses every
// 8 m from chainage 2 m, so that the service is seen at two traverses
// only and no conductor follows it. Before, the headline dropped the
// service's 0.35 m and named conductor 1's least cover "from a fit that
// may not describe the conductor there (its traverse's fit is poor or
// ambiguous ...)".
func TestBaseGapKeepsLeastCover(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 8 traverses")
	}
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "crossing-service.toml"))
	if err != nil {
		t.Fatal(err)
	}
	sc.Survey.Count, sc.Survey.Spacing, sc.Survey.FirstAt = 8, 8, 2
	if err := sc.Validate(); err != nil { // lays the traverses again
		t.Fatal(err)
	}
	// Depths below the sensors, 0.3 m above the ground, as locate
	// --sensor-height 0.3 fits them.
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	byKey, order := groupProblems(s)
	var fits []Fit
	for _, k := range order {
		p := byKey[k]
		res, err := inverse.FitLines(p, &inverse.Settings{})
		fits = append(fits, Fit{Key: k, Problem: p, Result: res, Err: err, MeasuredNoise: secondDiffNoise(p.Fields)})
	}
	d, err := Build(Document{}, fits, &BuildSettings{SensorHeight: 0.3, MinCover: 0.9})
	if err != nil {
		t.Fatal(err)
	}
	const serviceCover = 0.35
	before := LeastCover(d)
	l, ok := d.shallowLoneLine()
	if !ok || math.Abs(l.cover-serviceCover) > 3*l.sigma+0.02 {
		t.Fatalf("without a base gap the headline's further line is %+v (ok %v), want the service under %.2f m: %q", l, ok, serviceCover, before)
	}
	// Mark every group for a base gap, as locate does.
	var keys []string
	for i := range d.Groups {
		g := &d.Groups[i]
		if !g.OK || g.Problem != "" {
			continue
		}
		g.Problem = BaseGapMark + " 10 of 121 readings corrected by a straight line bridging 80 s of the base record (7 base readings missing; its error about 0.099 nT RMS, in no sigma): review"
		keys = append(keys, g.Key)
	}
	if len(keys) < 4 {
		t.Fatalf("only %d sound groups to mark: %v", len(keys), keys)
	}
	d.Findings = append(d.Findings, Finding{Severity: string(route.SeverityCaution), Kind: "base-gap", Groups: keys, Message: "base gap: review"})
	after := LeastCover(d)
	if strings.Contains(after, "poor or ambiguous") {
		t.Errorf("a base-gap group called poor or ambiguous: %q", after)
	}
	l2, ok := d.shallowLoneLine()
	if !ok || l2.key != l.key || math.Abs(l2.cover-l.cover) > 1e-9 {
		t.Errorf("with the base gap the headline's further line is %+v (ok %v), want %+v: %q", l2, ok, l, after)
	}
	if !strings.Contains(after, "a further line that no conductor follows") || !strings.Contains(after, "marked for review") {
		t.Errorf("the headline drops the service or does not say its traverse is marked for review: %q", after)
	}
}
