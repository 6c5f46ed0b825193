package report

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// TestGeoJSONShallowStretchIsALine: a shallow-cover finding over a stretch
// is drawn as a LineString along the route through the stations from its
// chainage_from_m to its chainage_to_m (the nearest stations with enough
// cover either side of the failing ones), not as one Point at its
// shallowest station: a GIS showed the demo's 20 m of shallow cable as one
// dot (found in review). RFC 7946 section 3.1.4: a LineString is two or
// more positions. Cover is depth below the sensors less their 0.3 m height
// (README, --sensor-height).
func TestGeoJSONShallowStretchIsALine(t *testing.T) {
	fits := twoCables(false)        // ten traverses G01-G10, 10 m apart, 1.0 m below the sensors
	for _, i := range []int{4, 5} { // G05 and G06: 0.70 m below the sensors, cover 0.40 m
		s := &fits[i].Result.Sources[0]
		s.Depth, s.Point[2] = 0.70, -0.70
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	var f *Finding
	for i := range d.Findings {
		if d.Findings[i].Kind == "shallow-cover" {
			if f != nil {
				t.Fatalf("two shallow-cover findings: %+v", d.Findings)
			}
			f = &d.Findings[i]
		}
	}
	if f == nil || strings.Join(f.Groups, " ") != "G05 G06" {
		t.Fatalf("shallow-cover finding %+v, want one at G05 G06", f)
	}
	// The bracket: G04 and G07, the stations either side with enough cover.
	ch := map[string]Station{}
	for _, s := range d.Route.Stations {
		ch[s.Key] = s
	}
	const chTol = 1e-9 // m: the bracket is the stations' own chainages
	if math.Abs(f.ChainageFrom-ch["G04"].Chainage) > chTol || math.Abs(f.ChainageTo-ch["G07"].Chainage) > chTol {
		t.Errorf("stretch %g-%g m, want G04 %g to G07 %g m", f.ChainageFrom, f.ChainageTo, ch["G04"].Chainage, ch["G07"].Chainage)
	}
	_, feats := geoCollection(t, d)
	found := false
	for _, g := range feats {
		if g.Properties["feature"] != "finding" || g.Properties["kind"] != "shallow-cover" {
			continue
		}
		found = true
		if g.Geometry.Type != "LineString" {
			t.Fatalf("shallow stretch drawn as a %s, want a LineString", g.Geometry.Type)
		}
		var pos [][2]float64
		if err := json.Unmarshal(g.Geometry.Coordinates, &pos); err != nil {
			t.Fatal(err)
		}
		want := []string{"G04", "G05", "G06", "G07"}
		if len(pos) != len(want) {
			t.Fatalf("line of %d positions, want %d (%v)", len(pos), len(want), want)
		}
		const posTol = 1e-3 // m: positions are written to the millimetre without an origin
		for i, k := range want {
			p := ch[k].Point
			if math.Abs(pos[i][0]-p[0]) > posTol || math.Abs(pos[i][1]-p[1]) > posTol {
				t.Errorf("position %d %v, want %s's %v", i, pos[i], k, p[:2])
			}
		}
	}
	if !found {
		t.Error("no shallow-cover finding in the GeoJSON")
	}
}
