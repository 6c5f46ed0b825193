package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// TestCalibrateZeroFramedLoggerColumns: a shield log written as
// testdata/examples/kestrel-moor-spin-uT.csv is (a "# undercurrent.frame"
// comment above a logger's own µT columns magX, magY, magZ) read with
// --column: the comment states nT only for undercurrent's own column
// names, so nothing states these columns' unit and calibrate --zero
// refuses, as for any log without one. Before, it wrote offsets of 0.31,
// -0.24, 0.18 nT, 1000 times too small (1 µT = 1000 nT, SI). With --unit
// the offsets are the fixture's: the hard-iron offset (310, -240, 180) nT
// of testdata/examples/README.md, as the shield log's readings give it.
// The example spin log, with the --unit its --help example gives, still
// recovers that offset.
func TestCalibrateZeroFramedLoggerColumns(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("# undercurrent.frame: sensor\ntime,magX,magY,magZ\n")
	for i := range 50 {
		if i%2 == 0 {
			b.WriteString("0,0.30904,-0.23849,0.17837\n")
		} else {
			b.WriteString("0,0.30824,-0.23769,0.17757\n")
		}
	}
	shield := filepath.Join(dir, "shield-uT.csv")
	if err := os.WriteFile(shield, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	cols := []string{"--column", "bx=magX,by=magY,bz=magZ"}
	cal := filepath.Join(dir, "cal.json")
	code, out, errOut := runCmd(append([]string{"calibrate", "--zero", shield, "-o", cal}, cols...)...)
	if code != 2 || !strings.Contains(errOut, shield+": the field columns (magX, magY, magZ, read as bx, by, bz) state no unit") {
		t.Errorf("framed µT shield log under a logger's names: exit %d, stdout %q, stderr %q; want a refusal", code, out, errOut)
	}
	if _, err := os.Stat(cal); err == nil {
		t.Errorf("refused, yet %s was written", cal)
	}
	offset := func(what string, want [3]float64, tol float64, args ...string) {
		t.Helper()
		c := filepath.Join(dir, strings.ReplaceAll(what, " ", "-")+".json")
		if code, _, errOut := runCmd(append(args, "-o", c)...); code != 0 {
			t.Fatalf("%s: exit %d: %s", what, code, errOut)
		}
		got, err := calibrate.Load(c)
		if err != nil {
			t.Fatal(err)
		}
		for k := range 3 {
			if math.Abs(got.Offset[k]-want[k]) > tol {
				t.Errorf("%s: offset %v nT, want %v ± %g", what, got.Offset, want, tol)
				break
			}
		}
	}
	offset("shield with unit", [3]float64{308.64, -238.09, 177.97}, 1e-6, append(append([]string{"calibrate", "--zero", shield}, cols...), "--unit", "bx=uT,by=uT,bz=uT")...)
	// The spin fixture's readings carry 1 nT of noise: 600 of them give
	// the offset to well within 1 nT.
	offset("example spin", [3]float64{310, -240, 180}, 1, append(append([]string{"calibrate", "--spin", filepath.Join("..", "..", "testdata", "examples", "kestrel-moor-spin-uT.csv")}, cols...), "--unit", "bx=uT,by=uT,bz=uT")...)
}
