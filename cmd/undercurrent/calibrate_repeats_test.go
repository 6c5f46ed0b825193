package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestCalibrateSpinAppendedToItself: a spin log (invented, writeSpinLog)
// with its data rows appended a second time, the time going back to the
// start, was calibrated from twice the readings without a word, its
// offset standard errors too small by the square root of 2. It is now
// warned of, naming the line where the repeat starts (the header on line
// 1, 1500 rows, so line 1502); the log given once, and one whose rows
// after a step back in time are new readings, are not.
func TestCalibrateSpinAppendedToItself(t *testing.T) {
	dir := t.TempDir()
	once := filepath.Join(dir, "spin.csv")
	writeSpinLog(t, once, [3]float64{640, -215, 90}, nil)
	text, err := os.ReadFile(once)
	if err != nil {
		t.Fatal(err)
	}
	head, rows, _ := strings.Cut(string(text), "\n")
	twice := filepath.Join(dir, "spin-twice.csv")
	if err := os.WriteFile(twice, []byte(head+"\n"+rows+rows), 0o644); err != nil {
		t.Fatal(err)
	}
	// The same times again, with new readings (bx 1 pT apart, as a
	// second spin at a restarted clock would differ): not a repeat.
	var other strings.Builder
	for _, l := range strings.SplitAfter(rows, "\n") {
		f := strings.Split(l, ",")
		if len(f) == 4 {
			bx, err := strconv.ParseFloat(f[1], 64)
			if err != nil {
				t.Fatal(err)
			}
			other.WriteString(f[0] + "," + strconv.FormatFloat(bx+0.001, 'f', 3, 64) + "," + f[2] + "," + f[3])
		}
	}
	renewed := filepath.Join(dir, "spin-renewed.csv")
	if err := os.WriteFile(renewed, []byte(head+"\n"+rows+other.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		log, want string
	}{
		{twice, "spin-twice.csv: 1500 of its 3000 readings repeat earlier ones exactly (the same time and field), from line 1502 on"},
		{once, ""},
		{renewed, ""},
	} {
		code, _, errOut := runCmd("calibrate", "--spin", tc.log, "-o", filepath.Join(dir, "cal.json"), "--reference", "49850")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", tc.log, code, errOut)
		}
		if tc.want == "" && strings.Contains(errOut, "repeat earlier ones") {
			t.Errorf("%s: warned of a repeat:\n%s", tc.log, errOut)
		}
		if tc.want != "" && !strings.Contains(errOut, tc.want) {
			t.Errorf("%s: no warning %q:\n%s", tc.log, tc.want, errOut)
		}
	}
}
