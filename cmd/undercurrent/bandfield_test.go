package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// railLog simulates a DC rail (invented: the Quarry Road depot, a running
// rail 0.1 m down carrying current A east, walked across by 15 traverses
// of length m at 0.3 m above the ground, 2 nT noise), writes it with every
// field value multiplied by scale and, when rangeNT > 0, clamped to
// +-rangeNT (a magnetometer reading up to that on each axis), and returns
// the log's path.
func railLog(t *testing.T, dir string, current, length, scale, rangeNT float64) string {
	t.Helper()
	name := fmt.Sprintf("rail%.0f-%g", current, scale)
	sc := filepath.Join(dir, name+".toml")
	text := fmt.Sprintf(`name = "rail"
seed = 3
start = "2026-03-02T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
count = 15
spacing_m = 5.0
first_at_m = 2.0
length_m = %g
speed_m_s = 0.5
sample_spacing_m = 0.05
turn_s = 10.0
[[conductor]]
kind = "line"
point = [0.0, 0.0, -0.1]
direction = [1.0, 0.0, 0.0]
current_a = %g
`, length, current)
	if err := os.WriteFile(sc, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	raw := filepath.Join(dir, name+"-raw.csv")
	if code, _, errOut := cli(t, "simulate", sc, "-o", raw); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errOut)
	}
	out := filepath.Join(dir, name+".csv")
	rewriteFieldCells(t, raw, out, func(c []string) {
		for k := 4; k <= 6; k++ {
			v, err := strconv.ParseFloat(c[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			v *= scale
			if rangeNT > 0 {
				v = math.Max(-rangeNT, math.Min(rangeNT, v))
			}
			c[k] = strconv.FormatFloat(v, 'f', 3, 64)
		}
	})
	return out
}

// TestBandWarningNotBesideARail: beside a DC rail of 1000-3000 A, 0.4 m
// from the sensor, a log's median |B| is above the Earth's band because
// its readings are in the rail's field (mu0 I / (2 pi r): 3000 A gives
// 1.5e6 nT at 0.4 m and still 1e5 nT at 6 m), not because its unit is
// wrong. In review locate said "median |B| 8.9e4 nT outside the Earth's
// band ... unit or scale is wrong" while it fitted the rail to 1000.00 A.
// With the rail's fitted field taken off, the fitted readings' median is
// the Earth's field (here 49 000 nT), so the warning is not given; the
// same log with its field values scaled by 10 (a scale that is wrong)
// keeps it, since a uniform tenfold Earth's field is left in the
// background.
func TestBandWarningNotBesideARail(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ current, length float64 }{{1000, 8}, {3000, 12}} {
		log := railLog(t, dir, c.current, c.length, 1, 1e5)
		m := medianOfLog(t, log)
		if m <= earthMaxNT {
			t.Fatalf("%.0f A: median |B| %.4g nT is inside the band: the test shows nothing", c.current, m)
		}
		code, stdout, errOut := cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--range-nt", "100000", log)
		if code != 0 {
			t.Fatalf("%.0f A: exit %d: %s", c.current, code, errOut)
		}
		if strings.Contains(stdout+errOut, earthBand) {
			t.Errorf("%.0f A rail (median |B| %.4g nT) warned of the Earth's band: %s%s", c.current, m, stdout, errOut)
		}
		if !strings.Contains(stdout, "15 sound") || !strings.Contains(stdout+errOut, "clipped at the magnetometer's range") {
			t.Errorf("%.0f A rail: want 15 sound fits and the clipped readings named: %s%s", c.current, stdout, errOut)
		}
	}
	// The same rail log as if its field columns were written in tenths
	// of a nanotesla: a scale that is wrong, which the band warning is
	// there for.
	log := railLog(t, dir, 300, 12, 10, 0)
	code, stdout, errOut := cli(t, "locate", "--group-by", "group", "--reference-z", "0", log)
	if code != 0 {
		t.Fatalf("scaled log: exit %d: %s", code, errOut)
	}
	if !strings.Contains(stdout+errOut, earthBand) || !strings.Contains(stdout+errOut, "unit or scale is wrong") {
		t.Errorf("a log scaled tenfold lost its band warning: %s%s", stdout, errOut)
	}
}

// medianOfLog is the median |B| of a CSV log's rows, nT.
func medianOfLog(t *testing.T, path string) float64 {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var bx, by, bz []float64
	for _, l := range strings.Split(string(data), "\n") {
		c := strings.Split(l, ",")
		if len(c) < 7 || strings.HasPrefix(l, "#") || c[0] == "time" {
			continue
		}
		v := [3]float64{}
		for k := range v {
			v[k], err = strconv.ParseFloat(c[4+k], 64)
			if err != nil {
				t.Fatal(err)
			}
		}
		bx, by, bz = append(bx, v[0]), append(by, v[1]), append(bz, v[2])
	}
	m, ok := medianMagnitude(bx, by, bz)
	if !ok {
		t.Fatalf("%s: no readings", path)
	}
	return m
}
