package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// Geodetic check values from DOMAIN.md ("WGS84", verified): about the origin
// (40.137 N, -105.236 E, 1682 m), +0.001 degree of latitude is
// (0, 111.066633, -0.000969) m ENU and +0.001 degree of longitude is
// (85.245398, 0.00048, -0.000569) m. The ENU values carry 1e-6 m, so the
// converted positions agree to about 1e-8 degree.
const geoTol = 2e-8 // degrees; the ENU check values are given to 1 um

func TestGeoJSONWGS84CheckValues(t *testing.T) {
	d := minimalDoc()
	d.Frame.Origin = &Origin{Lat: 40.137, Lon: -105.236, H: 1682}
	d.Groups[0].Sources = []Source{
		{Kind: KindLine, Point: [3]float64{0, 111.066633, -0.000969}, Direction: [3]float64{1, 0, 0}},
		{Kind: KindLine, Point: [3]float64{85.245398, 0.00048, -0.000569}, Direction: [3]float64{0, 1, 0}},
	}
	var buf bytes.Buffer
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Type     string `json:"type"`
		Frame    string `json:"coordinate_frame"`
		Features []struct {
			Type     string `json:"type"`
			Geometry struct {
				Type        string          `json:"type"`
				Coordinates json.RawMessage `json:"coordinates"`
			} `json:"geometry"`
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(buf.Bytes(), &fc); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, buf.String())
	}
	if fc.Type != "FeatureCollection" || fc.Frame != GeoJSONWGS84 || len(fc.Features) != 2 {
		t.Fatalf("collection %q frame %q with %d features", fc.Type, fc.Frame, len(fc.Features))
	}
	// RFC 7946 section 3.1.1: longitude first, then latitude.
	want := [][2]float64{{-105.236, 40.138}, {-105.235, 40.137}}
	for i, f := range fc.Features {
		if f.Type != "Feature" || f.Geometry.Type != "Point" {
			t.Fatalf("feature %d: %s %s, want a Feature with a Point (no span given)", i, f.Type, f.Geometry.Type)
		}
		var c []float64
		if err := json.Unmarshal(f.Geometry.Coordinates, &c); err != nil || len(c) != 2 {
			t.Fatalf("feature %d coordinates %s", i, f.Geometry.Coordinates)
		}
		if math.Abs(c[0]-want[i][0]) > geoTol || math.Abs(c[1]-want[i][1]) > geoTol {
			t.Errorf("feature %d at [%.9f, %.9f], want [lon, lat] = %v", i, c[0], c[1], want[i])
		}
	}
}

func TestGeoJSONValid(t *testing.T) {
	for _, geo := range []bool{false, true} {
		var buf bytes.Buffer
		if err := WriteGeoJSON(&buf, fenwickLane(geo)); err != nil {
			t.Fatal(err)
		}
		var fc map[string]any
		if err := json.Unmarshal(buf.Bytes(), &fc); err != nil {
			t.Fatal(err)
		}
		if _, ok := fc["crs"]; ok {
			t.Error(`"crs" member: RFC 7946 removed it`)
		}
		kinds := map[string]int{}
		for _, f := range fc["features"].([]any) {
			f := f.(map[string]any)
			g := f["geometry"].(map[string]any)
			props := f["properties"].(map[string]any)
			kinds[props["feature"].(string)]++
			var pts [][]any
			switch g["type"] {
			case "Point":
				pts = [][]any{g["coordinates"].([]any)}
			case "LineString":
				for _, p := range g["coordinates"].([]any) {
					pts = append(pts, p.([]any))
				}
				if len(pts) < 2 {
					t.Errorf("LineString with %d positions (RFC 7946 3.1.4 needs two or more)", len(pts))
				}
			default:
				t.Errorf("geometry type %v", g["type"])
			}
			for _, p := range pts {
				if len(p) != 2 {
					t.Fatalf("position %v", p)
				}
				x, y := p[0].(float64), p[1].(float64)
				if geo && (math.Abs(x-0.163) > 0.01 || math.Abs(y-52.472) > 0.01) {
					t.Errorf("position [%g, %g] is not [lon, lat] near the origin (0.1623 E, 52.4719 N)", x, y)
				}
			}
		}
		if kinds["route"] != 1 || kinds["conductor"] != 12 || kinds["finding"] != 3 {
			t.Errorf("features %v, want 1 route, 12 conductors, 3 findings", kinds)
		}
		if !geo {
			if fc["coordinate_frame"] != GeoJSONLocal || !strings.Contains(fc["coordinate_note"].(string), "not WGS84") {
				t.Errorf("local coordinates not marked: %v / %v", fc["coordinate_frame"], fc["coordinate_note"])
			}
		}
	}
}

func minimalDoc() *Document {
	return &Document{
		SchemaVersion:  SchemaVersion,
		Tool:           Tool{Name: "undercurrent", Version: "test"},
		Frame:          Frame{Kind: FrameLocalENU},
		DepthReference: DepthReference{Kind: DepthBelowSensors},
		Signal:         Signal{Mode: SignalDC},
		Groups:         []Group{{Points: 10, OK: true}},
	}
}

