package report

import (
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

func TestJSONRoundTrip(t *testing.T) {
	for _, geo := range []bool{false, true} {
		d := fenwickLane(geo)
		var buf bytes.Buffer
		if err := WriteJSON(&buf, d); err != nil {
			t.Fatal(err)
		}
		got, err := ReadJSON(&buf, "results.json")
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got, profilesRounded(d)) {
			t.Errorf("geo=%v: document changed in a JSON round trip", geo)
		}
	}
}

// profilesRounded is d as results.json gives it back: the same, but for
// its groups' profiles, plot data written rounded (positions and offsets
// to 1 mm, fields to 0.01 nT; README).
func profilesRounded(d *Document) *Document {
	c := *d
	c.Groups = make([]Group, len(d.Groups))
	copy(c.Groups, d.Groups)
	for i := range c.Groups {
		if pr := c.Groups[i].Profile; pr != nil {
			c.Groups[i].Profile = pr.rounded()
		}
	}
	return &c
}

// The names issue 5 fixes for the result document.
func TestJSONFieldNames(t *testing.T) {
	d := fenwickLane(true)
	ph, phs := 12.5, 0.3
	d.Groups[0].Sources[0].Phase, d.Groups[0].Sources[0].PhaseSigma = &ph, &phs
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(buf.Bytes(), &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"schema_version", "groups", "findings", "depth_reference", "frame", "tool", "inputs", "calibration", "base_station", "route"} {
		if _, ok := m[k]; !ok {
			t.Errorf("top level lacks %q", k)
		}
	}
	g := m["groups"].([]any)[0].(map[string]any)
	for _, k := range []string{"key", "points", "rms_nt", "background_nt", "sources"} {
		if _, ok := g[k]; !ok {
			t.Errorf("group lacks %q", k)
		}
	}
	if bg := g["background_nt"].([]any); len(bg) != 3 {
		t.Errorf("background_nt has %d elements, want [east, north, up]", len(bg))
	}
	s := g["sources"].([]any)[0].(map[string]any)
	for _, k := range []string{"kind", "point_m", "direction", "current_a", "current_sigma_a", "phase_deg", "depth_m", "depth_sigma_m"} {
		if _, ok := s[k]; !ok {
			t.Errorf("source lacks %q", k)
		}
	}
	if s["kind"] != "line" {
		t.Errorf("kind %v, want line", s["kind"])
	}
	// DC sources carry no phase.
	s1 := m["groups"].([]any)[1].(map[string]any)["sources"].([]any)[0].(map[string]any)
	if _, ok := s1["phase_deg"]; ok {
		t.Errorf("DC source has phase_deg")
	}
	if ref := m["depth_reference"].(map[string]any)["kind"]; ref != DepthBelowSensors {
		t.Errorf("depth_reference.kind %v", ref)
	}
}

func TestEmptyArraysNotNull(t *testing.T) {
	d := &Document{SchemaVersion: SchemaVersion, Frame: Frame{Kind: FrameLocalENU},
		DepthReference: DepthReference{Kind: DepthBelowSensors}, Signal: Signal{Mode: SignalDC},
		Groups: []Group{{Key: ""}}}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(buf.Bytes(), []byte("null")) {
		t.Errorf("JSON has null:\n%s", buf.String())
	}
	if d.Findings != nil || d.Groups[0].Sources != nil {
		t.Errorf("WriteJSON modified the document")
	}
}

