package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// A survey log whose own first line says "# undercurrent.frame: ned" is
// read as --frame ned reads it: turned from north, east, down (X north,
// Y east, Z down, the geophysical convention of IAGA-2002) to east,
// north, up, with the calibration applied in the file's own axes. The
// single-line scenario's line is recovered within its sigmas. Before, the
// line was dropped and the log read as east, north, up: no current found
// on any traverse, and nothing said why.
func TestLocateFrameLineNED(t *testing.T) {
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	m := [3][3]float64{{1.04, 0.02, -0.01}, {0.01, 0.97, 0.03}, {-0.02, 0.015, 1.02}}
	off := [3]float64{180, -95, 240}
	var b strings.Builder
	b.WriteString("# undercurrent.frame: ned\ntime,x,y,z,bx,by,bz,group\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range s.Len() {
		ned := [3]float64{s.By[i], s.Bx[i], -s.Bz[i]}
		var raw [3]float64
		for r := range 3 {
			raw[r] = off[r]
			for c := range 3 {
				raw[r] += m[r][c] * ned[c]
			}
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%s,%s,%s\n", f(s.Time[i]), f(s.Y[i]), f(s.X[i]), f(-s.Z[i]), f(raw[0]), f(raw[1]), f(raw[2]), s.Group[i])
	}
	dir := t.TempDir()
	log := filepath.Join(dir, "ned.csv")
	if err := os.WriteFile(log, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	calPath := saveInverseCalibration(t, dir, m, off)
	out := mustCLI(t, "locate", "--json", "--calibration", calPath, "--group-by", "group", "--reference-z", "0", log)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		checkCrossing(t, g.Key, g.Sources[0], truth[g.Key][0], 0, 0)
	}

	// A calibration is made in the file's own axes: calibrate refuses a
	// log its frame line turned, and names --frame enu, which reads the
	// columns as they are (with a warning that it overrides the line).
	code, _, stderr := cli(t, "calibrate", "--zero", log, "--unit", "bx=nT,by=nT,bz=nT")
	if code != 1 || !strings.Contains(stderr, "give --frame enu") {
		t.Errorf("calibrate of a log marked ned: exit %d, stderr:\n%s\nwant it refused, naming --frame enu", code, stderr)
	}
	// A frame the line does not name is refused, not read as east, north, up.
	bad := filepath.Join(dir, "bad.csv")
	if err := os.WriteFile(bad, []byte(strings.Replace(b.String(), "frame: ned", "frame: nez", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := cli(t, "inspect", bad); code != 1 || !strings.Contains(stderr, `"nez", which names no frame`) {
		t.Errorf("frame line nez: exit %d, stderr:\n%s", code, stderr)
	}
}
