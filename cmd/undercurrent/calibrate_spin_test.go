package main

import (
	"path/filepath"
	"strings"
	"testing"
)

func TestCalibrateCommandFlipErrorNamesFilesAndAxis(t *testing.T) {
	// Kestrel Moor gas spur (invented): the sensor turned 180 degrees
	// about x, while --flip-axis is left at z. A half turn about x maps
	// (x, y, z) to (x, -y, -z).
	dir := t.TempDir()
	b := [3]float64{17900, 420, -46700}
	off := [3]float64{0, -240, 180}
	var r0, r180 [][3]float64
	for i := 0; i < 100; i++ {
		n := 0.3 * float64(i%7-3)
		r0 = append(r0, [3]float64{b[0] + off[0] + n, b[1] + off[1] - n, b[2] + off[2] + n})
		r180 = append(r180, [3]float64{b[0] + off[0] - n, -b[1] + off[1] + n, -b[2] + off[2] - n})
	}
	f0 := writeRows(t, filepath.Join(dir, "kestrel-flip0.csv"), r0)
	f1 := writeRows(t, filepath.Join(dir, "kestrel-flip180.csv"), r180)
	code, _, errOut := runCmd("calibrate", "--flip0", f0, "--flip180", f1, "-o", filepath.Join(dir, "cal.json"))
	if code != 1 {
		t.Fatalf("exit %d, stderr %q: want 1", code, errOut)
	}
	for _, want := range []string{f0 + " and " + f1 + ": flip: the flip axis z reads", "give x as the flip axis (calibrate --flip-axis x)"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr %q lacks %q", errOut, want)
		}
	}
	if strings.Contains(errOut, "given twice") {
		t.Errorf("stderr %q: the logs were flipped, about x", errOut)
	}
	if code, _, errOut := runCmd("calibrate", "--flip0", f0, "--flip180", f1, "--flip-axis", "x", "-o", filepath.Join(dir, "cal.json")); code != 0 {
		t.Errorf("--flip-axis x: exit %d, stderr %q", code, errOut)
	}
}
