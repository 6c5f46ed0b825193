package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"
)

// TestFurtherConductorChainage: a further conductor's sources carry the
// chainage measured along that conductor, the one its findings and its
// route in results.json give, in results.csv, route.geojson and the HTML
// table, with the group's chainage along the route beside it
// (route_chainage_m). Conductor 2 here is first seen at G04, 30 m along
// the route, so its own chainage there is 0.
func TestFurtherConductorChainage(t *testing.T) {
	fits := twoCables(true)
	for i := 0; i < 3; i++ {
		fits[i].Result.Sources = fits[i].Result.Sources[:1]
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) != 1 {
		t.Fatalf("fixture: %d further conductors, want 1", len(d.Conductors))
	}
	own := map[string]float64{} // conductor 2's chainage by group, from results.json's route
	for _, s := range d.Conductors[0].Route.Stations {
		own[s.Key] = s.Chainage
	}
	route := map[string]float64{}
	for _, g := range d.Groups {
		route[g.Key] = *g.Chainage
	}
	if math.Abs(route["G04"]-own["G04"]) < 1 {
		t.Fatalf("fixture: conductor 2's chainage at G04 is %.3f, the route's %.3f; want them apart", own["G04"], route["G04"])
	}
	near := func(s string, want float64) bool {
		v, err := strconv.ParseFloat(s, 64)
		return err == nil && math.Abs(v-want) <= 1e-3
	}
	n := 0
	for _, r := range readCSV(t, d) {
		want := route[r["group"]]
		if r["conductor"] == "2" {
			want = own[r["group"]]
			n++
		}
		if !near(r["chainage_m"], want) || !near(r["route_chainage_m"], route[r["group"]]) {
			t.Errorf("CSV %s source %s (conductor %q): chainage_m %s, route_chainage_m %s; want %.3f and %.3f",
				r["group"], r["source"], r["conductor"], r["chainage_m"], r["route_chainage_m"], want, route[r["group"]])
		}
	}
	if n != len(own) {
		t.Errorf("%d CSV rows of conductor 2, want %d", n, len(own))
	}
	for _, f := range geoFeatures(t, d) {
		if f.Properties["feature"] != "conductor" {
			continue
		}
		g := f.Properties["group"].(string)
		want := route[g]
		if c, _ := f.Properties["conductor"].(float64); c == 2 {
			want = own[g]
		}
		c, _ := f.Properties["chainage_m"].(float64)
		rc, _ := f.Properties["route_chainage_m"].(float64)
		if math.Abs(c-want) > 1e-3 || math.Abs(rc-route[g]) > 1e-3 {
			t.Errorf("GeoJSON %s conductor %v: chainage_m %v, route_chainage_m %v; want %.3f and %.3f",
				g, f.Properties["conductor"], c, rc, want, route[g])
		}
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	html := buf.String()
	i := strings.Index(html, `<th scope="row" class="stick">G04</th>`)
	if i < 0 {
		t.Fatal("no G04 row in the HTML table")
	}
	row := html[i : i+strings.Index(html[i:], "</tr>")]
	if want := ">" + strconv.FormatFloat(route["G04"], 'f', 1, 64) + "<"; !strings.Contains(row, want) {
		t.Errorf("G04 row %q lacks the route's chainage %s", row, want)
	}
	if want := "2 (" + strconv.FormatFloat(own["G04"], 'f', 1, 64) + " m)"; !strings.Contains(row, want) {
		t.Errorf("G04 row %q lacks conductor 2's own chainage %q", row, want)
	}
}

// TestDepthReferenceNamed: route.geojson and results.csv say what depth_m
// is measured from, in the words results.json uses (its
// depth_reference), for depths below the sensors and below the ground.
func TestDepthReferenceNamed(t *testing.T) {
	for _, kind := range []string{DepthBelowSensors, DepthBelowGround} {
		d := fenwickLane(true)
		d.DepthReference.Kind = kind
		if kind == DepthBelowGround {
			d.DepthReference = DepthReference{Kind: DepthBelowGround, Z: 12.5, GroundSigma: 0.02}
		}
		want, err := json.Marshal(d.DepthReference)
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range readCSV(t, d) {
			if r["depth_m"] != "" && r["depth_reference"] != kind {
				t.Errorf("CSV %s: depth_reference %q, want %q", r["group"], r["depth_reference"], kind)
			}
		}
		top, feats := geoCollection(t, d)
		var got, wantAny any
		if err := json.Unmarshal(top["depth_reference"], &got); err != nil {
			t.Fatalf("GeoJSON depth_reference %s: %v", top["depth_reference"], err)
		}
		json.Unmarshal(want, &wantAny)
		if g, w := mustJSON(t, got), mustJSON(t, wantAny); g != w {
			t.Errorf("GeoJSON depth_reference %s, want results.json's %s", g, w)
		}
		for _, f := range feats {
			if _, ok := f.Properties["depth_m"]; ok && f.Properties["depth_reference"] != kind {
				t.Errorf("GeoJSON %v %v: depth_reference %v, want %q", f.Properties["feature"], f.Properties["group"], f.Properties["depth_reference"], kind)
			}
		}
	}
}

func mustJSON(t *testing.T, v any) string {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestCSVHeldSigmaEmpty: a quantity held rather than fitted (an assumed
// azimuth and dip, sigma 0 in results.json) has an empty sigma cell in
// results.csv, as route.geojson leaves it out, not "0", which would read
// as exact; every sigma cell is empty or positive.
func TestCSVHeldSigmaEmpty(t *testing.T) {
	d := fenwickLane(false)
	s := &d.Groups[4].Sources[0]
	s.AzimuthSigma, s.DipSigma = 0, 0
	s.Unidentifiable = []string{"azimuth", "dip"}
	for _, r := range readCSV(t, d) {
		for k, v := range r {
			if !strings.Contains(k, "sigma") || v == "" {
				continue
			}
			if x, err := strconv.ParseFloat(v, 64); err != nil || !(x > 0) {
				t.Errorf("%s %s = %q: a sigma cell must be empty or positive", r["group"], k, v)
			}
		}
		if r["group"] == "T05" && (r["azimuth_sigma_deg"] != "" || r["dip_sigma_deg"] != "" || r["azimuth_deg"] == "") {
			t.Errorf("T05 azimuth %q ± %q, dip %q ± %q: want the held values with empty sigmas",
				r["azimuth_deg"], r["azimuth_sigma_deg"], r["dip_deg"], r["dip_sigma_deg"])
		}
	}
}

// TestObjectMomentEverywhere: results.csv gives a magnetised object's
// moment as route.geojson does, the Euclidean norm of the moment vector
// with its first-order sigma, and the HTML table its cover as the other
// outputs do, not "–".
func TestObjectMomentEverywhere(t *testing.T) {
	d := fenwickLane(false)
	m := [3]float64{0.4, 0.25, -1.1}
	ms := [3]float64{0.02, 0.02, 0.03}
	g := &d.Groups[10]
	g.Sources = append(g.Sources, Source{
		Kind: KindDipole, Point: [3]float64{g.Centroid[0] + 1, g.Centroid[1], -0.9},
		Depth: 0.9046, DepthSigma: 0.0213, Moment: &m, MomentSigma: &ms,
	})
	norm := math.Sqrt(m[0]*m[0] + m[1]*m[1] + m[2]*m[2])
	var sigma float64
	for a := range m {
		sigma += (m[a] / norm * ms[a]) * (m[a] / norm * ms[a])
	}
	sigma = math.Sqrt(sigma)
	var csvMoment, csvCover string
	for _, r := range readCSV(t, d) {
		if r["kind"] == KindDipole {
			csvMoment, csvCover = r["moment_a_m2"], r["cover_m"]
			if v, err := strconv.ParseFloat(r["moment_a_m2"], 64); err != nil || math.Abs(v-norm) > 1e-3 {
				t.Errorf("CSV moment_a_m2 %q, want %.4f", r["moment_a_m2"], norm)
			}
			if v, err := strconv.ParseFloat(r["moment_sigma_a_m2"], 64); err != nil || math.Abs(v-sigma) > 1e-5 {
				t.Errorf("CSV moment_sigma_a_m2 %q, want %.5f", r["moment_sigma_a_m2"], sigma)
			}
		} else if r["moment_a_m2"] != "" {
			t.Errorf("line source %s has a moment %q", r["group"], r["moment_a_m2"])
		}
	}
	if csvMoment == "" {
		t.Fatal("no dipole row in results.csv")
	}
	for _, f := range geoFeatures(t, d) {
		if f.Properties["feature"] == "object" {
			if v := f.Properties["moment_a_m2"].(float64); strconv.FormatFloat(v, 'f', -1, 64) != strings.TrimRight(strings.TrimRight(csvMoment, "0"), ".") {
				t.Errorf("GeoJSON moment %v, CSV %s", v, csvMoment)
			}
		}
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	html := buf.String()
	i := strings.Index(html, `<th scope="row" class="stick">T11</th>`)
	row := html[i : i+strings.Index(html[i:], "</tr>")]
	cover := PlusMinus(0.9046-d.DepthReference.SensorHeight, 0.0213)
	if !strings.Contains(row, cover) {
		t.Errorf("HTML T11 row %q lacks the object's cover %s (CSV %s)", row, cover, csvCover)
	}
}