// The drum beside the Fenwick Lane cable (dipole_test.go: simulated with
// the point-dipole field of Jackson, Classical Electrodynamics, eq. 5.56)
// appears in the GeoJSON as an "object" Point with the magnitude of its
// moment and its sigma, as its finding gives them, within 4 sigma of the
// true |m| = |(0.5, 0.3, -1.05)| A m^2, and its depth.
func TestGeoJSONObjectMoment(t *testing.T) {
	d, err := Build(Document{}, drumFits(t), &BuildSettings{Noise: drumNoise})
	if err != nil {
		t.Fatal(err)
	}
	var want Value
	for _, f := range d.Findings {
		for _, v := range f.Values {
			if f.Kind == "dipole-anomaly" && v.Name == "moment" {
				want = v
			}
		}
	}
	if want.Sigma <= 0 {
		t.Fatalf("no dipole-anomaly finding with a moment: %+v", d.Findings)
	}
	features := geoFeatures(t, d)
	trueM := math.Sqrt(drumMoment[0]*drumMoment[0] + drumMoment[1]*drumMoment[1] + drumMoment[2]*drumMoment[2])
	var objects int
	for _, f := range features {
		p := f.Properties
		if p["feature"] != "object" {
			continue
		}
		objects++
		m, ok1 := p["moment_a_m2"].(float64)
		ms, ok2 := p["moment_sigma_a_m2"].(float64)
		if !ok1 || !ok2 {
			t.Fatalf("object lacks moment_a_m2 or moment_sigma_a_m2: %v", p)
		}
		if math.Abs(m-want.Value) > 0.01*want.Sigma || math.Abs(ms-want.Sigma) > 1e-5*want.Sigma {
			t.Errorf("object moment %g ± %g, finding %g ± %g", m, ms, want.Value, want.Sigma)
		}
		if math.Abs(m-trueM) > 4*ms {
			t.Errorf("object moment %g ± %g A m^2, true %g", m, ms, trueM)
		}
		if dep, ok := p["depth_m"].(float64); !ok || math.Abs(dep-(-drumPos[2])) > 4*p["depth_sigma_m"].(float64) {
			t.Errorf("object depth %v ± %v, true %g", p["depth_m"], p["depth_sigma_m"], -drumPos[2])
		}
	}
	if objects != 1 {
		t.Errorf("%d object features, want 1", objects)
	}
}

// Without a finding, an object's moment magnitude comes from its vector:
// |(3, 4, 0)| = 5 A m^2, and first-order propagation with axis sigmas
// (0.3, 0.4, 1) gives sqrt((0.6*0.3)^2 + (0.8*0.4)^2 + 0) = sqrt(0.1348)
// = 0.367151 A m^2 (by hand).
func TestGeoJSONObjectMomentFromVector(t *testing.T) {
	d := minimalDoc()
	m, ms := [3]float64{3, 4, 0}, [3]float64{0.3, 0.4, 1}
	d.Groups[0].Sources = []Source{{Kind: KindDipole, Point: [3]float64{1, 2, -0.8}, Depth: 0.8, DepthSigma: 0.05, Moment: &m, MomentSigma: &ms}}
	var buf bytes.Buffer
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"feature":"object"`, `"moment_a_m2":5.000`, `"moment_sigma_a_m2":0.367151`} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("GeoJSON lacks %s:\n%s", want, buf.String())
		}
	}
}

// TestGeoJSONFindingValues: a finding's values are properties a GIS can
// label and filter by, named by the value's key (ValueKey): its name
// and unit in snake case for the keys of this version, a sigma's with
// "_sigma" before the unit.
func TestGeoJSONFindingValues(t *testing.T) {
	for _, tc := range []struct {
		v    Value
		want string
	}{
		{Value{Name: "step", Unit: "A"}, "step_a"},
		{Value{Name: "step sigma", Unit: "A"}, "step_sigma_a"},
		{Value{Name: "location (chainage)", Unit: "m"}, "location_chainage_m"},
		{Value{Name: "reduced chi-square"}, "reduced_chi_square"},
		{Value{Name: "share of the conductor's current", Unit: "%"}, "share_of_the_conductor_s_current_pct"},
		{Value{Name: "trend", Unit: "A/m"}, "trend_a_per_m"},
		// A power joins its unit, as the object feature's moment_a_m2.
		{Value{Name: "moment", Unit: "A m^2"}, "moment_a_m2"},
		{Value{Name: "moment sigma", Unit: "A m^2"}, "moment_sigma_a_m2"},
		{Value{Name: "volume", Unit: "m^3"}, "volume_m3"},
	} {
		got := phraseKey(tc.v.Name, tc.v.Unit)
		if name, ok := strings.CutSuffix(tc.v.Name, " sigma"); ok {
			got = sigmaKey(phraseKey(name, tc.v.Unit), tc.v.Unit)
		}
		if got != tc.want {
			t.Errorf("key of %q in %q = %q, want %q", tc.v.Name, tc.v.Unit, got, tc.want)
		}
	}
	d := fenwickLane(false)
	d.Findings = []Finding{{Kind: "current-step", Severity: "warning", Message: "m",
		Values: []Value{{Name: "step", Value: -9.2, Sigma: 0.34, Unit: "A"}, {Name: "minimum cover", Value: 0.6, Unit: "m"}}}}
	var buf bytes.Buffer
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"step_a":-9.20`, `"step_sigma_a":0.34`, `"minimum_cover_m":0.6`} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("GeoJSON lacks %s:\n%s", want, buf.String())
		}
	}
	// A dipole-anomaly finding's moment is named as the object feature
	// names it, not "moment_a_m_2".
	d.Findings = []Finding{{Kind: "dipole-anomaly", Severity: "caution", Message: "m",
		Values: []Value{{Name: "moment", Value: 1.2, Sigma: 0.01, Unit: "A m^2"}}}}
	buf.Reset()
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"moment_a_m2":1.200`, `"moment_sigma_a_m2":0.01`} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("GeoJSON lacks %s:\n%s", want, buf.String())
		}
	}
	if strings.Contains(buf.String(), "a_m_2") {
		t.Errorf("GeoJSON names a moment a_m_2:\n%s", buf.String())
	}
}
