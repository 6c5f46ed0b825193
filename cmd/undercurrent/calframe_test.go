package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCalibrateRefusesFrameNED: a calibration belongs to the sensor's own
// axes, which locate --frame ned calibrates before turning them to east,
// north, up; made from a spin log turned by --frame ned it would be turned
// twice, so calibrate refuses --frame ned before any work and writes
// nothing.
func TestCalibrateRefusesFrameNED(t *testing.T) {
	dir := t.TempDir()
	spin := spinLog(t, dir)
	out := filepath.Join(dir, "cal.json")
	code, _, stderr := cli(t, "calibrate", "--spin", spin, "--frame", "ned", "-o", out)
	if code != 2 || !strings.Contains(stderr, "--frame ned: a calibration is made in the sensor's own axes") {
		t.Errorf("exit %d, %s", code, stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a refused run wrote the calibration")
	}
}
