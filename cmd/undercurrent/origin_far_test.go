package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestOriginValuesRefused: --origin took NaN (convert wrote a log of NaN
// positions with exit 0, locate failed only after the whole job), never
// looked at the height, and took longitudes up to 360, which locate
// refused only at its end as an internal error ("the result document is
// not valid"). Latitudes run from -90 to 90 and longitudes from -180 to
// 180 (WGS84, NIMA TR8350.2; GeoJSON positions, RFC 7946 3.1.1): any
// other value, and one that is not finite, is a usage error (exit 2)
// before any work in every command that reads logs, and convert leaves
// no output behind.
func TestOriginValuesRefused(t *testing.T) {
	dir := t.TempDir()
	a, _, _ := latLonLogs(t, dir)
	cases := []struct{ origin, want string }{
		{"nan,0", "the latitude is NaN"},
		{"54.3,nan", "the longitude is NaN"},
		{"54.3,-2.1,nan", "the height is NaN"},
		{"54.3,-2.1,inf", "the height is +Inf"},
		{"54.3,-inf", "the longitude is -Inf"},
		{"45,200", "longitude 200 is east of 180: give it less 360, -160"},
		{"45,-181", "longitude -181 is outside -180 to 180"},
		{"95,10", "latitude 95 is outside -90 to 90 (latitude comes first: --origin 10,95?)"},
	}
	out := filepath.Join(dir, "out.csv")
	for _, tc := range cases {
		for _, cmd := range [][]string{
			{"locate", "--group-by", "group", "--origin", tc.origin, a},
			{"convert", "--origin", tc.origin, a, out},
			{"inspect", "--json", "--origin", tc.origin, a},
			{"calibrate", "--origin", tc.origin, "--spin", a, "-o", filepath.Join(dir, "cal.json")},
			{"replay", "--asset", "fenwick-lane", "--broker", "nats://127.0.0.1:1", "--wait", "1ms", "--origin", tc.origin, a},
		} {
			code, _, errOut := cli(t, cmd...)
			if code != 2 || !strings.Contains(errOut, tc.want) {
				t.Errorf("%s --origin %s: exit %d, want 2 and %q:\n%s", cmd[0], tc.origin, code, tc.want, errOut)
			}
		}
		if _, err := os.Stat(out); err == nil {
			t.Fatalf("convert --origin %s left %s behind", tc.origin, out)
		}
	}
	// The extremes are places (the command would refuse them as far
	// from the log).
	for _, v := range [][3]float64{{-90, -180, -430}, {90, 180, 8850}} {
		if err := checkOriginValues("", v); err != nil {
			t.Errorf("%v refused: %v", v, err)
		}
	}
}

// firstRow returns the latitude, longitude and height of the first data
// row of a log written by latLonLogs.
func firstRow(t *testing.T, path string) (lat, lon, h float64) {
	t.Helper()
	row := strings.Split(strings.Split(readText(t, path), "\n")[1], ",")
	var v [3]float64
	for i := range v {
		x, err := strconv.ParseFloat(row[1+i], 64)
		if err != nil {
			t.Fatal(err)
		}
		v[i] = x
	}
	return v[0], v[1], v[2]
}

// sphereKm is the great-circle distance on the sphere of the IUGG mean
// radius, 6371.0088 km (Moritz, Geodetic Reference System 1980), by the
// spherical law of cosines.
func sphereKm(lat1, lon1, lat2, lon2 float64) float64 {
	r := math.Pi / 180
	c := math.Sin(lat1*r)*math.Sin(lat2*r) + math.Cos(lat1*r)*math.Cos(lat2*r)*math.Cos((lon2-lon1)*r)
	return 6371.0088 * math.Acos(math.Max(-1, math.Min(1, c)))
}

// TestOriginFarFromLogRefused: an --origin thousands of km from the log
// (latitude and longitude typed the wrong way round, as GeoJSON writes
// them) placed the positions in a tangent plane whose frame is turned
// far from each reading's field: depths came out 41 % shallow (77 sigma)
// with exit 0 and no word. An origin more than 50 km from a log's first
// reading is refused now, exit 2, by locate, convert and inspect alike,
// naming the distance (checked against the great circle on the IUGG mean
// sphere, to 1 km: the message rounds to the km) and the first reading
// as the origin to give, which then runs without a word about it. One
// 20.8 km away (0.187 degrees of latitude, about 0.1 sigma in the
// measured survey) is warned of with its distance; one within 5 km (the
// scenario's own origin, 6 m from the first reading, and one 3 km north)
// runs silently.
func TestOriginFarFromLogRefused(t *testing.T) {
	dir := t.TempDir()
	a, _, _ := latLonLogs(t, dir)
	lat, lon, h := firstRow(t, a)
	out := filepath.Join(dir, "out.csv")

	swapped := "-2.0883,54.3125"
	wantKm := sphereKm(lat, lon, -2.0883, 54.3125)
	for _, cmd := range [][]string{
		{"locate", "--group-by", "group", "--origin", swapped, a},
		{"convert", "--origin", swapped, a, out},
		{"inspect", "--origin", swapped, a},
	} {
		code, _, errOut := cli(t, cmd...)
		m := regexp.MustCompile(`--origin -2.0883,54.3125 is (\d+) km from the log's first reading`).FindStringSubmatch(errOut)
		if code != 2 || m == nil || !strings.Contains(errOut, "latitude and longitude look the wrong way round") {
			t.Errorf("%s --origin %s: exit %d, want 2 naming the distance and the swap:\n%s", cmd[0], swapped, code, errOut)
			continue
		}
		if km, _ := strconv.ParseFloat(m[1], 64); math.Abs(km-wantKm) > 1 {
			t.Errorf("%s: said %s km, want %.1f km (great circle)", cmd[0], m[1], wantKm)
		}
		given := regexp.MustCompile(`such as the log's first reading, --origin (\S+)`).FindStringSubmatch(errOut)
		if given == nil {
			t.Errorf("%s: no origin suggested:\n%s", cmd[0], errOut)
			continue
		}
		if la, lo, he := parseOrigin(t, given[1]); math.Abs(la-lat) > 1e-9 || math.Abs(lo-lon) > 1e-9 || math.Abs(he-h) > 1e-3 {
			t.Errorf("%s: suggested --origin %s, want the first reading (%v, %v, %v)", cmd[0], given[1], lat, lon, h)
		}
	}
	if _, err := os.Stat(out); err == nil {
		t.Fatal("convert with a far origin left its output behind")
	}
	// A sign typed wrong is named as such.
	if code, _, errOut := cli(t, "inspect", "--origin", "-54.3125,-2.0883", a); code != 2 || !strings.Contains(errOut, "one of its signs looks the wrong way round") {
		t.Errorf("--origin with the latitude's sign wrong: exit %d:\n%s", code, errOut)
	}

	// Within 5 km: no word of the origin.
	first := strconv.FormatFloat(lat, 'f', 9, 64) + "," + strconv.FormatFloat(lon, 'f', 9, 64) + "," + strconv.FormatFloat(h, 'f', 3, 64)
	for _, near := range []string{first, "54.3125,-2.0883,312", "54.34,-2.0883,312"} {
		code, stdout, errOut := cli(t, "locate", "--group-by", "group", "--origin", near, a)
		if code != 0 || strings.Contains(stdout+errOut, "from the log's first reading") {
			t.Errorf("--origin %s (within 5 km): exit %d, want 0 and no word of the origin:\n%s%s", near, code, stdout, errOut)
		}
	}
	// 20.8 km north: a warning naming the distance, in the results too.
	wantKm = sphereKm(lat, lon, 54.5, -2.0883)
	code, stdout, errOut := cli(t, "locate", "--json", "--group-by", "group", "--origin", "54.5,-2.0883,312", a)
	m := regexp.MustCompile(`--origin 54.5,-2.0883,312 is ([0-9.]+) km from the log's first reading`).FindStringSubmatch(stdout)
	if code != 0 || m == nil || !strings.Contains(errOut, "warning: "+a+": --origin 54.5,-2.0883,312 is") {
		t.Fatalf("--origin 20.8 km away: exit %d, want 0 and a warning in the results and on stderr:\n%s", code, errOut)
	}
	if km, _ := strconv.ParseFloat(m[1], 64); math.Abs(km-wantKm) > 0.1 {
		t.Errorf("said %s km, want %.2f km (great circle)", m[1], wantKm)
	}
}
