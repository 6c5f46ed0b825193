package main

import (
	"encoding/json"
	"os"
	"path/filepath"
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
	log, calPath := writeNEDSensorLog(t, s, "# undercurrent.frame: ned\n")
	dir := filepath.Dir(log)
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
	text, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	bad := filepath.Join(dir, "bad.csv")
	if err := os.WriteFile(bad, []byte(strings.Replace(string(text), "frame: ned", "frame: nez", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := cli(t, "inspect", bad); code != 1 || !strings.Contains(stderr, `"nez", which names no frame`) {
		t.Errorf("frame line nez: exit %d, stderr:\n%s", code, stderr)
	}
}
