package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestEveryReaderTakesTheInputFlags checks that every command that reads
// logs declares the same input flags (README: "every command that reads
// logs takes the same flags").
func TestEveryReaderTakesTheInputFlags(t *testing.T) {
	for _, name := range []string{"inspect", "convert", "locate", "calibrate", "replay"} {
		fs := commands[name].flagSet(os.Stderr)
		for _, flag := range []string{"column", "unit", "delimiter", "comment", "header", "frame", "origin", "decimal-comma", "iaga-baseline-frame"} {
			if fs.Lookup(flag) == nil {
				t.Errorf("%s has no --%s", name, flag)
			}
		}
		if name != "inspect" && fs.Lookup("drop-missing") == nil {
			t.Errorf("%s has no --drop-missing", name)
		}
	}
}

// TestCalibrateColumnAndUnit checks calibrate with a logger's own column
// names and unit: a spin log with header t,magX,magY,magZ in microtesla
// gives the same calibration as the same readings in canonical nT columns.
func TestCalibrateColumnAndUnit(t *testing.T) {
	dir := t.TempDir()
	canon := filepath.Join(dir, "spin.csv")
	writeSpinLog(t, canon, [3]float64{640, -215, 90}, nil)
	text, err := os.ReadFile(canon)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("t,magX,magY,magZ\n")
	for _, line := range strings.Split(strings.TrimSpace(string(text)), "\n")[1:] {
		var n int
		var x, y, z float64
		if _, err := fmt.Sscanf(line, "%d,%g,%g,%g", &n, &x, &y, &z); err != nil {
			t.Fatal(err)
		}
		// nT to uT; %.17g keeps every digit.
		fmt.Fprintf(&b, "%d,%.17g,%.17g,%.17g\n", n, x/1000, y/1000, z/1000)
	}
	logger := filepath.Join(dir, "logger.csv")
	if err := os.WriteFile(logger, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := runCmd("calibrate", "--spin", logger)
	if code != 1 || !strings.Contains(errOut, "bx") {
		t.Errorf("without a mapping: exit %d, stderr %q; want a refusal naming the missing column", code, errOut)
	}
	a, b2 := filepath.Join(dir, "a.json"), filepath.Join(dir, "b.json")
	if code, _, errOut := runCmd("calibrate", "--spin", canon, "-o", a); code != 0 {
		t.Fatalf("canonical: exit %d: %s", code, errOut)
	}
	if code, _, errOut := runCmd("calibrate", "--spin", logger, "--column", "time=t,bx=magX,by=magY,bz=magZ", "--unit", "bx=uT,by=uT,bz=uT", "-o", b2); code != 0 {
		t.Fatalf("mapped: exit %d: %s", code, errOut)
	}
	var ca, cb struct{ Offset [3]float64 }
	for p, c := range map[string]*struct{ Offset [3]float64 }{a: &ca, b2: &cb} {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(data, c); err != nil {
			t.Fatal(err)
		}
	}
	for k := range 3 {
		// The same readings to within the rounding of nT -> uT -> nT.
		if math.Abs(ca.Offset[k]-cb.Offset[k]) > 1e-6 {
			t.Errorf("offset %d: %g nT mapped, %g nT canonical", k, cb.Offset[k], ca.Offset[k])
		}
	}
}

// TestLocateFrameOriginDelimiter checks locate with --frame ned,
// --delimiter and --origin: the single-line scenario's log rewritten with
// ';' delimiters, north-east-down axes (field and position) and WGS84
// positions about a given origin fits as the canonical log does, and the
// document records the origin given.
func TestLocateFrameOriginDelimiter(t *testing.T) {
	s, dir, canon := canonicalLog(t, "single-line.toml")
	// Kestrel Moor, an invented site on the moor.
	origin := ingest.Geodetic{Lat: 54.3125, Lon: -2.0883, H: 312}
	var ned, geo strings.Builder
	ned.WriteString("time;x;y;z;bx;by;bz;group\n")
	geo.WriteString("time,lat,lon,height,bx,by,bz,group\n")
	for i := range s.Len() {
		// NED: x north, y east, z down.
		fmt.Fprintf(&ned, "%.17g;%.17g;%.17g;%.17g;%.17g;%.17g;%.17g;%s\n", s.Time[i], s.Y[i], s.X[i], -s.Z[i], s.By[i], s.Bx[i], -s.Bz[i], s.Group[i])
		g := origin.FromLocal([3]float64{s.X[i], s.Y[i], s.Z[i]})
		fmt.Fprintf(&geo, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%s\n", s.Time[i], g.Lat, g.Lon, g.H, s.Bx[i], s.By[i], s.Bz[i], s.Group[i])
	}
	nedPath, geoPath := filepath.Join(dir, "ned.txt"), filepath.Join(dir, "geo.csv")
	if err := os.WriteFile(nedPath, []byte(ned.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(geoPath, []byte(geo.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	decode := func(args ...string) resultDoc { return locateGrouped(t, args...) }
	want := decode(canon)
	for _, tc := range []struct {
		name string
		args []string
		tol  float64 // metres
	}{
		{"ned", []string{"--frame", "ned", "--delimiter", ";", nedPath}, 1e-9},
		// WGS84 round trip through the ECEF conversion: well under a millimetre.
		{"origin", []string{"--origin", fmt.Sprintf("%.10f,%.10f,%g", origin.Lat, origin.Lon, origin.H), geoPath}, 1e-4},
	} {
		got := decode(tc.args...)
		if len(got.Groups) != len(want.Groups) {
			t.Fatalf("%s: %d groups, want %d", tc.name, len(got.Groups), len(want.Groups))
		}
		for i, g := range got.Groups {
			a, w := g.Sources[0], want.Groups[i].Sources[0]
			if math.Abs(a.Current-w.Current) > 1e-6*math.Abs(w.Current) || math.Abs(a.Depth-w.Depth) > tc.tol+1e-6 {
				t.Errorf("%s %s: %.9g A at %.9g m, want %.9g A at %.9g m", tc.name, g.Key, a.Current, a.Depth, w.Current, w.Depth)
			}
		}
		if tc.name == "origin" && (got.Frame.Origin == nil || math.Abs(got.Frame.Origin.Lat-origin.Lat) > 1e-9) {
			t.Errorf("origin: document frame origin %+v, want lat %g", got.Frame.Origin, origin.Lat)
		}
	}
}

// TestLocateDropMissing checks --drop-missing: a log with a missing field
// value is refused with the option to give, and fitted without that row
// when it is given.
func TestLocateDropMissing(t *testing.T) {
	dir := t.TempDir()
	good := simulatedLog(t, dir, "line.csv")
	text, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(text), "\n")
	var at int
	for i, l := range lines {
		if strings.HasPrefix(l, "time,") {
			at = i + 5
			break
		}
	}
	f := strings.Split(lines[at], ",")
	f[5] = "" // by
	lines[at] = strings.Join(f, ",")
	holes := filepath.Join(dir, "holes.csv")
	if err := os.WriteFile(holes, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", holes)
	if code != 1 || !strings.Contains(errOut, fmt.Sprintf("holes.csv:%d", at+1)) || !strings.Contains(errOut, "--drop-missing") || strings.Contains(errOut, "by default") {
		t.Errorf("exit %d, stderr %q; want the line and --drop-missing", code, errOut)
	}
	var doc, ref resultDoc
	if err := json.Unmarshal([]byte(mustCLI(t, "locate", "--json", "--group-by", "group", "--drop-missing", holes)), &doc); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(mustCLI(t, "locate", "--json", "--group-by", "group", good)), &ref); err != nil {
		t.Fatal(err)
	}
	total := func(d resultDoc) (n int) {
		for _, g := range d.Groups {
			n += g.Points
		}
		return n
	}
	if total(doc) != total(ref)-1 {
		t.Errorf("%d readings fitted, want %d (one row dropped)", total(doc), total(ref)-1)
	}
	if !containsAll(doc.Warnings, "dropped 1 of") {
		t.Errorf("warnings %q lack the dropped row", doc.Warnings)
	}
}
