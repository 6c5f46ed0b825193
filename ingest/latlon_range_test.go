package ingest

import (
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// TestLatLonOutOfRangeRefused: a latitude outside -90 to 90 degrees or a
// longitude outside -180 to 360 is no position in degrees (WGS84 latitude
// and longitude, NIMA TR8350.2). Such logs were read and placed, and
// failed only when locate checked its result document, after the fit
// (found in review: latitude and longitude swapped at a site at 120 E,
// and NMEA ddmm.mmmm, 5227.074407 for 52 degrees 27.074407 minutes). Now
// the read refuses the first such value, naming the file, the line (the
// batch and row in Arrow and Parquet), the column and the value, with a
// hint; fails before (no error).
func TestLatLonOutOfRangeRefused(t *testing.T) {
	for _, c := range []struct {
		name string
		rows []llRow
		at   map[string]string // where, by format
		want []string
	}{
		{"swapped", []llRow{{0, 29.99, 119.99, 5}, {1, 120.0, 30.0, 5}, {2, 120.0, 30.0, 5}},
			map[string]string{"csv": "swapped.csv:3: column lat", "arrow": "batch 1 row 0 (row 1 of the file, counting from 0): column lat", "parquet": ": column lat:"},
			[]string{"latitude 120 is outside -90 to 90 degrees", "latitude and longitude swapped?"}},
		{"nmea", []llRow{{0, 5227.074407, 10.427764, 2}, {1, 5227.074407, 10.427765, 2}},
			map[string]string{"csv": "nmea.csv:2: column lat", "arrow": "batch 0 row 0: column lat", "parquet": "batch 0 row 0: column lat"},
			// 52 + 27.074407/60 = 52.45124011...
			[]string{"latitude 5227.074407 is outside", "NMEA ddmm.mmmm", "52 degrees 27.074407 minutes, 52.4512401 degrees"}},
		{"lon", []llRow{{0, 52.45, 0.17, 2}, {1, 52.45, 0.17, 2}, {2, 52.45, 1010.43, 2}},
			map[string]string{"csv": "lon.csv:4: column lon", "arrow": "batch 1 row 0 (row 2 of the file, counting from 0): column lon", "parquet": ": column lon:"},
			// 1010.43 read as dddmm.mm: 10 degrees 10.43 minutes.
			[]string{"longitude 1010.43 is outside -180 to 180 degrees (or 0 to 360)", "10 degrees 10.43 minutes"}},
	} {
		split := 1
		if c.name == "lon" {
			split = 2
		}
		files := latLonLogs(t, c.name, c.rows, split)
		for _, ext := range []string{"csv", "arrow", "parquet"} {
			_, err := ReadSamples(files[ext], WithAllocator(checked(t)))
			if err == nil {
				t.Errorf("%s %s: read without error", c.name, ext)
				continue
			}
			// A Parquet reader's batches are not the file's row groups
			// (Error.FileRow), so only the column is checked there.
			for _, w := range append([]string{c.at[ext]}, c.want...) {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("%s %s: error %q lacks %q", c.name, ext, err, w)
				}
			}
		}
	}
}

// TestOriginLineOutOfRangeRefused: an origin line whose latitude is out of
// range was taken as it stood (inspect showed it; convert wrote it on);
// now it is refused naming its line, and one swapped says an origin is
// written latitude first. Fails before.
func TestOriginLineOutOfRangeRefused(t *testing.T) {
	p := writeFile(t, "o.csv", "# undercurrent.frame: enu\n# undercurrent.origin: 95 0.1738 1.5\ntime,x,y,z,bx,by,bz\n0,0,0,0,1,2,3\n1,1,0,0,1,2,3\n")
	_, err := ReadSamples(p)
	wantErr(t, err, filepath.Base(p)+":2: the origin line \"# undercurrent.origin: 95 0.1738 1.5\": latitude 95 is outside -90 to 90 degrees")
	wantErr(t, err, "latitude first")
}

// TestLongitude360Origin: longitudes from 0 to 360 degrees east are the
// same places as -180 to 180 (the Earth-centred coordinates of NIMA
// TR8350.2 are periodic in longitude), so a log written that way reads;
// its origin (the first reading, or an origin line) is brought to -180 to
// 180 with a warning, so that results and a converted log's origin line
// give longitude in GeoJSON's range (RFC 7946 section 4). The positions
// are those of the same log written -180 to 180. Before, the origin kept
// 357.3 and locate failed on its result document after the fit.
func TestLongitude360Origin(t *testing.T) {
	east := []llRow{{0, 51.2, 357.3, 30}, {1, 51.2001, 357.3001, 30.5}, {2, 51.2002, 357.3003, 31}}
	west := make([]llRow, len(east))
	for i, r := range east {
		west[i] = r
		west[i].lon -= 360
	}
	fe := latLonLogs(t, "east", east, 1)
	fw := latLonLogs(t, "west", west, 1)
	for _, ext := range []string{"csv", "parquet"} {
		se, err := ReadSamples(fe[ext])
		if err != nil {
			t.Fatalf("%s: %v", ext, err)
		}
		sw, err := ReadSamples(fw[ext])
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(se.Origin.Lon-(-2.7)) > 1e-12 || se.Origin.Lat != 51.2 {
			t.Errorf("%s: origin %v, want 51.2 -2.7", ext, *se.Origin)
		}
		warned := false
		for _, w := range se.Warnings {
			warned = warned || strings.Contains(w, "357.3 is read as -2.7")
		}
		if !warned {
			t.Errorf("%s: warnings %q, want one saying 357.3 is read as -2.7", ext, se.Warnings)
		}
		for i := range se.X {
			if d := math.Hypot(se.X[i]-sw.X[i], se.Y[i]-sw.Y[i]); d > 1e-6 || se.Z[i] != sw.Z[i] {
				t.Errorf("%s: reading %d at %v %v %v, the -180..180 log's at %v %v %v", ext, i, se.X[i], se.Y[i], se.Z[i], sw.X[i], sw.Y[i], sw.Z[i])
			}
		}
	}
	// An origin line given 0 to 360 is read the same way, and written
	// back -180 to 180 (convert writes the samples' origin).
	p := writeFile(t, "o360.csv", "# undercurrent.origin: 51.2 357.3 30\ntime,x,y,z,bx,by,bz\n0,0,0,0,1,2,3\n1,1,0,0,1,2,3\n")
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.Origin.Lon-(-2.7)) > 1e-12 {
		t.Errorf("origin line 357.3: origin %v, want longitude -2.7", *s.Origin)
	}
	out := filepath.Join(t.TempDir(), "conv.csv")
	if err := WriteSamples(out, s); err != nil {
		t.Fatal(err)
	}
	back, err := ReadSamples(out)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(back.Origin.Lon-(-2.7)) > 1e-12 {
		t.Errorf("written back: origin %v", *back.Origin)
	}
}
