package ingest

import (
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// A position column the readers leave out is read as 0 for every row: a
// survey then fits lines to positions that are not the readings'. A
// column that looks like a position (a position's name in a unit the
// readers do not know, or an axis letter beside a position word) and is
// not read is refused, naming the file, the header line and the column.
func TestPositionLikeColumnsRefused(t *testing.T) {
	cases := []struct {
		header string
		want   []string
	}{
		{"x [in]", []string{`log.csv:1: column 2 ("x [in]"): looks like x (a position) in a unit this reader does not know, "in"`, "m, cm, mm, km or ft"}},
		{"x [yd]", []string{`column 2 ("x [yd]")`, `"yd"`}},
		{"x [dm]", []string{`column 2 ("x [dm]")`, `"dm"`}},
		{"x_yd", []string{`column 2 ("x_yd")`, `"yd"`}},
		{"Easting [US ft]", []string{`column 2 ("Easting [US ft]")`, `"US ft"`}},
		{"x_US_ft", []string{`column 2 ("x_US_ft"): looks like x (a position), but its name is not one this reader recognises`, "(try columns x=x_US_ft)"}},
		{"pos_x", []string{`column 2 ("pos_x"): looks like x (a position), but its name`, "(try columns x=pos_x)"}},
		{"x_pos", []string{`column 2 ("x_pos"): looks like x`, "(try columns x=x_pos)"}},
		{"Position X (m)", []string{`column 2 ("Position X (m)")`, "(try columns x=Position X (m))"}},
		{"posX", []string{`column 2 ("posX")`}},
	}
	for _, tc := range cases {
		t.Run(tc.header, func(t *testing.T) {
			p := writeFile(t, "log.csv", "time,"+tc.header+",y,z,bx,by,bz\n0,1,2,0.3,100,200,-45000\n")
			_, err := ReadSamples(p)
			for _, w := range tc.want {
				wantErr(t, err, w)
			}
		})
	}
	// The y axis and WGS84 columns the same way.
	p := writeFile(t, "log.csv", "time,x,pos_y,z,bx,by,bz\n0,1,2,0.3,100,200,-45000\n")
	_, err := ReadSamples(p)
	wantErr(t, err, `column 3 ("pos_y"): looks like y (a position)`)
	p = writeFile(t, "log.csv", "time,lat (rad),lon,bx,by,bz\n0,0.9,-0.03,100,200,-45000\n")
	_, err = ReadSamples(p)
	wantErr(t, err, `column 2 ("lat (rad)"): looks like the latitude (a position) in a unit this reader does not know, "rad" (it reads positions in degrees)`)
}

// Columns that are not positions are not refused (an accelerometer's
// axes), nor a position-like column beside positions read from elsewhere
// (local x beside WGS84 latitude and longitude, which give the positions).
func TestPositionLikeColumnsNotRefused(t *testing.T) {
	p := writeFile(t, "log.csv", "time,x_accel,y_accel,z_accel,bx,by,bz\n0,0.1,0.2,9.8,100,200,-45000\n")
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.X != nil || len(s.Absent) != 0 {
		t.Errorf("a log without positions read with X %v, absent %v; want none", s.X, s.Absent)
	}
	p = writeFile(t, "log.csv", "time,lat,lon,x [in],bx,by,bz\n0,54.3125,-2.0883,7,100,200,-45000\n")
	s, err = ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Origin == nil || len(s.Absent) != 0 {
		t.Errorf("WGS84 log read with origin %v, absent %v; want an origin, nothing absent", s.Origin, s.Absent)
	}
}

// A map grid's easting and northing are its east and north coordinates;
// they are read as x and y in metres, or in the unit of their suffix. The
// international foot is 0.3048 m exactly (NIST SP 811, 2008, appendix B.8,
// from the 1959 international yard and pound agreement).
func TestEastingNorthingRead(t *testing.T) {
	p := writeFile(t, "log.csv", "time,Easting (m),Northing (m),z,bx,by,bz\n0,431250.5,512875.25,0.3,100,200,-45000\n")
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.X[0] != 431250.5 || s.Y[0] != 512875.25 || len(s.Absent) != 0 {
		t.Errorf("easting, northing read as x %v, y %v (absent %v); want 431250.5, 512875.25", s.X[0], s.Y[0], s.Absent)
	}
	p = writeFile(t, "log.csv", "time,easting_ft,northing_ft,z,bx,by,bz\n0,1000,2000,0.3,100,200,-45000\n")
	s, err = ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.X[0]-304.8) > 1e-9 || math.Abs(s.Y[0]-609.6) > 1e-9 {
		t.Errorf("1000 ft, 2000 ft read as %v m, %v m; want 304.8, 609.6", s.X[0], s.Y[0])
	}
}

// A log with some local positions but not all has the others read as 0:
// a warning names them and the columns not read, Samples.Absent lists
// them, and the metadata of a conversion carries them on, so that the
// zeros written for them are not read as positions afterwards.
func TestAbsentPositionsWarnedAndCarried(t *testing.T) {
	p := writeFile(t, "log.csv", "time,dist,y,bx,by,bz\n0,4,2,100,200,-45000\n1,5,2,100,200,-45000\n")
	r, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	w := strings.Join(Warnings(r), "\n")
	r.Release()
	for _, want := range []string{"no column for x: x is read as 0 for every row (columns not read: dist)", "no column for z"} {
		if !strings.Contains(w, want) {
			t.Errorf("warnings %q lack %q", w, want)
		}
	}
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(s.Absent, []string{"x", "z"}) {
		t.Errorf("absent %v, want [x z]", s.Absent)
	}
	for _, ext := range []string{".csv", ".parquet", ".arrow"} {
		out := filepath.Join(t.TempDir(), "out"+ext)
		if err := WriteSamples(out, s); err != nil {
			t.Fatal(err)
		}
		back, err := ReadSamples(out)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(back.Absent, []string{"x", "z"}) {
			t.Errorf("%s: absent %v after a conversion, want [x z]", ext, back.Absent)
		}
		if back.X[1] != 0 || back.Y[1] != 2 {
			t.Errorf("%s: read x %v, y %v; want 0, 2", ext, back.X[1], back.Y[1])
		}
		r, err := Open(out)
		if err != nil {
			t.Fatal(err)
		}
		if w := strings.Join(Warnings(r), "\n"); !strings.Contains(w, "column x holds no positions") {
			t.Errorf("%s: warnings %q do not say x holds no positions", ext, w)
		}
		r.Release()
	}
}
