package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestLocateLongRouteConvertedNotRefused: a latitude/longitude log of
// single-line.toml's seven traverses moved 40 km apart along the cable
// (a 240 km route), converted by convert about its first reading, was
// refused by locate as "a projected grid's eastings and northings": the
// readings' centre lies 120 km from the origin, over the 100 km the
// refusal judged the centre by (found in review; the log convert itself
// wrote). A log convert writes always has a reading near its origin, and
// is now read and fitted. A hand-written origin line 120 km from every
// reading is fitted too, with a warning that says how far the nearest
// reading lies. Fails before the change (exit 1 for both).
func TestLocateLongRouteConvertedNotRefused(t *testing.T) {
	dir := t.TempDir()
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	// Along the cable (azimuth 60 degrees) the field is the same: each
	// traverse moved k*40 km along it keeps its readings' field.
	dir60 := [2]float64{0.8660254037844386, 0.5}
	index := map[string]int{}
	origin := ingest.Geodetic{Lat: 52, Lon: -1.5, H: 0}
	var b strings.Builder
	b.WriteString("time,lat,lon,height,bx,by,bz,group\n")
	for i := range s.X {
		k, ok := index[s.Group[i]]
		if !ok {
			k = len(index)
			index[s.Group[i]] = k
		}
		d := 40e3 * float64(k)
		g := origin.FromLocal([3]float64{s.X[i] + d*dir60[0], s.Y[i] + d*dir60[1], s.Z[i]})
		fmt.Fprintf(&b, "%.6f,%.10f,%.10f,%.4f,%.4f,%.4f,%.4f,%s\n", s.Time[i], g.Lat, g.Lon, g.H, s.Bx[i], s.By[i], s.Bz[i], s.Group[i])
	}
	if len(index) != 7 {
		t.Fatalf("%d traverses, want 7", len(index))
	}
	ll := filepath.Join(dir, "long.csv")
	if err := os.WriteFile(ll, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	conv := filepath.Join(dir, "long-local.csv")
	mustCLI(t, "convert", ll, conv)
	code, out, errOut := cli(t, "locate", "--group-by", "group", conv)
	if code != 0 {
		t.Fatalf("locate of convert's own 240 km route: exit %d\n%s", code, errOut)
	}
	if strings.Contains(out+errOut, "projected grid") {
		t.Errorf("locate of convert's own log speaks of a grid:\n%s%s", out, errOut)
	}

	// A local log whose origin line lies 120 km from every reading (72 km
	// west, 96 km south of the survey): read about it, with a warning.
	local := &ingest.Samples{}
	*local = *s
	local.X, local.Y = append([]float64(nil), s.X...), append([]float64(nil), s.Y...)
	for i := range local.X {
		local.X[i] += 72e3
		local.Y[i] += 96e3
	}
	local.Origin = &ingest.Geodetic{Lat: 52.2, Lon: -1.5, H: 80}
	far := filepath.Join(dir, "far-origin.csv")
	if err := ingest.WriteSamples(far, local); err != nil {
		t.Fatal(err)
	}
	code, out, errOut = cli(t, "locate", "--group-by", "group", far)
	if code != 0 {
		t.Fatalf("locate of a log 120 km from its origin line: exit %d\n%s", code, errOut)
	}
	if !strings.Contains(out, "no reading lies within 120 km of the origin") || !strings.Contains(out, "read as metres east and north of that origin") {
		t.Errorf("no warning of readings 120 km from their origin:\n%s", out)
	}
	if insp := mustCLI(t, "inspect", far); !strings.Contains(insp, "no reading lies within 120 km of the origin") || strings.Contains(insp, "locate refuses") {
		t.Errorf("inspect of a log 120 km from its origin line:\n%s", insp)
	}
}
