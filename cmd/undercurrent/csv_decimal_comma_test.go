package main

import (
	"bytes"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestLocateCSVDecimalComma: locate --csv-decimal-comma writes results.csv
// and findings.csv with semicolons and decimal commas (the numbers checked
// cell by cell in report's TestCSVDecimalCommaNumbers), leaves
// results.json (its settings too: the flag changes no result) and
// route.geojson as a run without it writes them, and without -o, where it
// would change nothing, is refused as a usage error.
func TestLocateCSVDecimalComma(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	usual, comma := filepath.Join(dir, "usual"), filepath.Join(dir, "comma")
	mustCLI(t, "locate", log, "--reference-z", "0", "-o", usual)
	mustCLI(t, "locate", log, "--reference-z", "0", "--csv-decimal-comma", "-o", comma)
	read := func(dir, name string) []byte {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	created := regexp.MustCompile(`"created": "[^"]*"`)
	for _, f := range []string{"results.json", "route.geojson"} {
		u := created.ReplaceAll(read(usual, f), nil)
		c := created.ReplaceAll(read(comma, f), nil)
		if !bytes.Equal(u, c) {
			t.Errorf("%s changes with --csv-decimal-comma", f)
		}
	}
	for _, f := range []string{"results.csv", "findings.csv"} {
		u, c := string(read(usual, f)), string(read(comma, f))
		header, _, _ := strings.Cut(c, "\n")
		if !strings.Contains(header, "kind;") || strings.Contains(header, ",") {
			t.Errorf("%s header with --csv-decimal-comma: %q; want fields separated by semicolons", f, header)
		}
		if strings.Count(u, "\n") != strings.Count(c, "\n") {
			t.Errorf("%s: %d lines with --csv-decimal-comma, %d without", f, strings.Count(c, "\n"), strings.Count(u, "\n"))
		}
	}
	if !bytes.Contains(read(comma, "report.html"), []byte("separate their fields with semicolons")) {
		t.Error("report.html does not say the CSV files are separated by semicolons")
	}
	code, _, stderr := cli(t, "locate", log, "--csv-decimal-comma")
	if code != 2 || !strings.Contains(stderr, "--csv-decimal-comma") || !strings.Contains(stderr, "-o DIR") {
		t.Errorf("--csv-decimal-comma without -o: exit %d, %q; want a usage error naming -o DIR", code, stderr)
	}
}
