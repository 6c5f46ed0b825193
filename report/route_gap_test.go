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
	"undercurrent/inverse/simulate"
)

// gapScenario is an invented straight 20 A DC cable 1.2 m below the
// ground along the east axis (the Tolley Brook footbridge cable, a
// fixture), crossed by 16 traverses 5 m apart.
const gapScenario = `
name = "tolley-gap"
site = "Tolley Brook footbridge cable"
seed = 3
start = "2026-03-02T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [80.0, 0.0]]
count = 16
spacing_m = 5.0
length_m = 10.0
speed_m_s = 1.0
sample_spacing_m = 0.1
turn_s = 5.0
[[conductor]]
name = "cable"
kind = "line"
point = [0.0, 0.0, -1.2]
direction = [1.0, 0.0, 0.0]
current_a = 20.0
`

// gapDoc simulates gapScenario, leaves out the traverses named in skip
// (as a survey that could not cross a brook would), fits the rest as
// locate does (ground at up = 0) and builds the document with a minimum
// cover, so that the least cover is worded.
func gapDoc(t *testing.T, skip ...string) *Document {
	t.Helper()
	sc, err := simulate.Parse([]byte(gapScenario), "tolley-gap.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	byKey, keys := groupProblems(s)
	left := map[string]bool{}
	for _, k := range skip {
		left[k] = true
	}
	ground := 0.0
	var fits []Fit
	for _, k := range keys {
		if left[k] {
			continue
		}
		p := byKey[k]
		res, err := inverse.FitLines(p, &inverse.Settings{ReferenceZ: &ground})
		fits = append(fits, Fit{Key: k, Problem: p, Result: res, Err: err, MeasuredNoise: secondDiffNoise(p.Fields)})
	}
	if len(fits) != len(keys)-len(skip) {
		t.Fatalf("fixture: %d fits, want %d", len(fits), len(keys)-len(skip))
	}
	d, err := Build(Document{}, fits, &BuildSettings{MinCover: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestRouteGapShown: a survey with no traverse for 30 m (T07-T11 left
// out, six times its 5 m spacing) says so in every output: route.geojson
// draws the stretch as an "unsurveyed gap" feature, with its length and
// the stations either side, instead of a stretch of the route's line;
// results.json lists it in route.gaps; the least cover (terminal and
// HTML) says the cover is not known over it; the HTML summary names it.
// Before, the route's LineString ran straight across with no note and
// "Least cover: ..." was worded as if the whole route had been seen
// (found in review on an HDD bore under a river). Every conductor Point
// carries the dip with its sigma, as results.csv does.
func TestRouteGapShown(t *testing.T) {
	d := gapDoc(t, "T07", "T08", "T09", "T10", "T11")
	gaps := RouteGaps(d.Route)
	if len(gaps) != 1 || gaps[0].From != "T06" || gaps[0].To != "T12" || math.Abs(gaps[0].Length-30) > 0.5 {
		t.Fatalf("gaps %+v, want one of 30 m from T06 to T12", gaps)
	}
	want := "cover not known over 30 m between T06 and T12"
	if lc := LeastCover(d); !strings.Contains(lc, want) {
		t.Errorf("least cover %q lacks %q", lc, want)
	}
	if gs := RouteGapSentence(d); !strings.Contains(gs, "30 m between T06 and T12") {
		t.Errorf("gap sentence %q", gs)
	}
	var page bytes.Buffer
	if err := WriteHTML(&page, d); err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{want, "no station over 30 m between T06 and T12", "Not surveyed: 30 m between T06 and T12"} {
		if !strings.Contains(page.String(), w) {
			t.Errorf("report.html lacks %q", w)
		}
	}
	var js bytes.Buffer
	if err := WriteJSON(&js, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Route struct {
			Gaps []RouteGap `json:"gaps"`
		} `json:"route"`
	}
	if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	if g := doc.Route.Gaps; len(g) != 1 || g[0].From != "T06" || g[0].To != "T12" || math.Abs(g[0].Length-30) > 0.5 || math.Abs(g[0].Spacing-5) > 0.5 {
		t.Errorf("results.json route.gaps %+v", g)
	}

	_, feats := geoCollection(t, d)
	var gapFeats, routes int
	station := map[string]float64{}
	for _, s := range d.Route.Stations {
		station[s.Key] = s.Chainage
	}
	for _, f := range feats {
		p := f.Properties
		switch p["feature"] {
		case "unsurveyed gap":
			gapFeats++
			if p["from_group"] != "T06" || p["to_group"] != "T12" || math.Abs(p["length_m"].(float64)-30) > 0.5 || p["used"] != false {
				t.Errorf("gap feature %v", p)
			}
			if f.Geometry.Type != "LineString" {
				t.Errorf("gap feature is a %s", f.Geometry.Type)
			}
		case "route":
			routes++
			// The route's line must not join T06 to T12: it breaks there.
			if f.Geometry.Type != "MultiLineString" || p["parts"] != float64(2) {
				t.Errorf("route is a %s of %v parts, want a MultiLineString of 2 broken at the gap", f.Geometry.Type, p["parts"])
			}
			if math.Abs(p["length_m"].(float64)-(d.Route.Length-30)) > 0.5 {
				t.Errorf("route length_m %v, want the %.1f m surveyed", p["length_m"], d.Route.Length-30)
			}
		case featureBridge:
			if a, b := station[p["from_group"].(string)], station[p["to_group"].(string)]; a <= station["T06"] && b >= station["T12"] {
				t.Errorf("a %q feature crosses the gap: %v", featureBridge, p)
			}
		case "conductor":
			checkDipProp(t, d, p)
		}
	}
	if gapFeats != 1 || routes != 1 {
		t.Errorf("%d gap features and %d routes, want 1 and 1", gapFeats, routes)
	}
	// The plan view draws the gap dotted, apart from the route's runs.
	if pr := planRoute(d.Route); len(pr.runs) != 2 || len(pr.gaps) != 1 {
		t.Errorf("plan view: %d runs and %d dotted stretches, want 2 and 1", len(pr.runs), len(pr.gaps))
	}
}

// checkDipProp checks that conductor Point p carries its source's dip and
// dip sigma, as results.csv gives them.
func checkDipProp(t *testing.T, d *Document, p map[string]any) {
	t.Helper()
	g := d.groupByKey(p["group"].(string))
	s := g.Sources[int(p["source"].(float64))-1]
	dip, ok := p["dip_deg"].(float64)
	if !ok || math.Abs(dip-s.Dip) > 0.01+s.DipSigma/10 {
		t.Errorf("%s: dip_deg %v, source's %.3f", g.Key, p["dip_deg"], s.Dip)
	}
	if sg, ok := p["dip_sigma_deg"].(float64); s.DipSigma > 0 && (!ok || math.Abs(sg-s.DipSigma) > 1e-5*s.DipSigma) {
		t.Errorf("%s: dip_sigma_deg %v, source's %g", g.Key, p["dip_sigma_deg"], s.DipSigma)
	}
}

// TestRouteGapNoneOnEvenSpacing: the same survey with every traverse
// gives no gap anywhere: no "unsurveyed gap" feature, one unbroken route
// line, no gap words in the least cover or the report, no route.gaps in
// results.json.
func TestRouteGapNoneOnEvenSpacing(t *testing.T) {
	d := gapDoc(t)
	if g := RouteGaps(d.Route); g != nil {
		t.Fatalf("gaps %+v on an even 5 m spacing", g)
	}
	if lc := LeastCover(d); strings.Contains(lc, "not known") {
		t.Errorf("least cover %q", lc)
	}
	var page, js bytes.Buffer
	if err := WriteHTML(&page, d); err != nil {
		t.Fatal(err)
	}
	if err := WriteJSON(&js, d); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(page.String(), "Not surveyed") || strings.Contains(js.String(), `"gaps"`) {
		t.Error("a gap named where there is none")
	}
	_, feats := geoCollection(t, d)
	for _, f := range feats {
		switch f.Properties["feature"] {
		case "unsurveyed gap":
			t.Errorf("gap feature %v", f.Properties)
		case "route":
			if f.Geometry.Type != "LineString" {
				t.Errorf("route is a %s", f.Geometry.Type)
			}
		case "conductor":
			checkDipProp(t, d, f.Properties)
		}
	}
}

// TestRouteGapsRule: RouteGaps on station chainages alone. Traverses
// paced off their pegs by up to a quarter of the spacing, one traverse
// missed (twice the spacing) and repeats of a walked-again route give no
// gap; three traverses in a row missed (four times the spacing) give one,
// and so does a 60 m river between stations 10 m apart; 3 m missed on a
// 1 m survey is under GapMinLength.
func TestRouteGapsRule(t *testing.T) {
	route := func(ch ...float64) *Route {
		r := &Route{}
		for i, c := range ch {
			r.Stations = append(r.Stations, Station{Key: fmt.Sprintf("T%02d", i+1), Chainage: c, Used: true})
		}
		return r
	}
	rng := rand.New(rand.NewPCG(5, 2026))
	var jitter []float64
	for i := 0; i < 31; i++ {
		jitter = append(jitter, 5*float64(i)+1.25*(2*rng.Float64()-1))
	}
	missedOne := append(append([]float64{}, jitter[:10]...), jitter[11:]...)
	var rewalk []float64
	for i := 0; i < 10; i++ {
		rewalk = append(rewalk, 5*float64(i), 5*float64(i)+0.08)
	}
	for name, ch := range map[string][]float64{"paced": jitter, "one missed": missedOne, "walked again": rewalk,
		"1 m, 3 m missed": {0, 1, 2, 3, 6, 7, 8, 9}} {
		if g := RouteGaps(route(ch...)); g != nil {
			t.Errorf("%s: gaps %+v", name, g)
		}
	}
	threeMissed := append(append([]float64{}, jitter[:10]...), jitter[13:]...)
	if g := RouteGaps(route(threeMissed...)); len(g) != 1 || g[0].From != "T10" || g[0].To != "T11" {
		t.Errorf("three missed: gaps %+v", g)
	}
	// Two pitches: 16 traverses 2 m apart over a joint bay, then 5 at 10 m.
	var twoPitch []float64
	for i := 0; i < 16; i++ {
		twoPitch = append(twoPitch, 2*float64(i))
	}
	for i := 1; i <= 5; i++ {
		twoPitch = append(twoPitch, 30+10*float64(i))
	}
	if g := RouteGaps(route(twoPitch...)); g != nil {
		t.Errorf("two pitches: gaps %+v", g)
	}
	// A river in the 10 m stretch of a two-pitch route is still a gap.
	riverTwo := append(append([]float64{}, twoPitch...), 140, 150, 160)
	if g := RouteGaps(route(riverTwo...)); len(g) != 1 || g[0].Length != 60 || g[0].Spacing != 10 {
		t.Errorf("river beyond two pitches: gaps %+v", g)
	}
	river := route(0, 10, 20, 30, 40, 50, 60, 120, 130, 140, 150, 160, 170, 180)
	if g := RouteGaps(river); len(g) != 1 || g[0].From != "T07" || g[0].To != "T08" || g[0].Length != 60 || g[0].Ratio != 6 {
		t.Errorf("river: gaps %+v", g)
	}
}
