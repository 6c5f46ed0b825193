package report

import (
	"bytes"
	"html"
	"io"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestReferenceLevelAtSensors: sensors carried 0.3 m over a level ground
// (groundSurvey, simulated: the cable 1.1 m under the ground) whose heights
// are logged at up = 0, as on a latitude/longitude/height log whose origin is
// the first reading (the sensor's own height), and --reference-z 0 given.
// The depths are then below the sensors: 1.4 m of "cover" for 1.1. Before,
// no word was said; now a run warning says the level is the sensors' own
// height and names --sensor-height, in every output that carries run
// warnings, with or without a latitude/longitude origin. The right level
// (up = -0.3 m), and one 0.1 m below the sensors (over levelAtSensors, so
// plainly not the sensors' own), draw no such warning.
func TestReferenceLevelAtSensors(t *testing.T) {
	const mark = "lies at the sensors' own height or within 5 cm of it"
	flat := func(e, n float64) float64 { return -0.3 }
	build := func(z float64, head Document) *Document {
		t.Helper()
		fits := groundSurvey(t, 3, -4, 4, 0, flat, []float64{0.3}, inverse.Settings{ReferenceZ: &z})
		d, err := Build(head, fits, nil)
		if err != nil {
			t.Fatal(err)
		}
		return d
	}
	geo := Document{Frame: Frame{Origin: &Origin{Lat: 54.3, Lon: -2.1, H: 312.25}}}
	for _, c := range []struct {
		name string
		head Document
	}{{"lat/lon/height", geo}, {"local metres", Document{}}} {
		d := build(0, c.head)
		w := strings.Join(d.Warnings, "\n")
		if !strings.Contains(w, mark) || !strings.Contains(w, "--sensor-height") {
			t.Errorf("%s: warnings %q: want the level at the sensors' own height and --sensor-height", c.name, w)
		}
		if geo := c.head.Frame.Origin != nil; geo != strings.Contains(w, "origin's height (312.25 m") {
			t.Errorf("%s: warnings %q: the origin's height named %v, want %v", c.name, w, !geo, geo)
		}
		writers := map[string]func(io.Writer, *Document) error{
			"results.json": WriteJSON, "findings.csv": WriteFindingsCSV,
			"route.geojson": WriteGeoJSON, "report.html": WriteHTML,
		}
		for name, write := range writers {
			var b bytes.Buffer
			if err := write(&b, d); err != nil {
				t.Fatal(err)
			}
			if !strings.Contains(html.UnescapeString(b.String()), mark) {
				t.Errorf("%s: %s does not carry the warning", c.name, name)
			}
		}
	}
	for _, z := range []float64{-0.3, -0.1} {
		if w := strings.Join(build(z, geo).Warnings, "\n"); strings.Contains(w, mark) {
			t.Errorf("--reference-z %g, %.1f m below the sensors: warned %q", z, -z, w)
		}
	}
}
