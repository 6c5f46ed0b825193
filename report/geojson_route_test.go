package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"testing"
)

// geoCollection writes d as GeoJSON and decodes it with raw coordinates.
func geoCollection(t *testing.T, d *Document) (top map[string]json.RawMessage, feats []struct {
	Geometry struct {
		Type        string
		Coordinates json.RawMessage
	}
	Properties map[string]any
}) {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(buf.Bytes(), &top); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(top["features"], &feats); err != nil {
		t.Fatal(err)
	}
	return top, feats
}

// TestGeoJSONRouteOnlyUsedStations: the route's line runs through the
// stations the route used and breaks where a fit found no conductor
// (README: route.geojson "holds the fitted route"), so that each station
// is drawn once, at its fitted conductor. RFC 7946 section 3.1.5: a
// MultiLineString's coordinates are an array of LineString coordinate
// arrays, each of two or more positions (section 3.1.4).
func TestGeoJSONRouteOnlyUsedStations(t *testing.T) {
	fits := twoCables(false)
	for _, i := range []int{3, 8, 9} { // no current found at G04, G09 and G10
		s := &fits[i].Result.Sources[0]
		s.Current, s.CurrentSigma = 0.01, 0.2
		s.DepthSigma, s.AzimuthSigma, s.OffsetSigma = 0, 0, 0
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	// The runs of two or more used stations, from the route itself.
	var want [][]Station
	var run []Station
	for k, s := range append(d.Route.Stations, Station{}) {
		if s.Used && k < len(d.Route.Stations) {
			run = append(run, s)
			continue
		}
		if len(run) > 1 {
			want = append(want, run)
		}
		run = nil
	}
	if len(want) != 2 {
		t.Fatalf("fixture: %d runs of used stations, want 2 (G04 failed)", len(want))
	}
	_, feats := geoCollection(t, d)
	points := map[string][2]float64{} // conductor Points by group
	var route *struct {
		Geometry struct {
			Type        string
			Coordinates json.RawMessage
		}
		Properties map[string]any
	}
	for i, f := range feats {
		switch f.Properties["feature"] {
		case "route":
			if route != nil {
				t.Fatal("two route features for one conductor")
			}
			route = &feats[i]
		case "conductor":
			var c [2]float64
			if err := json.Unmarshal(f.Geometry.Coordinates, &c); err != nil {
				t.Fatal(err)
			}
			points[f.Properties["group"].(string)] = c
		}
	}
	if route == nil {
		t.Fatal("no route feature")
	}
	if route.Geometry.Type != "MultiLineString" {
		t.Fatalf("route geometry %s, want a MultiLineString broken at G04", route.Geometry.Type)
	}
	var parts [][][2]float64
	if err := json.Unmarshal(route.Geometry.Coordinates, &parts); err != nil {
		t.Fatal(err)
	}
	if len(parts) != len(want) {
		t.Fatalf("%d parts, want %d", len(parts), len(want))
	}
	n, length := 0, 0.0
	for i, part := range parts {
		if len(part) != len(want[i]) {
			t.Fatalf("part %d has %d positions, want %d", i, len(part), len(want[i]))
		}
		for j, pos := range part {
			s := want[i][j]
			// Each used station once: its route vertex is its conductor Point.
			if p := points[s.Key]; math.Abs(p[0]-pos[0]) > 1e-3 || math.Abs(p[1]-pos[1]) > 1e-3 {
				t.Errorf("route vertex of %s at %v, its conductor Point at %v", s.Key, pos, p)
			}
		}
		n += len(part)
		length += want[i][len(want[i])-1].Chainage - want[i][0].Chainage
	}
	if got := route.Properties["stations"].(float64); int(got) != n {
		t.Errorf("stations %v, want %d drawn", got, n)
	}
	if got := route.Properties["length_m"].(float64); math.Abs(got-length) > 1e-3 {
		t.Errorf("length_m %v, want %.3f (the parts' chainage)", got, length)
	}
	// No failed station's traverse centre is on the line.
	for _, s := range d.Route.Stations {
		if s.Used {
			continue
		}
		for _, part := range parts {
			for _, pos := range part {
				if math.Abs(pos[0]-s.Point[0]) < 1e-3 && math.Abs(pos[1]-s.Point[1]) < 1e-3 {
					t.Errorf("unused station %s is on the route line at %v", s.Key, pos)
				}
			}
		}
	}
}

// TestGeoJSONRouteConductorProperty: every route line carries its
// conductor's number, conductor 1's too, as its Points and findings do
// (README: route.geojson), so that a GIS filtering by conductor
// (ogr2ogr -where "conductor=1") keeps the route's own line; found in
// review: conductor 1's line alone had none.
func TestGeoJSONRouteConductorProperty(t *testing.T) {
	d, err := Build(Document{}, twoCables(true), &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) == 0 {
		t.Fatal("fixture: no second conductor")
	}
	_, feats := geoCollection(t, d)
	seen := map[float64]bool{}
	for _, f := range feats {
		if f.Properties["feature"] != "route" {
			continue
		}
		c, ok := f.Properties["conductor"].(float64)
		if !ok {
			t.Errorf("a route feature has no numeric conductor property: %v", f.Properties["conductor"])
			continue
		}
		seen[c] = true
	}
	for c := 1; c <= 1+len(d.Conductors); c++ {
		if !seen[float64(c)] {
			t.Errorf("no route feature with conductor %d (seen %v)", c, seen)
		}
	}
}

// TestGeoJSONSchemaVersionAndIDs: route.geojson names the schema it was
// written with, as results.json does (schema_version), and every feature
// has an id (RFC 7946 section 3.2: "a commonly used identifier"), unique
// in the file and made of what the feature is and belongs to, so that the
// same run written twice, or a run whose features come in another order,
// keeps each feature's key; found in review: no id, no version.
func TestGeoJSONSchemaVersionAndIDs(t *testing.T) {
	d, err := Build(Document{}, twoCables(true), &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	top, _ := geoCollection(t, d)
	var v int
	if err := json.Unmarshal(top["schema_version"], &v); err != nil || v != SchemaVersion {
		t.Errorf("schema_version = %s, want %d", top["schema_version"], SchemaVersion)
	}
	var buf bytes.Buffer
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			ID         *string
			Properties map[string]any
		}
	}
	if err := json.Unmarshal(buf.Bytes(), &fc); err != nil {
		t.Fatal(err)
	}
	ids := map[string]bool{}
	byKey := map[string]string{} // a conductor Point's group/source -> its id
	for _, f := range fc.Features {
		if f.ID == nil || *f.ID == "" {
			t.Errorf("feature %v has no id", f.Properties["feature"])
			continue
		}
		if ids[*f.ID] {
			t.Errorf("id %q twice", *f.ID)
		}
		ids[*f.ID] = true
		if f.Properties["feature"] == "conductor" {
			byKey[fmt.Sprint(f.Properties["group"], "/", f.Properties["source"])] = *f.ID
		}
	}
	if !ids["route/c1"] || !ids["route/c2"] {
		t.Errorf("no route/c1 and route/c2 among the ids %v", ids)
	}
	// The ids do not hang on the features' order: the same document with
	// its groups reversed gives each conductor Point the same id.
	for i, j := 0, len(d.Groups)-1; i < j; i, j = i+1, j-1 {
		d.Groups[i], d.Groups[j] = d.Groups[j], d.Groups[i]
	}
	buf.Reset()
	if err := WriteGeoJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(buf.Bytes(), &fc); err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, f := range fc.Features {
		if f.Properties["feature"] != "conductor" {
			continue
		}
		n++
		if k := fmt.Sprint(f.Properties["group"], "/", f.Properties["source"]); byKey[k] != *f.ID {
			t.Errorf("conductor Point %s: id %q with the groups reversed, %q before", k, *f.ID, byKey[k])
		}
	}
	if n == 0 {
		t.Error("no conductor Points")
	}
}
