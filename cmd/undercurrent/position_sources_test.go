package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// A GNSS export holds each reading's position twice, as WGS84 latitude,
// longitude and height and in a map grid (Easting, Northing); a log in
// north-east-down axes names its positions Easting and Northing. Both fit
// as the canonical log does: the straight conductor of the single-line
// scenario, 25 A at 1.1 m below ground, 1.4 m below the sensors (the
// scenario's own truth, whose field is the Biot-Savart field of an
// infinite line, B = mu0 I / (2 pi r)). The GNSS log is placed by its
// latitude and longitude, so the document carries its origin, not by the
// grid, whose north is off true north by the grid convergence (1.5
// degrees here). A --unit for two of the three field axes of a log in
// microtesla is refused, naming the third.
func TestLocatePositionSources(t *testing.T) {
	s, dir, canon := canonicalLog(t, "single-line.toml")
	// Harrow Fen substation, an invented site in the fens.
	origin := ingest.Geodetic{Lat: 52.4512, Lon: 0.1738, H: 1.5}
	conv := 1.5 * math.Pi / 180
	var gnss, ned, uT strings.Builder
	gnss.WriteString("time,lat,lon,height,Easting,Northing,bx,by,bz,group\n")
	ned.WriteString("time,Easting,Northing,z,bx,by,bz,group\n")
	uT.WriteString("time,x,y,z,bx,by,bz,group\n")
	for i := range s.Len() {
		g := origin.FromLocal([3]float64{s.X[i], s.Y[i], s.Z[i]})
		e := 561233.7 + s.X[i]*math.Cos(conv) - s.Y[i]*math.Sin(conv)
		n := 5812343.2 + s.X[i]*math.Sin(conv) + s.Y[i]*math.Cos(conv)
		fmt.Fprintf(&gnss, "%.17g,%.17g,%.17g,%.17g,%.3f,%.3f,%.17g,%.17g,%.17g,%s\n", s.Time[i], g.Lat, g.Lon, g.H, e, n, s.Bx[i], s.By[i], s.Bz[i], s.Group[i])
		// NED: field north, east, down; positions named by their direction.
		fmt.Fprintf(&ned, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%s\n", s.Time[i], s.X[i], s.Y[i], -s.Z[i], s.By[i], s.Bx[i], -s.Bz[i], s.Group[i])
		fmt.Fprintf(&uT, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%s\n", s.Time[i], s.X[i], s.Y[i], s.Z[i], s.Bx[i]/1000, s.By[i]/1000, s.Bz[i]/1000, s.Group[i])
	}
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	gnssPath, nedPath, uTPath := write("gnss.csv", gnss.String()), write("ned.csv", ned.String()), write("ut.csv", uT.String())

	want := locateGrouped(t, canon)
	for _, tc := range []struct {
		name string
		args []string
		tol  float64 // metres of depth
	}{
		// WGS84 round trip through the ECEF conversion: well under a millimetre.
		{"gnss", []string{"--origin", fmt.Sprintf("%.10f,%.10f,%g", origin.Lat, origin.Lon, origin.H), gnssPath}, 1e-4},
		{"ned", []string{"--frame", "ned", nedPath}, 1e-9},
	} {
		got := locateGrouped(t, tc.args...)
		if len(got.Groups) != len(want.Groups) {
			t.Fatalf("%s: %d groups, want %d", tc.name, len(got.Groups), len(want.Groups))
		}
		for i, g := range got.Groups {
			a, w := g.Sources[0], want.Groups[i].Sources[0]
			if math.Abs(a.Current-w.Current) > 1e-6*math.Abs(w.Current) || math.Abs(a.Depth-w.Depth) > tc.tol+1e-6 {
				t.Errorf("%s %s: %.9g A at %.9g m, want %.9g A at %.9g m as the canonical log", tc.name, g.Key, a.Current, a.Depth, w.Current, w.Depth)
			}
			if math.Abs(math.Abs(a.Current)-25) > 0.05 || math.Abs(a.Depth-1.4) > 0.01 {
				t.Errorf("%s %s: %.6g A at %.6g m, want the scenario's 25 A at 1.4 m", tc.name, g.Key, a.Current, a.Depth)
			}
		}
		if tc.name == "gnss" && (got.Frame.Origin == nil || math.Abs(got.Frame.Origin.Lat-origin.Lat) > 1e-9) {
			t.Errorf("gnss: document frame origin %+v, want lat %g (positions from latitude and longitude)", got.Frame.Origin, origin.Lat)
		}
	}

	code, _, errOut := cli(t, "locate", "--group-by", "group", "--unit", "bx=uT,by=uT", uTPath)
	if code != 1 || !strings.Contains(errOut, "units are given for some of the field's axes (bx=uT, by=uT) and not for bz in nT (by default)") ||
		!strings.Contains(errOut, "(try --unit bx=uT,by=uT,bz=uT)") {
		t.Errorf("--unit bx=uT,by=uT: exit %d, stderr %q; want a refusal naming bz and the --unit to give", code, errOut)
	}
	got := locateGrouped(t, "--unit", "bx=uT,by=uT,bz=uT", uTPath)
	for i, g := range got.Groups {
		if a, w := g.Sources[0], want.Groups[i].Sources[0]; math.Abs(a.Current-w.Current) > 1e-6*math.Abs(w.Current) {
			t.Errorf("uT log, all three units given: %s %.9g A, want %.9g A", g.Key, a.Current, w.Current)
		}
	}
}
