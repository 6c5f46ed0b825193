package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

func TestConvertRoundTrip(t *testing.T) {
	// A Fenwick Lane logger export in microtesla with a semicolon delimiter.
	text := "# Fenwick Lane cable route\nt;E;N;U;Bx_uT;By_uT;Bz_uT\n" +
		"0.1;0;0;0.3;1.234567890123;19.87654321;-44.5\n" +
		"0.2;0.25;0;0.3;1.3;19.9;-44.4000000001\n"
	in := ingestTemp(t, "logger.csv", text)
	dir := t.TempDir()
	first := filepath.Join(dir, "a.parquet")
	code, _, errOut := ingestRun(t, "convert", "--columns", "x=E,y=N,z=U", in, first)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	ref, err := ingest.ReadSamples(first)
	if err != nil {
		t.Fatal(err)
	}
	uT := 1.234567890123 // scaled at run time, as the reader does
	if ref.Bx[0] != uT*1e3 || ref.X[1] != 0.25 {
		t.Fatalf("converted values %v %v", ref.Bx, ref.X)
	}
	prev := first
	for _, ext := range []string{".arrows", ".csv", ".arrow", ".parquet"} {
		next := filepath.Join(dir, "b"+ext)
		if code, _, errOut := ingestRun(t, "convert", prev, next); code != 0 {
			t.Fatalf("%s: exit %d: %s", ext, code, errOut)
		}
		got, err := ingest.ReadSamples(next)
		if err != nil {
			t.Fatal(err)
		}
		for i := range ref.Time {
			for _, pair := range [][2]float64{{ref.Time[i], got.Time[i]}, {ref.X[i], got.X[i]}, {ref.Z[i], got.Z[i]},
				{ref.Bx[i], got.Bx[i]}, {ref.By[i], got.By[i]}, {ref.Bz[i], got.Bz[i]}} {
				if math.Float64bits(pair[0]) != math.Float64bits(pair[1]) {
					t.Fatalf("%s row %d: %v became %v", ext, i, pair[0], pair[1])
				}
			}
		}
		prev = next
	}
}

func TestConvertIAGAKeepsMissing(t *testing.T) {
	p := ingestIAGA(t, "BOU202005adj.min")
	out := filepath.Join(t.TempDir(), "base.arrow")
	if code, _, errOut := ingestRun(t, "convert", p, out); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	s, err := ingest.ReadSamples(out, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 61 || !math.IsNaN(s.Bz[0]) || s.Meta["station_name"] != "Boulder" {
		t.Errorf("rows %d bz0 %v meta %v", s.Len(), s.Bz[0], s.Meta)
	}
	// --strict refuses the missing values and writes nothing.
	strict := filepath.Join(t.TempDir(), "strict.arrow")
	code, _, errOut := ingestRun(t, "convert", "--strict", ingestIAGA(t, "LLO20200106vsec.sec"), strict)
	if code != 0 {
		t.Fatalf("LLO has a complete vector; exit %d: %s", code, errOut)
	}
}

func TestConvertErrorsLeaveNothing(t *testing.T) {
	dir := t.TempDir()
	bad := ingestTemp(t, "log.csv", "time,bx,by,bz\n0,1,2,3\n1,1,2\n")
	out := filepath.Join(dir, "out.parquet")
	code, _, errOut := ingestRun(t, "convert", bad, out)
	if code != 1 || !strings.Contains(errOut, bad+":3: short row") {
		t.Errorf("exit %d: %s", code, errOut)
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("left behind: %v", ents)
	}
	code, _, errOut = ingestRun(t, "convert", bad, filepath.Join(dir, "out.xlsx"))
	if code != 2 || !strings.Contains(errOut, "use .csv, .arrow (Arrow IPC file), .arrows (Arrow IPC stream) or .parquet, in any case (.txt is CSV") {
		t.Errorf("exit %d: %s", code, errOut)
	}
	code, _, _ = ingestRun(t, "convert", bad)
	if code != 2 {
		t.Errorf("one argument: exit %d, want 2", code)
	}
	code, _, errOut = ingestRun(t, "convert", bad, bad)
	if code != 2 || !strings.Contains(errOut, "same file") {
		t.Errorf("same file: exit %d: %s", code, errOut)
	}
}
