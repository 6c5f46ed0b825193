package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

func ingestRun(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errOut bytes.Buffer
	code = run(context.Background(), args, &out, &errOut)
	return code, out.String(), errOut.String()
}

func ingestTemp(t *testing.T, name, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// ingestIAGA returns a real IAGA-2002 file from ../shared/data/iaga2002 (seen
// from the module root), or skips.
func ingestIAGA(t *testing.T, name string) string {
	t.Helper()
	p := filepath.Join("..", "..", "..", "shared", "data", "iaga2002", name)
	if _, err := os.Stat(p); err != nil {
		t.Skipf("real IAGA-2002 file absent: %v", err)
	}
	return p
}

func TestInspectText(t *testing.T) {
	// A Harrow Fen traverse whose field columns hold millitesla but carry no
	// unit: |B| of about 0.05 read as nT is no Earth field (which is about
	// 0.02-0.07 mT, common practice), so inspect should say so.
	var b strings.Builder
	b.WriteString("# Harrow Fen substation, traverse A\ntime,x,y,z,bx,by,bz,traverse\n")
	for i := 0; i < 10; i++ {
		fmt.Fprintf(&b, "%d,%g,0,0.2,0.002,0.019,-0.046,A\n", i, 0.5*float64(i))
	}
	b.WriteString("20,5,0,0.2,0.002,0.019,-0.046,A\n") // a gap of 11 s
	p := ingestTemp(t, "harrow.csv", b.String())
	code, out, errOut := ingestRun(t, "inspect", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{
		"rows      11",
		"median step 1 s (1 Hz); 1 gap, longest 11 s after data row 10 of 11",
		"probably in mT (try --unit bx=mT,by=mT,bz=mT)",
		"group  traverse",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestInspectJSONReal(t *testing.T) {
	p := ingestIAGA(t, "bou20141101vmin.min")
	code, out, errOut := ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var in ingest.Inspection
	if err := json.Unmarshal([]byte(out), &in); err != nil {
		t.Fatal(err)
	}
	// One-minute data for one day: 1440 rows, 60 s steps, no gaps.
	if in.Rows != 1440 || in.Time.Interval != 60 || in.Time.Gaps != 0 || in.Format != "iaga2002" {
		t.Errorf("rows %d interval %g gaps %d format %s", in.Rows, in.Time.Interval, in.Time.Gaps, in.Format)
	}
	if in.Time.StartUTC != "2014-11-01T00:00:00Z" || in.Meta["station_name"] != "Boulder" {
		t.Errorf("start %q meta %v", in.Time.StartUTC, in.Meta)
	}
	if len(in.Warnings) != 0 {
		t.Errorf("warnings on a clean observatory day: %v", in.Warnings)
	}
}

func TestInspectMissingReal(t *testing.T) {
	p := ingestIAGA(t, "BOU202005adj.min")
	code, out, errOut := ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var in ingest.Inspection
	if err := json.Unmarshal([]byte(out), &in); err != nil {
		t.Fatal(err)
	}
	missing := map[string]int{}
	for _, c := range in.Columns {
		missing[c.Column] = c.Missing
	}
	// BOU202005adj.min: Z is NUL in all 61 rows; the last row is 99999.00
	// in every element.
	if missing["bz"] != 61 || missing["bx"] != 1 || missing["by"] != 1 {
		t.Errorf("missing %v", missing)
	}
}

func TestInspectErrors(t *testing.T) {
	bad := ingestTemp(t, "log.csv", "time,bx,by,bz\n0,1,2,3\n1,1,2,1oo.0\n")
	cases := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"no file", []string{"inspect"}, 2, "inspect takes one FILE"},
		{"bad cell", []string{"inspect", bad}, 1, "undercurrent inspect: " + bad + `:3: column bz: "1oo.0" is not a number`},
		{"absent file", []string{"inspect", filepath.Join(t.TempDir(), "none.csv")}, 1, "cannot read: no such file"},
		{"bad origin", []string{"inspect", "--origin", "north", bad}, 2, "--origin"},
		{"bad mapping", []string{"inspect", "--columns", "bq=B", bad}, 2, `--column "bq=B": want canonical=source`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			code, out, errOut := ingestRun(t, tc.args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d", code, tc.code)
			}
			if !strings.Contains(out+errOut, tc.want) {
				t.Errorf("output %q lacks %q", out+errOut, tc.want)
			}
		})
	}
}

// A 60 s Harrow Fen log at 500 Hz from 06:00:00Z: the end reads like the
// duration, rounded to the milliseconds shown (RFC 3339 time-secfrac), and
// --json writes empty lists as [] (RFC 8259 §5), not null.
func TestInspectRoundedEndAndEmptyLists(t *testing.T) {
	const start = 1796104800 // 2026-12-01T06:00:00Z, by `date -u -d 2026-12-01T06:00:00Z +%s`
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i := 0; i < 30000; i++ {
		fmt.Fprintf(&b, "%.17g,1000,2000,-45000\n", float64(start)+float64(i)*0.002)
	}
	p := ingestTemp(t, "harrow-fen.csv", b.String())
	code, out, errOut := ingestRun(t, "inspect", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if want := "2026-12-01T06:00:00Z to 2026-12-01T06:00:59.998Z (59.998 s)"; !strings.Contains(out, want) {
		t.Errorf("output lacks %q:\n%s", want, out)
	}
	code, out, errOut = ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if strings.Contains(out, "null") {
		t.Errorf("JSON holds null:\n%s", out)
	}
	for _, want := range []string{`"unused_columns": []`, `"largest_gaps": []`} {
		if !strings.Contains(out, want) {
			t.Errorf("JSON lacks %s:\n%s", want, out)
		}
	}
}
