package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// writeSpinLog writes an invented spin log (Harrow Fen substation yard) of
// a sensor with a known offset turned through uniform random orientations
// in a 49 850 nT field; keep filters the directions.
func writeSpinLog(t *testing.T, path string, offset [3]float64, keep func(u [3]float64) bool) {
	t.Helper()
	rng := rand.New(rand.NewPCG(51, 52))
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i := 0; i < 1500; {
		u := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
		n := math.Sqrt(u[0]*u[0] + u[1]*u[1] + u[2]*u[2])
		for k := range u {
			u[k] /= n
		}
		if keep != nil && !keep(u) {
			continue
		}
		fmt.Fprintf(&b, "%d,%.3f,%.3f,%.3f\n", i,
			1.03*49850*u[0]+offset[0]+rng.NormFloat64(),
			0.98*49850*u[1]+offset[1]+rng.NormFloat64(),
			49850*u[2]+offset[2]+rng.NormFloat64())
		i++
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

func runCmd(args ...string) (int, string, string) {
	var out, errOut bytes.Buffer
	code := run(context.Background(), args, &out, &errOut)
	return code, out.String(), errOut.String()
}

func TestCalibrateCommandSpin(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "harrow-fen-spin.csv")
	offset := [3]float64{640, -215, 90}
	writeSpinLog(t, spin, offset, nil)
	cal := filepath.Join(dir, "cal.json")
	code, out, errOut := runCmd("calibrate", "--spin", spin, "-o", cal, "--reference", "49850")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"method      ellipsoid", "harrow-fen-spin.csv", "|B| after", "wrote " + cal} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	c, err := calibrate.Load(cal)
	if err != nil {
		t.Fatal(err)
	}
	// Offset within the 1 nT noise; |B| spread after at the noise level
	// (DOMAIN.md, ellipsoid fitting); the input is written to 1 pT.
	for k := 0; k < 3; k++ {
		if math.Abs(c.Offset[k]-offset[k]) > 1 {
			t.Errorf("offset[%d] = %.3f, want %.0f", k, c.Offset[k], offset[k])
		}
	}
	if c.After.Std > 1.2 || c.Inputs[0].Samples != 1500 || len(c.Inputs[0].SHA256) != 64 {
		t.Errorf("after spread %.3f, inputs %+v", c.After.Std, c.Inputs)
	}
	code, out, _ = runCmd("calibrate", "--show", cal, "--json")
	if code != 0 || !strings.Contains(out, `"version": 1`) {
		t.Errorf("--show --json: exit %d, output %s", code, out)
	}
}

func TestCalibrateCommandRefusesPoorCoverage(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "flat-spin.csv")
	// Turned only about its z axis (kept level).
	writeSpinLog(t, spin, [3]float64{}, func(u [3]float64) bool { return math.Abs(u[2]) < 0.1 })
	cal := filepath.Join(dir, "cal.json")
	code, _, errOut := runCmd("calibrate", "--spin", spin, "-o", cal)
	if code != 1 || !strings.Contains(errOut, "undercurrent calibrate:") || !strings.Contains(errOut, "close to a plane") {
		t.Errorf("exit %d, stderr %q", code, errOut)
	}
	if _, err := os.Stat(cal); !os.IsNotExist(err) {
		t.Error("a refused calibration left a file behind")
	}
}

func TestCalibrateCommandUsage(t *testing.T) {
	for _, args := range [][]string{
		{"calibrate"},
		{"calibrate", "--spin", "a.csv", "--zero", "b.csv"},
		{"calibrate", "--flip0", "a.csv"},
		{"calibrate", "--flip0", "a.csv", "--flip180", "b.csv", "--flip-axis", "w"},
		{"calibrate", "stray.csv"},
		// Flag values are refused before any log is read (the logs named
		// here do not exist).
		{"calibrate", "--spin", "nosuch.csv", "--reference", "-5"},
		{"calibrate", "--spin", "nosuch.csv", "--flip-axis", "q"},
		{"calibrate", "--zero", "nosuch.csv", "--reference", "49000"},
	} {
		if code, _, errOut := runCmd(args...); code != 2 {
			t.Errorf("%q: exit %d, want 2 (stderr %q)", args, code, errOut)
		}
	}
}

func TestCalibrateCommandZeroAndFlip(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, sign float64, off [3]float64) string {
		p := filepath.Join(dir, name)
		var b strings.Builder
		b.WriteString("time,bx,by,bz\n")
		for i := 0; i < 50; i++ {
			fmt.Fprintf(&b, "%d,%.2f,%.2f,%.2f\n", i, sign*18000+off[0], sign*5000+off[1], 44000*math.Abs(sign)+off[2])
		}
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	off := [3]float64{12.5, -7.25, 3}
	cal := filepath.Join(dir, "flip.json")
	code, out, errOut := runCmd("calibrate", "--flip0", write("n.csv", 1, off), "--flip180", write("s.csv", -1, off), "-o", cal)
	if code != 0 {
		t.Fatalf("flip: exit %d: %s", code, errOut)
	}
	if !strings.Contains(out, "12.50") || !strings.Contains(out, "-7.25") || !strings.Contains(out, "z axis is not determined") {
		t.Errorf("flip output:\n%s", out)
	}
	code, out, errOut = runCmd("calibrate", "--zero", write("shield.csv", 0, off), "--unit", "bx=nT,by=nT,bz=nT", "--json")
	if code != 0 || !strings.Contains(out, `"method": "zero"`) || !strings.Contains(out, "12.5") {
		t.Errorf("zero: exit %d, out %s, err %s", code, out, errOut)
	}
}
