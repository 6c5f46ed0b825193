package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestSimulateFormats writes one scenario in every format ingest writes and
// reads each back: the same readings, groups and origin.
func TestSimulateFormats(t *testing.T) {
	sc, path := scenario(t, "kestrel-moor-step.toml")
	want, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, ext := range []string{".csv", ".arrow", ".arrows", ".parquet"} {
		t.Run(ext, func(t *testing.T) {
			log := filepath.Join(dir, "kestrel"+ext)
			out := mustCLI(t, "simulate", path, "-o", log)
			if !strings.Contains(out, "4221 readings on 21 survey lines") || !strings.Contains(out, "times the 1 nT reading noise") {
				t.Errorf("output:\n%s", out)
			}
			got, err := ingest.ReadSamples(log)
			if err != nil {
				t.Fatal(err)
			}
			if got.Len() != want.Len() {
				t.Fatalf("%d rows read back, want %d", got.Len(), want.Len())
			}
			for i := 0; i < want.Len(); i += 97 {
				if got.Time[i] != want.Time[i] || got.X[i] != want.X[i] || got.Bz[i] != want.Bz[i] || got.Group[i] != want.Group[i] {
					t.Fatalf("row %d differs: %v %v %v %q", i, got.Time[i], got.X[i], got.Bz[i], got.Group[i])
				}
			}
			if got.Origin == nil || got.Origin.Lat != sc.Origin.Lat || got.Origin.Lon != sc.Origin.Lon {
				t.Errorf("origin %v, want %+v", got.Origin, sc.Origin)
			}
		})
	}
}

// TestSimulateBaseAndSeed writes the base-station log and checks that
// --seed changes the noise and nothing else.
func TestSimulateBaseAndSeed(t *testing.T) {
	_, path := scenario(t, "single-line.toml")
	dir := t.TempDir()
	a, b, base := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv"), filepath.Join(dir, "base.csv")
	out := mustCLI(t, "simulate", path, "-o", a, "--base-log", base)
	if !strings.Contains(out, "base-station readings") {
		t.Errorf("output:\n%s", out)
	}
	truth := filepath.Join(dir, "truth.csv")
	mustCLI(t, "simulate", "--seed", "12345", path, "-o", b, "--truth", truth)
	// Seven traverses over one line: a header and seven rows, each 1.1 m
	// deep carrying 25 A (the scenario's values).
	data, err := os.ReadFile(truth)
	if err != nil {
		t.Fatal(err)
	}
	rows := strings.Split(strings.TrimSpace(string(data)), "\n")
	if len(rows) != 8 || !strings.HasPrefix(rows[1], "T01,1,earthing conductor,") || !strings.Contains(rows[7], ",1.1000,") || !strings.Contains(rows[7], ",25,0,0,") {
		t.Errorf("truth file:\n%s", data)
	}
	sa, err := ingest.ReadSamples(a)
	if err != nil {
		t.Fatal(err)
	}
	sb, err := ingest.ReadSamples(b)
	if err != nil {
		t.Fatal(err)
	}
	if sa.X[5] != sb.X[5] || sa.Time[5] != sb.Time[5] || sa.Bx[5] == sb.Bx[5] {
		t.Error("--seed should change the noise only")
	}
	bs, err := ingest.ReadSamples(base)
	if err != nil {
		t.Fatal(err)
	}
	if bs.X != nil || bs.Time[0] > sa.Time[0] || bs.Time[bs.Len()-1] < sa.Time[sa.Len()-1] {
		t.Error("the base-station log should have no positions and cover the survey")
	}
}

func TestSimulateErrors(t *testing.T) {
	dir := t.TempDir()
	_, good := scenario(t, "two-conductors.toml")
	bad := filepath.Join(dir, "bad.toml")
	if err := os.WriteFile(bad, []byte("[sensor]\nsample_rate_hz = 10\n[[conductor]]\nkind = \"wire\"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"no scenario", []string{"-o", filepath.Join(dir, "x.csv")}, 2, "takes one SCENARIO file, got 0 arguments"},
		{"no output", []string{good}, 2, "missing -o"},
		{"bad extension", []string{good, "-o", filepath.Join(dir, "x.xlsx")}, 2, `".xlsx"`},
		{"missing directory", []string{good, "-o", filepath.Join(dir, "nodir", "x.csv")}, 2, "output directory " + filepath.Join(dir, "nodir") + " does not exist"},
		{"missing truth directory", []string{good, "-o", filepath.Join(dir, "x.csv"), "--truth", filepath.Join(dir, "nodir", "t.csv")}, 2, "output directory " + filepath.Join(dir, "nodir") + " does not exist"},
		{"no extension", []string{good, "-o", filepath.Join(dir, "x")}, 2, "no extension"},
		{"bad scenario", []string{bad, "-o", filepath.Join(dir, "x.csv")}, 1, `bad.toml:4:8: conductor 1 (""): unknown kind "wire"`},
		{"missing scenario", []string{filepath.Join(dir, "none.toml"), "-o", filepath.Join(dir, "x.csv")}, 1, "none.toml"},
		{"no base station", []string{good, "-o", filepath.Join(dir, "x.csv"), "--base-log", filepath.Join(dir, "b.csv")}, 1, "no [base] table"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := cli(t, append([]string{"simulate"}, tc.args...)...)
			if code != tc.code || !strings.Contains(stderr, tc.want) || !strings.HasPrefix(stderr, "undercurrent simulate: ") {
				t.Errorf("exit %d, stderr %q; want exit %d and %q", code, stderr, tc.code, tc.want)
			}
		})
	}
	if _, err := os.Stat(filepath.Join(dir, "x.csv")); !os.IsNotExist(err) {
		t.Error("a failed run left a log behind")
	}
}
