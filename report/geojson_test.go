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
