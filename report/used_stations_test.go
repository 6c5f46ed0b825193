package report

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"
)

// csvRows writes d with write and returns its rows as maps by header name.
func csvRows(t *testing.T, d *Document, write func(*bytes.Buffer, *Document) error) []map[string]string {
	t.Helper()
	var buf bytes.Buffer
	if err := write(&buf, d); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(buf.Bytes(), []byte("\ufeff")))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}

// TestUsedStationsInCSVAndGeoJSON: results.csv and route.geojson say which
// stations entered each conductor's current and cover profile, as
// results.json's route.stations[].used does, and why one was left out.
// In the fixture the route leaves out T11, a magnetised object
// (fenwickLane); in the second, G04's fit finds no current, which breaks
// the route's line into a MultiLineString (RFC 7946 section 3.1.5), and
// the route feature names the station that breaks it.
func TestUsedStationsInCSVAndGeoJSON(t *testing.T) {
	d := fenwickLane(false)
	used := map[string]bool{}
	for _, s := range d.Route.Stations {
		used[s.Key] = s.Used
	}
	if used["T11"] || !used["T10"] {
		t.Fatalf("fixture: T11 used %v, T10 used %v; want false, true", used["T11"], used["T10"])
	}
	for _, row := range csvRows(t, d, func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) }) {
		if row["conductor"] != "1" {
			continue
		}
		if want := strconv.FormatBool(used[row["group"]]); row["used"] != want {
			t.Errorf("results.csv %s: used %q, want %q as results.json", row["group"], row["used"], want)
		}
		if (row["left_out"] != "") == used[row["group"]] {
			t.Errorf("results.csv %s: used %s, left_out %q", row["group"], row["used"], row["left_out"])
		}
	}
	_, feats := geoCollection(t, d)
	seen := 0
	for _, f := range feats {
		p := f.Properties
		if p["feature"] != "conductor" {
			continue
		}
		seen++
		k, _ := p["group"].(string)
		if u, ok := p["used"].(bool); !ok || u != used[k] {
			t.Errorf("route.geojson %s: used %v, want %v as results.json", k, p["used"], used[k])
		}
		if _, has := p["left_out"]; has == used[k] {
			t.Errorf("route.geojson %s: used %v, left_out %v", k, used[k], p["left_out"])
		}
	}
	if seen != len(d.Route.Stations) {
		t.Errorf("%d conductor Points, want %d", seen, len(d.Route.Stations))
	}

	// A station in the middle of the route left out: the line breaks
	// there, and the route feature says where and why.
	fits := twoCables(false)
	s := &fits[3].Result.Sources[0]
	s.Current, s.CurrentSigma = 0.01, 0.2
	s.DepthSigma, s.AzimuthSigma, s.OffsetSigma = 0, 0, 0
	gap, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	_, feats = geoCollection(t, gap)
	found := false
	for _, f := range feats {
		p := f.Properties
		if p["feature"] != "route" {
			continue
		}
		found = true
		if f.Geometry.Type != "MultiLineString" {
			t.Errorf("route is a %s, want a MultiLineString broken at G04", f.Geometry.Type)
		}
		nu, _ := p["not_used"].([]any)
		if len(nu) != 1 || nu[0] != "G04" {
			t.Errorf("route's not_used %v, want [G04]", p["not_used"])
		}
		if note, _ := p["gap_note"].(string); !strings.Contains(note, "G04: the fit failed") {
			t.Errorf("route's gap_note %q does not say why G04 is left out", note)
		}
	}
	if !found {
		t.Fatal("no route feature")
	}
	for _, row := range csvRows(t, gap, func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) }) {
		if row["group"] == "G04" && (row["used"] != "false" || row["left_out"] == "") {
			t.Errorf("results.csv G04: used %q, left_out %q; want false with a reason", row["used"], row["left_out"])
		}
	}
}

// TestGeoJSONFindingConductor: every finding in route.geojson carries the
// conductor findings.csv gives it, 1 for the route's own, so that a GIS
// filter on conductor keeps a conductor's findings with its stations.
func TestGeoJSONFindingConductor(t *testing.T) {
	d, err := Build(Document{Site: "Harrow Fen substation"}, twoCables(true), &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 1.2})
	if err != nil {
		t.Fatal(err)
	}
	var want []string
	for _, row := range csvRows(t, d, func(b *bytes.Buffer, d *Document) error { return WriteFindingsCSV(b, d) }) {
		if row["kind"] == SafetyKind {
			continue // the cautions, which are no finding
		}
		want = append(want, row["conductor"])
	}
	_, feats := geoCollection(t, d)
	var got []string
	for _, f := range feats {
		if f.Properties["feature"] != "finding" {
			continue
		}
		c := ""
		if n, ok := f.Properties["conductor"].(float64); ok {
			c = strconv.Itoa(int(n))
		}
		got = append(got, c)
	}
	if strings.Join(got, ",") != strings.Join(want, ",") {
		t.Errorf("GeoJSON findings' conductors %v, findings.csv's %v", got, want)
	}
	ones := 0
	for _, c := range want {
		if c == "1" {
			ones++
		}
	}
	if ones == 0 || len(want) == ones {
		t.Errorf("fixture: findings on conductors %v, want some on 1 and some on 2", want)
	}
}
