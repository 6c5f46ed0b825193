package ingest

import (
	"math"
	"strings"
	"testing"
)

// warningsOf opens path with opts and returns its header warnings joined.
func warningsOf(t *testing.T, path string, opts ...Option) string {
	t.Helper()
	r, err := Open(path, opts...)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Release()
	return strings.Join(Warnings(r), "\n")
}

// A GNSS receiver's export holds WGS84 latitude, longitude and height and
// the same points in a map grid (Easting, Northing). Latitude and
// longitude are read: they place the readings on the Earth, and their
// north is true north, where a grid's north is off it by the grid
// convergence. The check is the WGS84 meridian arc: with a = 6378137 m and
// 1/f = 298.257223563 (NIMA TR8350.2, 3rd ed., table 3.1) the meridian
// radius of curvature M = a(1-e^2)/(1-e^2 sin^2 lat)^1.5 puts 0.001
// degree of latitude at 52.45 N 111.275 m north. A mapping chooses either.
func TestGridBesideLatitudeLongitude(t *testing.T) {
	const text = "time,lat,lon,height,Easting,Northing,bx,by,bz\n" +
		"0,52.4500,0.1738,1.5,561233.7,5812349.5,100,18000,-44000\n" +
		"1,52.4510,0.1738,1.5,561234.1,5812460.8,100,18000,-44000\n"
	p := writeFile(t, "gnss.csv", text)
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Origin == nil {
		t.Fatalf("read as local x %v, y %v: want WGS84 positions from lat, lon", s.X, s.Y)
	}
	f := 1 / 298.257223563
	e2 := f * (2 - f)
	lat := 52.4505 * math.Pi / 180
	m := 6378137 * (1 - e2) / math.Pow(1-e2*math.Sin(lat)*math.Sin(lat), 1.5)
	want := m * 0.001 * math.Pi / 180
	if math.Abs(s.Y[1]-s.Y[0]-want) > 0.01 || math.Abs(s.X[1]-s.X[0]) > 0.01 || math.Abs(s.Z[1]-s.Z[0]) > 0.01 {
		t.Errorf("0.001 deg of latitude read as east %.3f m, north %.3f m, up %.3f m; want 0, %.3f, 0", s.X[1]-s.X[0], s.Y[1]-s.Y[0], s.Z[1]-s.Z[0], want)
	}
	w := warningsOf(t, p)
	for _, want := range []string{"gnss.csv:1: the log has latitude and longitude (lat, lon, height) and a map grid's coordinates (Easting, Northing): positions are read from latitude and longitude, and Easting, Northing are not read", "(try columns x=Easting,y=Northing)"} {
		if !strings.Contains(w, want) {
			t.Errorf("warnings %q lack %q", w, want)
		}
	}

	// The mapping the warning suggests reads the grid.
	s, err = ReadSamples(p, WithColumns("x=Easting", "y=Northing"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Origin != nil || s.X[0] != 561233.7 || s.Y[1] != 5812460.8 {
		t.Errorf("mapped x=Easting,y=Northing: origin %v, x %v, y %v; want the grid's values", s.Origin, s.X, s.Y)
	}
	// A mapping of latitude and longitude is obeyed beside x and y found
	// by name, even ones named exactly x and y.
	q := writeFile(t, "both.csv", strings.ReplaceAll(text, "Easting,Northing", "x,y"))
	if w := warningsOf(t, q); !strings.Contains(w, "both.csv:1: the log has local positions (x, y) and latitude and longitude (lat, lon, height): positions are read from x, y, and lat, lon, height are not read") || !strings.Contains(w, "(try columns lat=lat,lon=lon,height=height)") {
		t.Errorf("x, y beside lat, lon: warnings %q do not say which are read", w)
	}
	for _, f := range []string{p, q} {
		s, err = ReadSamples(f, WithColumns("lat=lat", "lon=lon"))
		if err != nil {
			t.Fatal(err)
		}
		if s.Origin == nil || math.Abs(s.Y[1]-s.Y[0]-want) > 0.01 {
			t.Errorf("%s mapped lat=lat,lon=lon: origin %v, y %v; want WGS84 positions", f, s.Origin, s.Y)
		}
	}
	// Both kinds mapped: refused.
	_, err = ReadSamples(p, WithColumns("x=Easting", "lat=lat"))
	wantErr(t, err, "gnss.csv:1: the mapping gives both local positions (x=Easting) and WGS84 ones (lat=lat)")
}

// A column named exactly x or y is read as x or y whatever the order of
// the columns; Easting and Northing (aliases) before them are not.
func TestExactNamesBeatAliases(t *testing.T) {
	p := writeFile(t, "log.csv", "time,Easting,Northing,x,y,z,bx,by,bz\n0,512344.7,5812349.5,-0.25,4.5,0.3,100,18000,-44000\n")
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.X[0] != -0.25 || s.Y[0] != 4.5 {
		t.Errorf("x, y read as %v, %v; want the columns named x and y, -0.25, 4.5", s.X[0], s.Y[0])
	}
	if w := warningsOf(t, p); !strings.Contains(w, `columns 4 ("x") and 2 ("Easting") could both be x; 4 is read`) {
		t.Errorf("warnings %q do not say which column is read as x", w)
	}
	// Other aliases the same way: "time" beats "t".
	p = writeFile(t, "log.csv", "t,time,x,y,z,bx,by,bz\n5,100,0,0,0,1,2,3\n")
	if s, err = ReadSamples(p); err != nil || s.Time[0] != 100 {
		t.Errorf("time read as %v (%v); want the column named time, 100", s.Time, err)
	}
}

// In the NED frame x is north, y east and z down (the frame's definition:
// north-east-down local level axes, as in ISO 1151-1 for the
// Earth-fixed axes of flight mechanics). A map grid's Easting is east and
// its Northing north in any frame: an NED log naming its position columns
// Easting, Northing reads as the same log naming them y, x.
func TestEastingNorthingInNED(t *testing.T) {
	en := writeFile(t, "en.csv", "time,Easting,Northing,z,bx,by,bz\n0,3,4,-0.5,18000,100,44000\n")
	xy := writeFile(t, "xy.csv", "time,x,y,z,bx,by,bz\n0,4,3,-0.5,18000,100,44000\n")
	for _, p := range []string{en, xy} {
		s, err := ReadSamples(p, WithFrame(FrameNED))
		if err != nil {
			t.Fatal(err)
		}
		if s.X[0] != 3 || s.Y[0] != 4 || s.Z[0] != 0.5 {
			t.Errorf("%s in NED: east %v, north %v, up %v; want 3, 4, 0.5", p, s.X[0], s.Y[0], s.Z[0])
		}
	}
	// In ENU, Easting is x.
	s, err := ReadSamples(en)
	if err != nil {
		t.Fatal(err)
	}
	if s.X[0] != 3 || s.Y[0] != 4 {
		t.Errorf("en.csv in ENU: east %v, north %v; want 3, 4", s.X[0], s.Y[0])
	}
	// A mapping that reads Easting as north is refused.
	_, err = ReadSamples(en, WithFrame(FrameNED), WithColumns("x=Easting", "y=Northing"))
	wantErr(t, err, `en.csv:1: mapping x=Easting: "Easting" is a map grid's east coordinate, but x is north in the NED frame`)
	wantErr(t, err, "(try columns y=Easting,x=Northing)")
	_, err = ReadSamples(en, WithColumns("y=Easting", "x=Northing"))
	wantErr(t, err, "is a map grid's")
	s, err = ReadSamples(en, WithFrame(FrameNED), WithColumns("y=Easting", "x=Northing"))
	if err != nil || s.X[0] != 3 || s.Y[0] != 4 {
		t.Errorf("NED mapped y=Easting,x=Northing: %v; want east 3, north 4", err)
	}
}
