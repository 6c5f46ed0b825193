package main

import (
	"os"
	"strings"
	"testing"
)

// A spin fits a sensor with one axis reversed (a mirror image of a
// right-handed set) as well as a right one, and the calibration then
// carries the mirror into every result: nothing said the axes must be
// right-handed (found in review). calibrate --help and README.md's
// calibration section say so now, and how to check it.
func TestCalibrateDocsStateRightHandedAxes(t *testing.T) {
	code, out, errOut := cli(t, "calibrate", "--help")
	help := strings.Join(strings.Fields(out+errOut), " ")
	for _, want := range []string{"must form a right-handed set (x × y = z)", "held level with x to magnetic north the sensor reads bx ≈ H", "negate that axis's column"} {
		if code != 0 || !strings.Contains(help, want) {
			t.Errorf("calibrate --help (exit %d) does not say %q", code, want)
		}
	}
	data, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	readme := string(data)
	i := strings.Index(readme, "### 1. Calibrate the sensor")
	j := strings.Index(readme[i+1:], "\n### ")
	if i < 0 || j < 0 {
		t.Fatal("README.md has no section \"### 1. Calibrate the sensor\"")
	}
	sec := strings.Join(strings.Fields(readme[i:i+1+j]), " ")
	for _, want := range []string{"must be a right-handed set of the sensor's axes (x × y = z)", "held level with x to magnetic north the sensor reads bx ≈ H"} {
		if !strings.Contains(sec, want) {
			t.Errorf("README.md's calibration section does not say %q", want)
		}
	}
}
