package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// dropFirstColumn rewrites the CSV log at src without its first column
// (the time) to dst, with the header header (nil: keep the names).
func dropFirstColumn(t *testing.T, src, dst string, header []string) string {
	t.Helper()
	data, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for i, line := range strings.Split(strings.TrimRight(string(data), "\n"), "\n") {
		_, rest, _ := strings.Cut(line, ",")
		if i == 0 && header != nil {
			rest = strings.Join(header, ",")
		}
		b.WriteString(rest + "\n")
	}
	if err := os.WriteFile(dst, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dst
}

// TestCalibrateNoTimeColumn: no calibration method uses time, so a
// spin, flip or zero-field log of the field columns alone is calibrated,
// with the same offsets as the same log with its times; a spike is named
// by its line in the file, having no time. Commands that need time
// still refuse such a log, naming the file and the missing column.
func TestCalibrateNoTimeColumn(t *testing.T) {
	dir := t.TempDir()
	withTime := filepath.Join(dir, "harrow-fen-spin.csv")
	offset := [3]float64{640, -215, 90}
	// A +8000 nT spike on bx of data row 701.
	spikedSpinLog(t, withTime, offset)
	noTime := dropFirstColumn(t, withTime, filepath.Join(dir, "spin-field-only.csv"), nil)

	calA, calB := filepath.Join(dir, "a.json"), filepath.Join(dir, "b.json")
	if code, _, errOut := runCmd("calibrate", "--spin", withTime, "-o", calA); code != 0 {
		t.Fatalf("spin with times: exit %d: %s", code, errOut)
	}
	// --drop-missing drops rows with a missing value; a log without
	// times has none missing.
	code, _, errOut := runCmd("calibrate", "--spin", noTime, "--drop-missing", "-o", calB)
	if code != 0 {
		t.Fatalf("spin without times: exit %d: %s", code, errOut)
	}
	if !strings.Contains(errOut, "(at line 702)") || strings.Contains(errOut, "dropped") {
		t.Errorf("stderr %q: want the spike named as line 702 (data row 701) and no row dropped", errOut)
	}
	a, err := calibrate.Load(calA)
	if err != nil {
		t.Fatal(err)
	}
	b, err := calibrate.Load(calB)
	if err != nil {
		t.Fatal(err)
	}
	for k := range 3 {
		// The same readings give the same fit; the offset is the one the
		// fixture was made with, within its 1 nT noise.
		if a.Offset[k] != b.Offset[k] || math.Abs(b.Offset[k]-offset[k]) > 1 {
			t.Errorf("offset[%d]: %.4f without times, %.4f with; made with %.0f", k, b.Offset[k], a.Offset[k], offset[k])
		}
	}

	// A flip pair and a zero-field log of x, y, z columns mapped to the
	// field, in µT (1 µT = 1000 nT, SI).
	write := func(name string, b [3]float64) string {
		var s strings.Builder
		s.WriteString("x,y,z\n")
		for i := range 40 {
			e := 0.0005 * float64(1-2*(i%2)) // averages to zero
			fmt.Fprintf(&s, "%.5f,%.5f,%.5f\n", b[0]+0.0125+e, b[1]-0.00725-e, b[2]+0.003+e)
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(s.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	asField := []string{"--column", "bx=x,by=y,bz=z", "--unit", "bx=uT,by=uT,bz=uT"}
	code, out, errOut := runCmd(append([]string{"calibrate", "--flip0", write("n.csv", [3]float64{18, 5, 44}), "--flip180", write("s.csv", [3]float64{-18, -5, 44})}, asField...)...)
	if code != 0 || !strings.Contains(out, "12.50") || !strings.Contains(out, "-7.25") {
		t.Errorf("flip without times: exit %d, stdout %s, stderr %s", code, out, errOut)
	}
	code, out, errOut = runCmd(append([]string{"calibrate", "--zero", write("shield.csv", [3]float64{})}, asField...)...)
	if code != 0 || !strings.Contains(out, "12.50") || !strings.Contains(out, "-7.25") || !strings.Contains(out, "3.00") {
		t.Errorf("zero without times: exit %d, stdout %s, stderr %s", code, out, errOut)
	}

	for _, args := range [][]string{
		{"locate", noTime},
		{"convert", noTime, filepath.Join(dir, "out.arrow")},
	} {
		code, _, errOut := runCmd(args...)
		if code == 0 || !strings.Contains(errOut, noTime+":1: no column for time") {
			t.Errorf("%s: exit %d, stderr %q: want a refusal naming the file and the time column", args[0], code, errOut)
		}
	}
}

// TestCalibrateZeroUnit: a log inside a shield reads near zero in
// any unit, so a zero-field log whose columns state no unit is refused
// with how to give it; given with --unit, in the column names, or by
// undercurrent's canonical form (nT), the offsets are the fixture's
// (written in µT: 1 µT = 1000 nT, SI). Read as nT they were 1000 times
// too small.
func TestCalibrateZeroUnit(t *testing.T) {
	dir := t.TempDir()
	write := func(name, header string) string {
		var b strings.Builder
		b.WriteString(header + "\n")
		for i := range 50 {
			e := 0.0004 * float64(1-2*(i%2)) // averages to zero
			fmt.Fprintf(&b, "%d,%.5f,%.5f,%.5f\n", i, 0.3098+e, -0.2400-e, 0.1799+e)
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	bare := write("kestrel-shield.csv", "time,bx,by,bz")
	cal := filepath.Join(dir, "cal.json")
	code, _, errOut := runCmd("calibrate", "--zero", bare, "-o", cal)
	if code != 2 || !strings.Contains(errOut, bare+": the field columns (bx, by, bz) state no unit") || !strings.Contains(errOut, "--unit bx=U,by=U,bz=U") {
		t.Errorf("zero log without a unit: exit %d, stderr %q; want a refusal saying how to give the unit", code, errOut)
	}
	if _, err := os.Stat(cal); !os.IsNotExist(err) {
		t.Error("a refused zero log wrote a calibration file")
	}
	want := [3]float64{309.8, -240.0, 179.9}
	check := func(what string, args ...string) {
		t.Helper()
		code, out, errOut := runCmd(append([]string{"calibrate", "--json", "--zero"}, args...)...)
		if code != 0 {
			t.Errorf("%s: exit %d: %s", what, code, errOut)
			return
		}
		if !strings.Contains(out, `"method": "zero"`) {
			t.Errorf("%s: output %s", what, out)
		}
		c := filepath.Join(dir, strings.ReplaceAll(what, " ", "-")+".json")
		if code, _, errOut := runCmd(append([]string{"calibrate", "-o", c, "--zero"}, args...)...); code != 0 {
			t.Fatalf("%s: exit %d: %s", what, code, errOut)
		}
		got, err := calibrate.Load(c)
		if err != nil {
			t.Fatal(err)
		}
		for k := range 3 {
			if math.Abs(got.Offset[k]-want[k]) > 1e-6 {
				t.Errorf("%s: offset %v nT, want %v", what, got.Offset, want)
				break
			}
		}
	}
	check("unit given", bare, "--unit", "bx=uT,by=uT,bz=uT")
	check("unit in names", write("named.csv", "time,Bx_uT,By (uT),Bz[uT]"))
	check("mapped names", write("mapped.csv", "time,X_uT,Y_uT,Z_uT"), "--column", "bx=X_uT,by=Y_uT,bz=Z_uT")
	// undercurrent's canonical form, as convert writes it, is nT by
	// definition.
	canon := filepath.Join(dir, "canon.arrow")
	if code, _, errOut := runCmd("convert", "--unit", "bx=uT,by=uT,bz=uT", bare, canon); code != 0 {
		t.Fatalf("convert: exit %d: %s", code, errOut)
	}
	check("canonical form", canon)
	// A unit for one axis only leaves the others unstated: the reader
	// refuses the axes in different units before calibrate's own check.
	code, _, errOut = runCmd("calibrate", "--zero", bare, "--unit", "bx=uT")
	if code != 1 || !strings.Contains(errOut, "units are given for some of the field's axes (bx=uT) and not for by") {
		t.Errorf("one axis's unit: exit %d, stderr %q", code, errOut)
	}
}
