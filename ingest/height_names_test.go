package ingest

import (
	"math"
	"strings"
	"testing"
)

// A GNSS export names its height column in many ways. Beside latitude and
// longitude, the height is read under the names receivers and their
// exports write (ellipsoid or orthometric height, altitude, elevation,
// alt, elev, ele as GPX writes it), with the unit in the name; before,
// "ellipsoid_height_m" was dropped with no word, every reading was placed
// at height 0 and, on ground sloping 15% across a line, the fits missed by
// 28 times the noise (found in review). Over a few metres the local up
// coordinate differs from the height difference by the Earth's curvature,
// d^2/2R, under 1 mm at 50 m (R = 6371 km, a mean Earth radius from
// memory), so z[1]-z[0] must equal the height difference to 1 mm.
func TestHeightColumnNames(t *testing.T) {
	const rows = "0,52.1000000,-1.3000000,%s,100,18000,-44000\n" +
		"1,52.1000900,-1.3000000,%s,100,18000,-44000\n" // 10 m north
	for _, c := range []struct {
		name   string
		h0, h1 string
		dz     float64 // m
	}{
		{"ellipsoid_height_m", "79.40", "80.90", 1.5},
		{"Ellipsoid Height (m)", "79.40", "80.90", 1.5},
		{"ellipsoidal_height", "79.40", "80.90", 1.5},
		{"orthometric_height_m", "31.2", "32.7", 1.5},
		{"height_msl", "31.2", "32.7", 1.5},
		{"altitude_ft", "100", "105", 5 * 0.3048}, // international foot, 0.3048 m exactly (NIST SP 811, B.8)
		{"Elevation [m]", "31.2", "30.2", -1},
		{"elev", "31.2", "30.2", -1},
		{"ele", "31.2", "30.2", -1},
		{"alt", "31.2", "30.2", -1},
		{"hae", "79.40", "80.90", 1.5},
	} {
		text := "time,latitude_deg,longitude_deg," + c.name + ",bx,by,bz\n" +
			strings.Replace(strings.Replace(rows, "%s", c.h0, 1), "%s", c.h1, 1)
		p := writeFile(t, "gnss.csv", text)
		s, err := ReadSamples(p)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if s.Origin == nil {
			t.Errorf("%s: not read as WGS84 positions", c.name)
			continue
		}
		if got := s.Z[1] - s.Z[0]; math.Abs(got-c.dz) > 1e-3 {
			t.Errorf("%s: z rose by %.4f m between the rows, want %.4f m (the height column not read?)", c.name, got, c.dz)
		}
		if w := strings.Join(s.Warnings, "\n"); strings.Contains(w, "no column for height") {
			t.Errorf("%s: read, yet warned: %s", c.name, w)
		}
	}
}

// A lat/lon log whose height column is under a name not read warns, as a
// log in local metres without z does, naming the columns not read and the
// mapping that reads it; before, the height was dropped with no word
// (inspect listed it among the unused columns only).
func TestLatLonWithoutHeightWarns(t *testing.T) {
	const text = "time,latitude_deg,longitude_deg,antenna_h,bx,by,bz\n" +
		"0,52.1000000,-1.3000000,79.4,100,18000,-44000\n" +
		"1,52.1000900,-1.3000000,80.9,100,18000,-44000\n"
	p := writeFile(t, "rover.csv", text)
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	w := strings.Join(s.Warnings, "\n")
	for _, want := range []string{"rover.csv: no column for height beside latitude and longitude", "placed at height 0 on the WGS84 ellipsoid", "columns not read: antenna_h", "height=NAME"} {
		if !strings.Contains(w, want) {
			t.Errorf("warnings %q lack %q", w, want)
		}
	}
	// The mapping the warning names reads it.
	s, err = ReadSamples(p, WithColumns("height=antenna_h"))
	if err != nil {
		t.Fatal(err)
	}
	if got := s.Z[1] - s.Z[0]; math.Abs(got-1.5) > 1e-3 {
		t.Errorf("with height=antenna_h z rose by %.4f m, want 1.5 m", got)
	}
	if w := strings.Join(s.Warnings, "\n"); strings.Contains(w, "no column for height") {
		t.Errorf("mapped, yet warned: %s", w)
	}
}
