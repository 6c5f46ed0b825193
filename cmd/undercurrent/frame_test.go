package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// nedToENUCalibration applied to readings turned from north, east, down to
// east, north, up (IAGA-2002 and geophysical practice: X north, Y east, Z
// down) gives the calibration applied in the sensor's own axes, turned.
func TestNEDCalibrationTurn(t *testing.T) {
	c := &calibrate.Calibration{Offset: [3]float64{180, -95, 240},
		Matrix: [3][3]float64{{1.04, 0.02, -0.01}, {0.01, 0.97, 0.03}, {-0.02, 0.015, 1.02}}}
	turn := func(v [3]float64) [3]float64 { return [3]float64{v[1], v[0], -v[2]} } // NED -> ENU
	ce := nedToENUCalibration(c)
	for _, r := range [][3]float64{{17000, -400, 46000}, {-3000, 21000, -45000}, {1, 2, 3}} {
		want := turn(c.Correct(r))
		got := ce.Correct(turn(r))
		for k := range 3 {
			if math.Abs(got[k]-want[k]) > 1e-9 {
				t.Fatalf("reading %v: %v, want %v", r, got, want)
			}
		}
	}
}

// A sensor carried level with its x, y, z axes along north, east and down,
// with its own offset and soft-iron matrix in those axes, logs the
// single-line survey; locate --frame ned --calibration recovers the
// scenario's line (position, depth, current) within its sigmas. Before, the
// calibration was applied after ingest had turned the axes to east, north,
// up, so the offsets and the matrix landed on the wrong axes (currents 3
// sigma off on the Kestrel Moor walk-through, worse than no calibration).
func TestLocateNEDCalibration(t *testing.T) {
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	log, calPath := writeNEDSensorLog(t, s, "")
	out := mustCLI(t, "locate", "--json", "--frame", "ned", "--calibration", calPath, "--group-by", "group", "--reference-z", "0", log)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		checkCrossing(t, g.Key, g.Sources[0], truth[g.Key][0], 0, 0)
	}
	for _, w := range doc.Warnings {
		if strings.Contains(w, "after the calibration") {
			t.Errorf("warning %q: the calibration fits this sensor", w)
		}
	}
}

// writeNEDSensorLog writes the survey s as logged by a sensor carried level
// with its x, y, z axes along north, east and down, with its own offset and
// soft-iron matrix in those axes, as a CSV whose text begins with head
// (then the header row), and saves the calibration that undoes them; it
// returns the log's and the calibration's paths, in a temporary directory.
func writeNEDSensorLog(t *testing.T, s *ingest.Samples, head string) (log, calPath string) {
	t.Helper()
	m := [3][3]float64{{1.04, 0.02, -0.01}, {0.01, 0.97, 0.03}, {-0.02, 0.015, 1.02}}
	off := [3]float64{180, -95, 240}
	var b strings.Builder
	b.WriteString(head + "time,x,y,z,bx,by,bz,group\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range s.Len() {
		ned := [3]float64{s.By[i], s.Bx[i], -s.Bz[i]} // the field in the sensor's axes
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
	log = filepath.Join(dir, "ned.csv")
	if err := os.WriteFile(log, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return log, saveInverseCalibration(t, dir, m, off)
}
