package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestInspectShowsBothUnits checks that inspect tells the unit in the file
// from the unit of the values it shows: 17.0 uT is 17000 nT (SI prefixes,
// BIPM SI Brochure, 9th edition, Table 7).
func TestInspectShowsBothUnits(t *testing.T) {
	p := ingestTemp(t, "fenwick.csv", "time,x,y,z,Bx_uT,By_uT,Bz_uT\n0,0,0,0.3,17.0,3.0,-46.0\n1,1,0,0.3,17.0,3.0,-46.0\n")
	code, out, errOut := ingestRun(t, "inspect", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(out, "unit in file  values in") || !regexp.MustCompile(`bx\s+Bx_uT\s+uT\s+nT\s+17000\s`).MatchString(out) {
		t.Errorf("output lacks the two units:\n%s", out)
	}
	code, out, errOut = ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var doc struct {
		Columns []struct {
			Column     string  `json:"column"`
			Unit       string  `json:"unit"`
			ValuesUnit string  `json:"values_unit"`
			Min        float64 `json:"min"`
		} `json:"columns"`
		Rows int `json:"rows"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, c := range doc.Columns {
		if c.Column == "bx" {
			found = true
			if c.Unit != "uT" || c.ValuesUnit != "nT" || c.Min != 17000 {
				t.Errorf("bx: %+v, want unit uT, values_unit nT, min 17000", c)
			}
		}
	}
	if !found || doc.Rows != 2 {
		t.Errorf("JSON %s", out)
	}
}

// TestOutputExtensionsAndDirectories checks that log outputs take their
// extension in any case and the same set in every command, and that a
// missing output directory is refused instead of created.
func TestOutputExtensionsAndDirectories(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	scen := filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml")
	magic := map[string]string{".csv": "#", ".parquet": "PAR1", ".arrow": "ARROW1", ".arrows": "\xff\xff\xff\xff"}
	for _, tc := range []struct {
		args []string
		out  string
		kind string
	}{
		{[]string{"convert", log}, "out.PARQUET", ".parquet"},
		{[]string{"convert", log}, "out.CSV", ".csv"},
		{[]string{"convert", log}, "out.txt", ".csv"},
		{[]string{"simulate", scen, "-o"}, "sim.txt", ".csv"},
		{[]string{"simulate", scen, "-o"}, "sim.Arrow", ".arrow"},
		{[]string{"simulate", scen, "-o"}, "sim.ARROWS", ".arrows"},
	} {
		out := filepath.Join(dir, tc.out)
		code, _, errOut := cli(t, append(tc.args, out)...)
		if code != 0 {
			t.Errorf("%s %s: exit %d: %s", tc.args[0], tc.out, code, errOut)
			continue
		}
		data, err := os.ReadFile(out)
		if err != nil || !bytes.HasPrefix(data, []byte(magic[tc.kind])) {
			t.Errorf("%s %s: not a %s file (%v)", tc.args[0], tc.out, tc.kind, err)
			continue
		}
		if _, err := ingest.ReadSamples(out); err != nil {
			t.Errorf("%s %s: %v", tc.args[0], tc.out, err)
		}
	}
	for _, name := range entries(t, dir) {
		if strings.Contains(name, ".tmp") {
			t.Errorf("temporary file %s left behind", name)
		}
	}
	for _, args := range [][]string{
		{"convert", log, filepath.Join(dir, "x.xlsx")},
		{"simulate", scen, "-o", filepath.Join(dir, "x.xlsx")},
	} {
		if code, _, errOut := cli(t, args...); code != 2 || !strings.Contains(errOut, `".xlsx"`) {
			t.Errorf("%s: exit %d, stderr %q; want a usage error naming the extension", args[0], code, errOut)
		}
	}
	missing := filepath.Join(dir, "no", "such")
	for _, args := range [][]string{
		{"convert", log, filepath.Join(missing, "x.csv")},
		{"simulate", scen, "-o", filepath.Join(missing, "x.csv")},
		{"simulate", scen, "-o", filepath.Join(dir, "y.csv"), "--truth", filepath.Join(missing, "t.csv")},
		{"calibrate", "--zero", log, "-o", filepath.Join(missing, "cal.json")},
	} {
		// A usage error (2), as every output location refused before the work.
		if code, _, errOut := cli(t, args...); code != 2 || !strings.Contains(errOut, "output directory "+missing+" does not exist") {
			t.Errorf("%s: exit %d, stderr %q; want a usage error naming the missing directory", args[0], code, errOut)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "no")); !os.IsNotExist(err) {
		t.Error("a missing output directory was created")
	}
	// -o DIR makes DIR itself when its parent exists.
	res := filepath.Join(dir, "res")
	if code, _, errOut := cli(t, "locate", "-o", res, log); code != 0 {
		t.Fatalf("locate -o: exit %d: %s", code, errOut)
	}
	if _, err := os.Stat(filepath.Join(res, "results.json")); err != nil {
		t.Error(err)
	}
	// demo's default, out/demo, is no typo: its parent is made.
	if testing.Short() {
		return
	}
	t.Chdir(t.TempDir())
	if code, _, errOut := cli(t, "demo"); code != 0 {
		t.Fatalf("demo: exit %d: %s", code, errOut)
	}
	if _, err := os.Stat(filepath.Join("out", "demo", "report.html")); err != nil {
		t.Error(err)
	}
}

// TestPolish checks the smaller points: --version, the version help, the
// field units listed in help, inspect's numbers and plurals, a log with no
// readings, and the precision of converted CSV times.
func TestPolish(t *testing.T) {
	code, out, _ := cli(t, "--version")
	if code != 0 || !strings.HasPrefix(out, "undercurrent ") {
		t.Errorf("--version: exit %d, %q", code, out)
	}
	code, out, _ = cli(t, "help", "version")
	if code != 0 || !strings.HasPrefix(out, "usage: undercurrent version\n") || !strings.Contains(out, "Examples:") {
		t.Errorf("help version: %q", out)
	}
	for _, cmd := range []string{"inspect", "locate", "calibrate", "convert"} {
		_, out, _ := cli(t, "help", cmd)
		if !strings.Contains(out, "pT") || !strings.Contains(out, "mG") {
			t.Errorf("help %s does not list pT and mG", cmd)
		}
	}

	// Unix times with a 0.1 s step that is not exact in binary: the step
	// and duration print rounded, the one gap in the singular, times as
	// ISO 8601 UTC (1770040800 is 2026-02-02T14:00:00Z).
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz\n")
	t0 := 1770040800.0
	for i := range 200 {
		tt := t0 + float64(i)*0.1
		if i >= 100 {
			tt += 0.5
		}
		b.WriteString(strings.Join([]string{strconv.FormatFloat(tt, 'f', -1, 64), "0", "0", "0.3", "17000", "3000", "-46000"}, ",") + "\n")
	}
	p := ingestTemp(t, "walk.csv", b.String())
	_, out, _ = cli(t, "inspect", p)
	for _, want := range []string{"time      2026-02-02T14:00:00Z to 2026-02-02T14:00:20.4Z (20.4 s)", "median step 0.1 s (10 Hz); 1 gap,", "2026-02-02T14:00:00Z"} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "e+09") || strings.Contains(out, "0.0999") {
		t.Errorf("inspect prints raw floats:\n%s", out)
	}
	// Converted CSV times read back exactly (shortest round-trip digits).
	csv := filepath.Join(t.TempDir(), "walk.csv")
	if code, _, errOut := cli(t, "convert", p, csv); code != 0 {
		t.Fatalf("convert: %s", errOut)
	}
	a, err := ingest.ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	c, err := ingest.ReadSamples(csv)
	if err != nil {
		t.Fatal(err)
	}
	for i := range a.Time {
		if a.Time[i] != c.Time[i] {
			t.Fatalf("row %d: time %.17g after convert, want %.17g", i, c.Time[i], a.Time[i])
		}
	}

	// A header and no readings.
	empty := ingestTemp(t, "empty.csv", "time,x,y,z,bx,by,bz\n")
	code, out, _ = cli(t, "inspect", empty)
	if code != 0 || !strings.Contains(out, "no readings") || strings.Contains(out, "0 to 0 s") {
		t.Errorf("inspect of a header-only log: exit %d\n%s", code, out)
	}
	code, _, errOut := cli(t, "convert", empty, filepath.Join(t.TempDir(), "e.parquet"))
	if code != 0 || !strings.Contains(errOut, "warning: "+empty+": no readings") {
		t.Errorf("convert of a header-only log: exit %d, stderr %q", code, errOut)
	}
}