func TestValidateErrors(t *testing.T) {
	tests := []struct {
		name string
		edit func(d *Document)
		want string
	}{
		{"nan current", func(d *Document) { d.Groups[2].Sources[0].Current = math.NaN() }, `groups[2] (key "T03").sources[0].current_a is NaN`},
		{"inf finding", func(d *Document) { d.Findings[0].Values[0].Sigma = math.Inf(1) }, "findings[0].values[0].sigma is +Inf"},
		{"profile lengths", func(d *Document) { d.Groups[1].Profile.Offset = d.Groups[1].Profile.Offset[1:] }, `groups[1] (key "T02").profile: 21 positions, 20 offsets`},
		{"severity", func(d *Document) { d.Findings[0].Severity = "urgent" }, `findings[0].severity "urgent"`},
		{"schema", func(d *Document) { d.SchemaVersion = 99 }, "schema_version 99 is not supported"},
		{"depth ref", func(d *Document) { d.DepthReference.Kind = "sea level" }, `depth_reference.kind "sea level"`},
		{"origin", func(d *Document) { d.Frame.Origin = &Origin{Lat: 152, Lon: 0} }, "not a latitude and longitude"},
		{"ground sigma", func(d *Document) { d.DepthReference.GroundSigma = -0.02 }, "depth_reference.ground_sigma_m -0.02"},
		{"conductor number", func(d *Document) { d.Conductors = []Track{{Number: 1}} }, "conductors[0].number 1"},
		{"conductor twice", func(d *Document) { d.Conductors = []Track{{Number: 2}, {Number: 2}} }, "conductors[1].number 2"},
		{"finding's conductor", func(d *Document) { d.Findings[0].Conductor = 3 }, "findings[0].conductor 3 names no conductor"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d := fenwickLane(false)
			tc.edit(d)
			for name, write := range map[string]func(*bytes.Buffer, *Document) error{
				"json": func(b *bytes.Buffer, d *Document) error { return WriteJSON(b, d) },
				"csv":  func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) },
				"geo":  func(b *bytes.Buffer, d *Document) error { return WriteGeoJSON(b, d) },
				"html": func(b *bytes.Buffer, d *Document) error { return WriteHTML(b, d) },
			} {
				var buf bytes.Buffer
				err := write(&buf, d)
				if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "report: ") {
					t.Errorf("%s: error %v, want one containing %q", name, err, tc.want)
				}
				if buf.Len() != 0 {
					t.Errorf("%s: wrote %d bytes before failing", name, buf.Len())
				}
			}
		})
	}
}

func TestReadJSONErrors(t *testing.T) {
	tests := []struct {
		name, in, want string
	}{
		{"syntax", "{\n  \"schema_version\": 1,\n  \"groups\": [}\n", "results.json:3:14"},
		{"type", "{\n \"schema_version\": \"one\"\n}", `results.json:2:24: field schema_version: string is not a int`},
		{"future", `{"schema_version": 7, "frame": {"kind": "local-enu"}}`, "schema_version 7 is not supported"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadJSON(strings.NewReader(tc.in), "results.json")
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// A document written by a later version with extra fields still reads.
func TestReadJSONIgnoresAddedFields(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteJSON(&buf, fenwickLane(false)); err != nil {
		t.Fatal(err)
	}
	v := fmt.Sprintf(`"schema_version": %d,`, SchemaVersion)
	in := strings.Replace(buf.String(), v, v+` "added_later": {"x": [1, 2]},`, 1)
	if in == buf.String() {
		t.Fatalf("no %s in the document", v)
	}
	if _, err := ReadJSON(strings.NewReader(in), "newer.json"); err != nil {
		t.Fatal(err)
	}
}

func TestSetRoute(t *testing.T) {
	d := fenwickLane(false)
	// Groups are in route order with chainage 15 m apart.
	for i, g := range d.Groups {
		if g.Chainage == nil || math.Abs(*g.Chainage-15*float64(i)) > 1e-9 {
			t.Fatalf("group %s chainage %v, want %g", g.Key, g.Chainage, 15*float64(i))
		}
	}
	// Directions were turned along the route: every station's current is
	// positive although the fits gave some of them negative.
	for _, s := range d.Route.Stations {
		if s.Used && s.Current <= 0 {
			t.Errorf("station %s current %g", s.Key, s.Current)
		}
	}
	var step, cover, dipole *Finding
	for i := range d.Findings {
		switch d.Findings[i].Kind {
		case "current-step":
			step = &d.Findings[i]
		case "shallow-cover":
			cover = &d.Findings[i]
		case "dipole-anomaly":
			dipole = &d.Findings[i]
		}
	}
	if step == nil || !reflect.DeepEqual(step.Groups, []string{"T07", "T08"}) {
		t.Errorf("step finding %+v, want one between T07 and T08", step)
	}
	if cover == nil || !reflect.DeepEqual(cover.Groups, []string{"T04"}) || cover.Severity != SeverityWarning {
		t.Errorf("cover finding %+v, want a warning at T04 (cover 0.53 m < 0.60 m)", cover)
	}
	if dipole == nil || dipole.Groups[0] != "T11" {
		t.Errorf("dipole finding %+v, want T11", dipole)
	}
	// Most pressing first.
	for i := 1; i < len(d.Findings); i++ {
		if severityRank(d.Findings[i].Severity) < severityRank(d.Findings[i-1].Severity) {
			t.Errorf("findings not sorted by severity: %s after %s", d.Findings[i].Severity, d.Findings[i-1].Severity)
		}
	}
	if c := d.Route.Stations[3].Cover; c == nil || math.Abs(*c-(d.Route.Stations[3].Depth-0.25)) > 1e-12 {
		t.Errorf("station T04 cover %v, want depth - 0.25 m", c)
	}
	// The object station is left out of the profile but keeps its values,
	// cover among them (as results.csv gives it).
	if s := d.Route.Stations[10]; s.Used || s.Cover == nil || math.Abs(*s.Cover-(s.Depth-0.25)) > 1e-12 {
		t.Errorf("dipole station T11: used %v, cover %v: want left out, cover depth - 0.25 m", s.Used, s.Cover)
	}
}

func TestNewProfile(t *testing.T) {
	pos := [][3]float64{{0, 3, 0}, {0, -1, 0}, {0, 0, 0}, {0, 2, 0}, {0, -4, 0}}
	meas := [][3]float64{{3}, {-1}, {0}, {2}, {-4}}
	// Conductor along +east through the origin: right of east is south, so
	// a reading at north = +3 has offset -3.
	tests := []struct {
		name string
		max  int
		want []float64
	}{
		{"all", 0, []float64{-3, -2, 0, 1, 4}},
		{"thinned", 3, []float64{-3, 0, 4}},
		{"one", 1, []float64{0}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := NewProfile(pos, meas, meas, [3]float64{}, [3]float64{2, 0, 0}, ComponentDC, tc.max)
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(p.Offset, tc.want) {
				t.Errorf("offsets %v, want %v", p.Offset, tc.want)
			}
			for i := range p.Offset {
				if p.Measured[i][0] != -p.Offset[i] || p.Positions[i][1] != -p.Offset[i] {
					t.Errorf("row %d does not follow its reading", i)
				}
			}
		})
	}
	if _, err := NewProfile(pos, meas, meas, [3]float64{}, [3]float64{0, 0, 1}, ComponentDC, 0); err == nil {
		t.Error("vertical direction accepted")
	}
}

// golden compares got with testdata/name, rewriting it under -update.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the golden file; if the change is intended, run go test ./report -update and read the diff", path)
	}
}

