package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The refusal of a zero-field log whose columns state no unit suggests
// names built from the axes (bx_nT, by_nT, bz_nT), not from the columns'
// own names: "Bx [mgauss]_nT", built from a name that already held a
// unit, contradicted itself. The shield readings are a fixture.
func TestCalibrateZeroAdviceNames(t *testing.T) {
	dir := t.TempDir()
	shield := filepath.Join(dir, "shield.csv")
	if err := os.WriteFile(shield, []byte("time,Field X (probe),Field Y (probe),Field Z (probe)\n0,15.0,200.0,-470.0\n1,15.1,200.0,-470.0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	// The bracketed word "probe" is no unit: the names state none, and
	// the advice builds names from the axes, not "Field X (probe)_nT".
	code, _, stderr := cli(t, "calibrate", "--zero", shield, "--column", "bx=Field X (probe),by=Field Y (probe),bz=Field Z (probe)")
	if code != 2 || !strings.Contains(stderr, "or put it in the column names (bx_nT, by_nT, bz_nT)") || strings.Contains(stderr, "(probe)_nT") {
		t.Errorf("exit %d, stderr:\n%s\nwant names built from the axes suggested", code, stderr)
	}
	// A bracketed step of a unit not read (fT) is refused.
	scaled := filepath.Join(dir, "scaled.csv")
	if err := os.WriteFile(scaled, []byte("time,Field X [0.1 fT],Field Y [0.1 fT],Field Z [0.1 fT]\n0,150,2000,-4700\n1,151,2000,-4700\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = cli(t, "calibrate", "--zero", scaled, "--column", "bx=Field X [0.1 fT],by=Field Y [0.1 fT],bz=Field Z [0.1 fT]")
	if code != 1 || !strings.Contains(stderr, `column Field X [0.1 fT]: its name (mapped to bx) states the unit "0.1 fT"`) {
		t.Errorf("exit %d, stderr:\n%s\nwant the unknown unit in the name refused", code, stderr)
	}
	plain := filepath.Join(dir, "plain.csv")
	if err := os.WriteFile(plain, []byte("time,magX,magY,magZ\n0,15.0,200.0,-470.0\n1,15.1,200.0,-470.0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = cli(t, "calibrate", "--zero", plain, "--column", "bx=magX,by=magY,bz=magZ")
	if code != 2 || !strings.Contains(stderr, "or put it in the column names (bx_nT, by_nT, bz_nT)") || strings.Contains(stderr, "magX_nT") {
		t.Errorf("exit %d, stderr:\n%s\nwant names built from the axes suggested", code, stderr)
	}
}
