package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestCalibrateSpinInMicroteslaRefused: the Kestrel Moor spin
// (testdata/scenarios/kestrel-moor-spin.toml, simulated in nT) written
// in uT (its field divided by 1000) and read as nT has a median |B| of
// about 50 nT, the Earth's field (15 000-80 000 nT, IGRF from memory) over
// 1000: calibrate --spin refuses it naming uT, and makes the calibration
// with --unit. Before, it warned and wrote a calibration whose offsets
// and reference were 1000 times too small (found in review).
func TestCalibrateSpinInMicroteslaRefused(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "spin.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "kestrel-moor-spin.toml"), "-o", spin)
	ut := filepath.Join(dir, "spin-uT.csv")
	scaleFieldColumns(t, spin, ut, 1e-3)
	code, _, errOut := cli(t, "calibrate", "--spin", ut, "-o", filepath.Join(dir, "cal.json"))
	if code != 1 || !strings.Contains(errOut, "probably in uT") || !strings.Contains(errOut, "--unit bx=uT,by=uT,bz=uT") {
		t.Errorf("exit %d, stderr %q; want a refusal naming uT", code, errOut)
	}
	if code, _, errOut = cli(t, "calibrate", "--spin", ut, "--unit", "bx=uT,by=uT,bz=uT", "-o", filepath.Join(dir, "cal-uT.json")); code != 0 {
		t.Errorf("with --unit: exit %d, stderr %q", code, errOut)
	}
	if code, _, errOut = cli(t, "calibrate", "--spin", spin, "-o", filepath.Join(dir, "cal-nT.json")); code != 0 {
		t.Errorf("the spin in nT: exit %d, stderr %q", code, errOut)
	}
}