func TestCSVGolden(t *testing.T) {
	for _, geo := range []bool{false, true} {
		var buf bytes.Buffer
		if err := WriteCSV(&buf, fenwickLane(geo)); err != nil {
			t.Fatal(err)
		}
		name := "fenwick-lane-local.csv"
		if geo {
			name = "fenwick-lane-wgs84.csv"
		}
		golden(t, name, buf.Bytes())
	}
}

func TestGeoJSONGolden(t *testing.T) {
	for _, geo := range []bool{false, true} {
		var buf bytes.Buffer
		if err := WriteGeoJSON(&buf, fenwickLane(geo)); err != nil {
			t.Fatal(err)
		}
		name := "fenwick-lane-local.geojson"
		if geo {
			name = "fenwick-lane-wgs84.geojson"
		}
		golden(t, name, buf.Bytes())
	}
}

func TestCollapseNumberArrays(t *testing.T) {
	tests := []struct{ in, want string }{
		{"[\n  1,\n  -2.5e-3,\n  3\n]", "[1, -2.5e-3, 3]"},
		{`{"a": [` + "\n" + `"x", 1]}`, `{"a": [` + "\n" + `"x", 1]}`},       // mixed: kept
		{`{"m": "see [1, 2]", "v": [ 4 ]}`, `{"m": "see [1, 2]", "v": [4]}`}, // strings untouched
		{`{"m": "quote \" [1,  2]"}`, `{"m": "quote \" [1,  2]"}`},           // escaped quote
		{"[]", "[]"},                         // empty
		{"[[1,\n 2], [3]]", "[[1, 2], [3]]"}, // nested
	}
	for _, tc := range tests {
		if got := string(collapseNumberArrays([]byte(tc.in))); got != tc.want {
			t.Errorf("collapse(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// SHA-256 of "abc": FIPS 180-2, appendix B.1.
func TestNewInput(t *testing.T) {
	path := filepath.Join(t.TempDir(), "abc.csv")
	if err := os.WriteFile(path, []byte("abc"), 0o644); err != nil {
		t.Fatal(err)
	}
	in, err := NewInput("survey", path, 3)
	if err != nil {
		t.Fatal(err)
	}
	if want := "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"; in.SHA256 != want || in.Rows != 3 || in.Role != "survey" {
		t.Errorf("input %+v, want sha256 %s", in, want)
	}
	if _, err := NewInput("survey", filepath.Join(t.TempDir(), "missing.csv"), 0); err == nil || !strings.HasPrefix(err.Error(), "report: ") {
		t.Errorf("missing file: %v", err)
	}
}
