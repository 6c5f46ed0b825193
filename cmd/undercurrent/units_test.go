package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// writeScaledLog writes the single-line scenario's log (a Kestrel Moor
// style traverse with the Earth's field, about 49 000 nT, in every
// reading) as CSV with the field columns named bx, by, bz plus suffix and
// their values multiplied by scale, and returns its path.
func writeScaledLog(t *testing.T, dir, name, suffix string, scale float64) string {
	t.Helper()
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	fmt.Fprintf(&b, "time,x,y,z,bx%[1]s,by%[1]s,bz%[1]s,group\n", suffix)
	for i := range s.Len() {
		fmt.Fprintf(&b, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%s\n", s.Time[i], s.X[i], s.Y[i], s.Z[i], s.Bx[i]*scale, s.By[i]*scale, s.Bz[i]*scale, s.Group[i])
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestLocateChecksFieldUnits checks locate's unit check against the
// Earth's main field at the surface, about 22 000 to 67 000 nT (IGRF, as
// published by NOAA NCEI and BGS): a raw log in tesla under columns
// labelled nT (a median |B| of about 5e-5 "nT") is refused, with the unit
// to give, unless --unit states the unit; a log whose median |B| is merely
// outside the Earth's band (here the field in microtesla under nT labels,
// about 49 "nT", as a log with the background removed could be) is fitted
// with the warning in the summary, the JSON and the result files.
func TestLocateChecksFieldUnits(t *testing.T) {
	dir := t.TempDir()
	tesla := writeScaledLog(t, dir, "tesla.csv", "_nT", 1e-9)
	code, out, errOut := cli(t, "locate", "--group-by", "group", "-o", filepath.Join(dir, "res"), tesla)
	if code != 1 || !strings.Contains(errOut, "probably in T (try --unit bx=T,by=T,bz=T)") || !strings.Contains(errOut, "Refused") || out != "" {
		t.Errorf("tesla under nT labels: exit %d, stdout %q, stderr %q; want exit 1 refusing with the unit to try", code, out, errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, "res")); !os.IsNotExist(err) {
		t.Error("a refused run wrote results")
	}
	// Stating the unit overrides the refusal; the warning stays.
	var doc resultDoc
	js := mustCLI(t, "locate", "--json", "--group-by", "group", "--unit", "bx=nT,by=nT,bz=nT", tesla)
	if err := json.Unmarshal([]byte(js), &doc); err != nil {
		t.Fatal(err)
	}
	if !containsAll(doc.Warnings, "probably in T") {
		t.Errorf("warnings %q lack the unit warning", doc.Warnings)
	}
	// The right unit: no warning.
	doc = resultDoc{}
	js = mustCLI(t, "locate", "--json", "--group-by", "group", "--unit", "bx=T,by=T,bz=T", tesla)
	if err := json.Unmarshal([]byte(js), &doc); err != nil {
		t.Fatal(err)
	}
	if containsAll(doc.Warnings, "median |B|") {
		t.Errorf("warnings %q: the field in the right unit should not be doubted", doc.Warnings)
	}

	micro := writeScaledLog(t, dir, "micro.csv", "_nT", 1e-3)
	res := filepath.Join(dir, "micro-res")
	code, out, errOut = cli(t, "locate", "--group-by", "group", "-o", res, micro)
	if code != 0 || !strings.Contains(out, "warning: "+micro+": median |B| is") || !strings.Contains(out, "probably in uT") {
		t.Errorf("microtesla under nT labels: exit %d, stdout %q, stderr %q; want a fit with the warning", code, out, errOut)
	}
	data, err := os.ReadFile(filepath.Join(res, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	doc = resultDoc{}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	if !containsAll(doc.Warnings, "probably in uT") {
		t.Errorf("results.json warnings %q lack the unit warning", doc.Warnings)
	}
}

// containsAll reports whether one of list contains sub.
func containsAll(list []string, sub string) bool {
	for _, s := range list {
		if strings.Contains(s, sub) {
			return true
		}
	}
	return false
}

// TestCalibrateAndConvertCheckFieldUnits checks the same unit check in
// calibrate (a spin log in tesla is refused; a zero-field log, near zero
// by design, is not checked) and in convert (a warning; the file is still
// converted).
func TestCalibrateAndConvertCheckFieldUnits(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "spin.csv")
	writeSpinLog(t, spin, [3]float64{640, -215, 90}, nil)
	text, err := os.ReadFile(spin)
	if err != nil {
		t.Fatal(err)
	}
	// The same readings in tesla: every value times 1e-9.
	var b strings.Builder
	for i, line := range strings.Split(strings.TrimSpace(string(text)), "\n") {
		if i == 0 {
			b.WriteString(line + "\n")
			continue
		}
		var n int
		var x, y, z float64
		if _, err := fmt.Sscanf(line, "%d,%g,%g,%g", &n, &x, &y, &z); err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(&b, "%d,%g,%g,%g\n", n, x*1e-9, y*1e-9, z*1e-9)
	}
	spinT := filepath.Join(dir, "spin-tesla.csv")
	if err := os.WriteFile(spinT, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := runCmd("calibrate", "--spin", spinT)
	if code != 1 || !strings.Contains(errOut, "probably in T") {
		t.Errorf("spin log in tesla: exit %d, stderr %q; want a refusal naming T", code, errOut)
	}
	code, out, errOut := runCmd("calibrate", "--spin", spinT, "--unit", "bx=T,by=T,bz=T")
	if code != 0 || !strings.Contains(out, "offset") || strings.Contains(errOut, "median |B|") {
		t.Errorf("spin log in tesla with --unit T: exit %d, stdout %q, stderr %q", code, out, errOut)
	}
	zero := filepath.Join(dir, "shield.csv")
	if err := os.WriteFile(zero, []byte("time,bx,by,bz\n0,12.1,-3.2,0.4\n1,12.3,-3.0,0.6\n2,11.9,-3.1,0.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut = runCmd("calibrate", "--zero", zero, "--unit", "bx=nT,by=nT,bz=nT")
	if code != 0 || strings.Contains(errOut, "median |B|") {
		t.Errorf("zero-field log: exit %d, stderr %q; want no unit warning", code, errOut)
	}
	conv := filepath.Join(dir, "spin-tesla.parquet")
	code, _, errOut = runCmd("convert", spinT, conv)
	if code != 0 || !strings.Contains(errOut, "warning: "+spinT+": median |B|") || !strings.Contains(errOut, "probably in T") {
		t.Errorf("convert of a log in tesla: exit %d, stderr %q; want a warning", code, errOut)
	}
	if _, err := os.Stat(conv); err != nil {
		t.Errorf("convert wrote nothing: %v", err)
	}
}
