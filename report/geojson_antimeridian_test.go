package report

import (
	"encoding/json"
	"math"
	"testing"
)

// TestRouteCrossingAntimeridianIsCut: RFC 7946 section 3.1.9 says a line
// crossing the antimeridian SHOULD be cut in two, its parts ending at
// longitude 180 and -180 (its example: a MultiLineString of
// [[170, 45], [180, 48]] and [[-180, 48], [-170, 45]]). The invented Fenwick
// Lane route, moved so that its origin lies 0.001 degree west of the 180th
// meridian, runs about 140 m east and crosses it. Written as one
// LineString it stepped from 179.9999 to -179.9999, a line a GIS draws
// round the whole globe. The route must be a MultiLineString whose
// parts each keep to one side of the meridian (no step over 180 degrees
// of longitude within a part), end and start on it at the same latitude,
// interpolated linearly between the stations either side, and hold every
// station once.
func TestRouteCrossingAntimeridianIsCut(t *testing.T) {
	d := fenwickLane(true)
	d.Frame.Origin.Lon = 179.999
	_, feats := geoCollection(t, d)
	var found bool
	for _, f := range feats {
		if f.Properties["feature"] != "route" {
			continue
		}
		found = true
		if f.Geometry.Type != "MultiLineString" {
			t.Fatalf("route is a %s, want a MultiLineString cut at the antimeridian", f.Geometry.Type)
		}
		var parts [][][2]float64
		if err := json.Unmarshal(f.Geometry.Coordinates, &parts); err != nil {
			t.Fatal(err)
		}
		if len(parts) != 2 {
			t.Fatalf("route has %d parts, want 2", len(parts))
		}
		n := 0
		for k, part := range parts {
			if len(part) < 2 {
				t.Fatalf("part %d has %d positions, want two or more (RFC 7946 section 3.1.4)", k, len(part))
			}
			for i := 1; i < len(part); i++ {
				if math.Abs(part[i][0]-part[i-1][0]) > 180 {
					t.Errorf("part %d steps from %v to %v across the antimeridian", k, part[i-1], part[i])
				}
			}
			n += len(part) - 1 // less the position on the meridian
		}
		a, b := parts[0], parts[1]
		end, start := a[len(a)-1], b[0]
		if end[0] != 180 || start[0] != -180 {
			t.Errorf("parts meet at longitudes %v and %v, want 180 and -180 (the route runs east)", end[0], start[0])
		}
		if end[1] != start[1] {
			t.Errorf("parts meet at latitudes %v and %v, want the same", end[1], start[1])
		}
		// The stations either side: interpolate linearly in longitude
		// unwrapped across the meridian.
		p, q := a[len(a)-2], b[1]
		tt := (180 - p[0]) / (q[0] + 360 - p[0])
		if want := p[1] + tt*(q[1]-p[1]); math.Abs(end[1]-want) > 1e-8 {
			t.Errorf("meets the meridian at latitude %.9f, want %.9f", end[1], want)
		}
		if stations := int(f.Properties["stations"].(float64)); n != stations {
			t.Errorf("parts hold %d stations, the route %d", n, stations)
		}
	}
	if !found {
		t.Fatal("no route feature")
	}
}
