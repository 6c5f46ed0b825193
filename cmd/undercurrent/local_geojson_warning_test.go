package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestLocateWarnsGeoJSONWithoutOrigin: RFC 7946 section 4 has every
// GeoJSON position in WGS84 longitude and latitude. A log of local metres
// with no geographic origin gives route.geojson local metres, which a map
// viewer takes for degrees; the file said so only in a top-level member
// a viewer drops, and the run printed "results in ..." without a word
// (found in review). Now locate warns with the results, on stdout with the
// summary and on stderr with --json, and every feature says so in its
// coordinate_note; the same log with its origin written into it gets no
// such warning and WGS84 positions.
func TestLocateWarnsGeoJSONWithoutOrigin(t *testing.T) {
	const warn = "warning: route.geojson holds metres east and north of a local origin, not longitude and latitude"
	dir := t.TempDir()
	local := simulatedLog(t, dir, "line.csv")

	out := filepath.Join(dir, "local")
	summary := mustCLI(t, "locate", "--group-by", "group", "-o", out, local)
	if !strings.Contains(summary, warn) {
		t.Errorf("locate -o of a log without an origin does not warn about route.geojson:\n%s", summary)
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--json", "-o", out, local)
	if code != 0 || !strings.Contains(errOut, warn) {
		t.Errorf("locate --json -o: exit %d, stderr lacks the warning:\n%s", code, errOut)
	}
	var fc struct {
		Frame    string `json:"coordinate_frame"`
		Features []struct {
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	b, err := os.ReadFile(filepath.Join(out, "route.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	if fc.Frame != "local-enu" || len(fc.Features) == 0 {
		t.Fatalf("route.geojson: frame %q, %d features", fc.Frame, len(fc.Features))
	}
	for i, f := range fc.Features {
		if n, _ := f.Properties["coordinate_note"].(string); !strings.Contains(n, "not longitude and latitude") {
			t.Errorf("feature %d (%v) has no coordinate_note: %v", i, f.Properties["feature"], f.Properties["coordinate_note"])
		}
	}

	// Control: the same readings with their origin.
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	s.Origin = &ingest.Geodetic{Lat: 52.4512, Lon: 0.1738, H: 1.5} // the fictional Fenwick Lane
	geo := filepath.Join(dir, "line-geo.csv")
	if err := ingest.WriteSamples(geo, s); err != nil {
		t.Fatal(err)
	}
	summary = mustCLI(t, "locate", "--group-by", "group", "-o", filepath.Join(dir, "geo"), geo)
	if strings.Contains(summary, "route.geojson holds") || !strings.Contains(summary, "results in") {
		t.Errorf("locate of a log with an origin warns about route.geojson, or wrote nothing:\n%s", summary)
	}
	b, err = os.ReadFile(filepath.Join(dir, "geo", "route.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	if fc.Frame != "wgs84" || strings.Contains(string(b), "coordinate_note") {
		t.Errorf("with an origin: frame %q, coordinate_note present %v", fc.Frame, strings.Contains(string(b), "coordinate_note"))
	}
}

// TestLocateWarnsGridCoordinates: a log whose positions are a projected
// grid's eastings and northings (here the simulated line moved to 530 km
// east, 180 km north, as a national grid's or UTM's would be) gets
// route.geojson with those metres, outside RFC 7946's range of degrees
// (section 4: longitude and latitude). The warning had told its user to
// give an origin line, which would take 530 km of easting for metres from
// a nearby point (found in review); it now says the positions look like a
// grid's and to give latitude and longitude. Fails before the change.
func TestLocateWarnsGridCoordinates(t *testing.T) {
	dir := t.TempDir()
	grid := gridLog(t, dir, "grid.csv", nil)
	summary := mustCLI(t, "locate", "--group-by", "group", "-o", filepath.Join(dir, "out"), grid)
	for _, want := range []string{"look like a projected grid", "convert the positions to latitude and longitude", "about 530"} {
		if !strings.Contains(summary, want) {
			t.Errorf("locate of grid coordinates: no %q in the warning:\n%s", want, summary)
		}
	}
	if strings.Contains(summary, "give the log's origin") {
		t.Errorf("locate of grid coordinates still advises an origin line:\n%s", summary)
	}
	// inspect says so too (it said nothing of grid coordinates).
	if insp := mustCLI(t, "inspect", grid); !strings.Contains(insp, "look like a projected grid") {
		t.Errorf("inspect of grid coordinates does not say they look like a grid's:\n%s", insp)
	}
}

// TestLocateRefusesGridCoordinatesUnderOrigin: the same grid eastings and
// northings with an origin line (52.4512 N, 0.1738 E) were placed as
// metres from that point, 560 km away, with no word (found in review:
// UTM under an origin line landed in the Russian Far East, route.geojson
// "wgs84" and valid). An origin line is for metres from a nearby point:
// locate now refuses before the fit, saying so, and inspect says the
// same; a log converted from latitude and longitude about its own first
// reading, tens of metres across, is not refused (the control above).
func TestLocateRefusesGridCoordinatesUnderOrigin(t *testing.T) {
	dir := t.TempDir()
	grid := gridLog(t, dir, "grid-origin.csv", &ingest.Geodetic{Lat: 52.4512, Lon: 0.1738, H: 1.5})
	code, out, errOut := cli(t, "locate", "--group-by", "group", "-o", filepath.Join(dir, "out"), grid)
	if code == 0 {
		t.Fatalf("locate of grid coordinates under an origin line: exit 0\n%s", out)
	}
	for _, want := range []string{"an origin line is for metres east and north from a nearby point", "look like a projected grid", "about 560 km"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("locate's refusal lacks %q:\n%s", want, errOut)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out", "route.geojson")); err == nil {
		t.Error("route.geojson written all the same")
	}
	insp := mustCLI(t, "inspect", grid)
	for _, want := range []string{"an origin line is for metres east and north from a nearby point", "look like a projected grid"} {
		if !strings.Contains(insp, want) {
			t.Errorf("inspect lacks %q:\n%s", want, insp)
		}
	}
}

// gridLog writes single-line.toml's simulated log with its positions moved
// 530 km east and 180 km north, as a projected grid's eastings and
// northings, under origin (none when nil), and gives its path.
func gridLog(t *testing.T, dir, name string, origin *ingest.Geodetic) string {
	t.Helper()
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	for i := range s.X {
		s.X[i] += 530000
		s.Y[i] += 180000
	}
	if origin != nil {
		s.Origin = origin
	}
	path := filepath.Join(dir, name)
	if err := ingest.WriteSamples(path, s); err != nil {
		t.Fatal(err)
	}
	return path
}
