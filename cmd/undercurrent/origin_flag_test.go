package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// latLonLogs simulates the Kestrel Moor walk-through survey (local x, y
// about its origin 54.3125, -2.0883, 312 m) and writes it as two logs of
// WGS84 latitude and longitude, traverses T01-T10 and T11-T21, the
// positions turned by the WGS84 ellipsoid's radii of curvature at the
// origin (NIMA TR8350.2: a = 6378137 m, f = 1/298.257223563; meridian
// radius M = a(1-e²)/(1-e² sin²φ)^1.5, prime vertical N = a/(1-e²
// sin²φ)^0.5), good to a few centimetres over the survey's 400 m. It also
// returns the local log.
func latLonLogs(t *testing.T, dir string) (a, b, local string) {
	t.Helper()
	local = filepath.Join(dir, "survey.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "kestrel-moor-step.toml"), "-o", local)
	// The log's own origin given again is no contradiction.
	mustCLI(t, "locate", "--group-by", "group", "--origin", "54.3125,-2.0883,312", local)
	raw, err := os.ReadFile(local)
	if err != nil {
		t.Fatal(err)
	}
	const lat0, lon0 = 54.3125, -2.0883
	const aEll, f = 6378137.0, 1 / 298.257223563
	e2 := f * (2 - f)
	s := math.Sin(lat0 * math.Pi / 180)
	m := aEll * (1 - e2) / math.Pow(1-e2*s*s, 1.5)
	n := aEll / math.Sqrt(1-e2*s*s)
	var outA, outB []string
	for _, line := range strings.Split(strings.TrimSpace(string(raw)), "\n") {
		if strings.HasPrefix(line, "#") {
			continue
		}
		c := strings.Split(line, ",")
		if c[0] == "time" {
			h := "time,lat,lon,height,bx,by,bz,group"
			outA, outB = append(outA, h), append(outB, h)
			continue
		}
		x, _ := strconv.ParseFloat(c[1], 64)
		y, _ := strconv.ParseFloat(c[2], 64)
		z, _ := strconv.ParseFloat(c[3], 64)
		lat := lat0 + y/m*180/math.Pi
		lon := lon0 + x/(n*math.Cos(lat0*math.Pi/180))*180/math.Pi
		row := fmt.Sprintf("%s,%.10f,%.10f,%.3f,%s", c[0], lat, lon, 312+z, strings.Join(c[4:], ","))
		if g := c[7]; g <= "T10" {
			outA = append(outA, row)
		} else {
			outB = append(outB, row)
		}
	}
	a, b = filepath.Join(dir, "ll-a.csv"), filepath.Join(dir, "ll-b.csv")
	for p, rows := range map[string][]string{a: outA, b: outB} {
		if err := os.WriteFile(p, []byte(strings.Join(rows, "\n")+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return a, b, local
}

// TestLocateOriginFlag: --origin places logs with latitude and longitude
// columns. Before, it was silently ignored for a log in local metres while
// results.json's settings recorded it (frame.origin the log's own, 11 km
// from the one named); and two latitude/longitude logs read with the
// default origin (each about its own first reading) were refused with
// advice to convert them, which needs --origin anyway.
func TestLocateOriginFlag(t *testing.T) {
	dir := t.TempDir()
	a, b, local := latLonLogs(t, dir)

	// A local log with an origin of its own, and one without any.
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--origin", "53.3,-1.0", local)
	if code != 2 || !strings.Contains(errOut, "--origin 53.3,-1.0 places logs with latitude and longitude columns") || !strings.Contains(errOut, local+" has none") {
		t.Errorf("--origin on a local log: exit %d, want 2 and a refusal naming the log:\n%s", code, errOut)
	}
	// The log's own origin given again is no contradiction.
	mustCLI(t, "locate", "--group-by", "group", "--origin", "54.3125,-2.0883,312", local)
	raw, err := os.ReadFile(local)
	if err != nil {
		t.Fatal(err)
	}
	bare := filepath.Join(dir, "bare.csv")
	var keep []string
	for _, l := range strings.SplitAfter(string(raw), "\n") {
		if !strings.HasPrefix(l, "# undercurrent.origin") {
			keep = append(keep, l)
		}
	}
	if err := os.WriteFile(bare, []byte(strings.Join(keep, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "locate", "--group-by", "group", "--origin", "mean", bare); code != 2 || !strings.Contains(errOut, "leave --origin out") {
		t.Errorf("--origin mean on a local log without an origin: exit %d, want 2:\n%s", code, errOut)
	}

	// Two latitude/longitude logs: the refusal names --origin with the
	// first log's origin, and that origin works; the document's frame and
	// settings then agree.
	code, _, errOut = cli(t, "locate", "--group-by", "group", a, b)
	m := regexp.MustCompile(`add --origin ([-0-9.]+,[-0-9.]+,[-0-9.]+) \(the first log's\)`).FindStringSubmatch(errOut)
	if code != 1 || m == nil {
		t.Fatalf("two latitude/longitude logs: exit %d, want 1 and a refusal naming --origin LAT,LON,HEIGHT:\n%s", code, errOut)
	}
	given := m[1]
	// The first log's first reading: T01's start, 6 m north of the
	// origin, 0.25 m up.
	lat, lon, h := parseOrigin(t, given)
	if math.Abs(lat-54.3125-6/111000.0) > 2e-6 || math.Abs(lon+2.0883) > 1e-5 || h != 312.25 {
		t.Errorf("suggested --origin %s, want about T01's first reading (54.312554, -2.0883, 312.25)", given)
	}
	var doc struct {
		Frame struct {
			Origin struct {
				Lat float64 `json:"lat_deg"`
				Lon float64 `json:"lon_deg"`
			} `json:"origin"`
		} `json:"frame"`
		Settings map[string]string `json:"settings"`
		Groups   []struct{}        `json:"groups"`
	}
	out := mustCLI(t, "locate", "--json", "--group-by", "group", "--origin", given, a, b)
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Groups) != 21 || doc.Frame.Origin.Lat != lat || doc.Frame.Origin.Lon != lon || doc.Settings["origin"] != given {
		t.Errorf("%d groups, frame origin %+v, settings origin %q; want 21 groups about the origin given", len(doc.Groups), doc.Frame.Origin, doc.Settings["origin"])
	}

	// The local logs beside ll-a.csv hold only the traverses it does not
	// (T11-T21): the same readings twice are refused as a copy.
	local, bare = laterTraverses(t, local), laterTraverses(t, bare)

	// A latitude/longitude log beside the local one about another origin:
	// refused, naming the log and its own origin.
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--origin", "54.4,-2.0", a, local)
	if code != 1 || !strings.Contains(errOut, local+": the log's x, y are local metres about its own origin (54.3125, -2.0883, 312 m), not the --origin 54.4,-2.0 given") {
		t.Errorf("a local log about another origin than --origin: exit %d, want 1 and a refusal naming it:\n%s", code, errOut)
	}
	// Beside a local log without an origin: a warning that --origin did
	// not place it.
	out = mustCLI(t, "locate", "--json", "--group-by", "group", "--origin", "54.3125,-2.0883,312", a, bare)
	var warned struct {
		Warnings []string `json:"warnings"`
	}
	if err := json.Unmarshal([]byte(out), &warned); err != nil {
		t.Fatal(err)
	}
	if !anyHas(warned.Warnings, bare+": --origin 54.3125,-2.0883,312 does not apply") {
		t.Errorf("warnings %q, want one saying --origin does not apply to %s", warned.Warnings, bare)
	}
}

// laterTraverses writes a copy of the local log path holding its comment
// and header lines and the readings of traverses after T10, and returns
// its path.
func laterTraverses(t *testing.T, path string) string {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var keep []string
	for _, l := range strings.SplitAfter(string(raw), "\n") {
		c := strings.Split(strings.TrimSpace(l), ",")
		if strings.HasPrefix(l, "#") || c[0] == "time" || len(c) > 7 && c[7] > "T10" {
			keep = append(keep, l)
		}
	}
	out := strings.TrimSuffix(path, ".csv") + "-t11.csv"
	if err := os.WriteFile(out, []byte(strings.Join(keep, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	return out
}

func parseOrigin(t *testing.T, s string) (lat, lon, h float64) {
	t.Helper()
	var v [3]float64
	for i, p := range strings.Split(s, ",") {
		x, err := strconv.ParseFloat(p, 64)
		if err != nil {
			t.Fatal(err)
		}
		v[i] = x
	}
	return v[0], v[1], v[2]
}

func anyHas(list []string, sub string) bool {
	for _, s := range list {
		if strings.Contains(s, sub) {
			return true
		}
	}
	return false
}
