package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// writeRows writes a calibration log of the given readings, one per
// 0.1 s.
func writeRows(t *testing.T, path string, rows [][3]float64) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i, r := range rows {
		fmt.Fprintf(&b, "%.1f,%.3f,%.3f,%.3f\n", 0.1*float64(i), r[0], r[1], r[2])
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestCalibrateCommandTwoTurnsRefused(t *testing.T) {
	// Whole turns about the sensor's z axis, then about its y axis, in a
	// 49 850 nT field (Harrow Fen substation yard): the field directions
	// lie on two great circles, which leave one soft-iron term free.
	dir := t.TempDir()
	var rows [][3]float64
	for _, ax := range "zy" {
		for i := 0; i < 600; i++ {
			a := 2 * math.Pi * float64(i) / 600
			c, s := 49850*math.Cos(a), 49850*math.Sin(a)
			u := map[rune][3]float64{'z': {c, s, 0}, 'y': {s, 0, c}}[ax]
			rows = append(rows, [3]float64{1.2*u[0] + 0.05*u[1] + 640 + 0.3*math.Sin(float64(7*i)), 0.05*u[0] + 0.85*u[1] + 0.08*u[2] - 215, 0.08*u[1] + 1.05*u[2] + 90})
		}
	}
	spin := writeRows(t, filepath.Join(dir, "two-turns.csv"), rows)
	code, _, errOut := runCmd("calibrate", "--spin", spin, "--reference", "49850", "-o", filepath.Join(dir, "cal.json"))
	if code != 1 || !strings.Contains(errOut, "two-turns.csv: spin log does not cover enough orientations") || !strings.Contains(errOut, "matrix term yz undetermined") {
		t.Errorf("exit %d, stderr %q: want a refusal naming the undetermined term", code, errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, "cal.json")); err == nil {
		t.Error("a refused spin wrote a calibration file")
	}
}

func TestCalibrateCommandSpikesAndScale(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "harrow-fen-spin.csv")
	// A +8000 nT spike on bx at t = 700 s (data row 701).
	spikedSpinLog(t, spin, [3]float64{640, -215, 90})
	code, out, errOut := runCmd("calibrate", "--spin", spin)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(errOut, "warning: "+spin+": 1 reading of 1500 lies more than 5 robust standard deviations") || !strings.Contains(errOut, "(at t = 700 s)") {
		t.Errorf("stderr %q: want a warning naming the spike and its time", errOut)
	}
	// Without --reference the field magnitude is the fitted radius, not a
	// reference: the scale is the sensor's own.
	if !strings.Contains(out, "radius      ") || strings.Contains(out, "reference   ") || !strings.Contains(out, "no --reference") {
		t.Errorf("unreferenced spin output:\n%s", out)
	}
	code, out, _ = runCmd("calibrate", "--spin", spin, "--reference", "49850")
	if code != 0 || !strings.Contains(out, "reference   49850.0 nT\n") || strings.Contains(out, "radius") {
		t.Errorf("referenced spin: exit %d, output:\n%s", code, out)
	}
}

func TestCalibrateCommandOffsetMethods(t *testing.T) {
	dir := t.TempDir()
	log := func(name string, b [3]float64) string {
		var rows [][3]float64
		for i := 0; i < 50; i++ {
			e := 0.5 * math.Sin(float64(i))
			rows = append(rows, [3]float64{b[0] + 12.5 + e, b[1] - 7.25 - e, b[2] + 3 + e})
		}
		return writeRows(t, filepath.Join(dir, name), rows)
	}
	// The flip about z leaves the z offset undetermined: no "± 0.00".
	code, out, errOut := runCmd("calibrate", "--flip0", log("n.csv", [3]float64{18000, 5000, 44000}), "--flip180", log("s.csv", [3]float64{-18000, -5000, 44000}))
	if code != 0 {
		t.Fatalf("flip: exit %d: %s", code, errOut)
	}
	if !strings.Contains(out, "z not determined, left at 0)") || strings.Contains(out, ", 0.00)") {
		t.Errorf("flip output:\n%s", out)
	}
	// A "zero-field" log in the Earth's field (at least about 22 000 nT at
	// the surface, IGRF) is refused, and nothing is written.
	cal := filepath.Join(dir, "zero.json")
	code, _, errOut = runCmd("calibrate", "--zero", log("open-air.csv", [3]float64{18000, 5000, 44000}), "-o", cal)
	if code != 1 || !strings.Contains(errOut, "open-air.csv: zero: the log reads a field of") {
		t.Errorf("zero in the Earth's field: exit %d, stderr %q", code, errOut)
	}
	if _, err := os.Stat(cal); err == nil {
		t.Error("a refused zero log wrote a calibration file")
	}
}

func TestCalibrateCommandDeadAxis(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "harrow-fen-spin.csv")
	writeSpinLog(t, spin, [3]float64{640, -215, 90}, nil)
	data, err := os.ReadFile(spin)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	for i := 1; i < len(lines); i++ {
		f := strings.Split(lines[i], ",")
		f[3] = "0"
		lines[i] = strings.Join(f, ",")
	}
	if err := os.WriteFile(spin, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := runCmd("calibrate", "--spin", spin)
	if code != 1 || !strings.Contains(errOut, "bz does not change (it reads 0 nT throughout") || strings.Contains(errOut, "close to a plane") {
		t.Errorf("dead bz: exit %d, stderr %q", code, errOut)
	}
}

// spikedSpinLog writes writeSpinLog's spin with offset to path and adds a
// spike of +8000 nT to bx of data row 701 (t = 700 s).
func spikedSpinLog(t *testing.T, path string, offset [3]float64) {
	t.Helper()
	writeSpinLog(t, path, offset, nil)
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(data), "\n")
	f := strings.Split(lines[701], ",")
	var bx float64
	fmt.Sscan(f[1], &bx)
	f[1] = fmt.Sprintf("%.3f", bx+8000)
	lines[701] = strings.Join(f, ",")
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
}
