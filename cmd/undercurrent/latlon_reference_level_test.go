package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestLatLonReferenceLevelFollowsHeights checks --reference-z on a
// latitude/longitude/height log whose ground is level (every reading at the
// same ellipsoidal height) over 3 km: the ground level given as README's
// rule says (the ground's height minus the origin's) holds at every
// traverse, so the depth below it is the simulated 1.0 m cover everywhere.
// The tangent plane at the origin falls away from the ellipsoid by about
// d^2/(2R) (R about 6.4e6 m, from memory): 0.7 m at 3 km, which a flat
// level at the origin read as extra cover (1.7 m for 1.0 m), on the unsafe
// side of --min-cover.
func TestLatLonReferenceLevelFollowsHeights(t *testing.T) {
	dir := t.TempDir()
	// Quillet Marsh, an invented site; a straight DC main 1.0 m below a
	// level ground, the sensors 0.3 m above it, traverses every 1.5 km.
	const text = `name = "quillet-long"
site = "Quillet Marsh long main"
seed = 7
start = "2026-02-02T08:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = 3.0
[survey]
count = 3
spacing_m = 1500.0
first_at_m = 0.0
length_m = 8.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 5.0
[[conductor]]
name = "main"
kind = "polyline"
vertices = [[-100.0, -57.7350269, -1.0], [3000.0, 1732.0508, -1.0]]
currents_a = [20.0]
`
	sc, err := simulate.Parse([]byte(text), "quillet-long.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	// The log as a satellite receiver writes it: latitude and longitude
	// of each reading's place, and its height above the ellipsoid, the
	// ground's 10.0 m plus the sensor's 0.3 m wherever it is.
	origin := ingest.Geodetic{Lat: 52.0, Lon: 0.5, H: 10.0}
	var b strings.Builder
	b.WriteString("time,lat,lon,height,bx,by,bz,group\n")
	for i := range s.Len() {
		g := origin.FromENU([3]float64{s.X[i], s.Y[i], s.Z[i]})
		fmt.Fprintf(&b, "%.17g,%.12f,%.12f,%.4f,%.17g,%.17g,%.17g,%s\n", s.Time[i], g.Lat, g.Lon, origin.H+s.Z[i], s.Bx[i], s.By[i], s.Bz[i], s.Group[i])
	}
	path := filepath.Join(dir, "quillet.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	// Ground at height 10.0 m, origin at 10.0 m: --reference-z 0.
	doc := locateGrouped(t, "--origin", "52.0,0.5,10", "--reference-z", "0", path)
	if len(doc.Groups) != 3 {
		t.Fatalf("%d groups, want 3", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) == 0 {
			t.Errorf("%s: not fitted", g.Key)
			continue
		}
		src := g.Sources[0]
		// The truth is 1.0 m; allow five sigmas and 5 mm for the
		// field's frame (each reading's own level, not the origin's).
		if tol := 5*src.DepthSigma + 0.005; math.Abs(src.Depth-1.0) > tol {
			t.Errorf("%s: depth below the ground %.4f ± %.4f m, the main lies 1.0 m down", g.Key, src.Depth, src.DepthSigma)
		}
	}
	for _, w := range doc.Warnings {
		if strings.Contains(w, "--reference-z") {
			t.Errorf("a right ground level is warned: %s", w)
		}
	}
}
