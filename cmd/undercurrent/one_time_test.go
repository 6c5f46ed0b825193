package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestLocateOneTimeWarned: the single-line scenario's DC log with its
// time column saved by a spreadsheet to six significant figures, so that
// every row holds one time. locate fitted it and said nothing; it now
// warns, naming the log and the cause, and inspect warns too.
func TestLocateOneTimeWarned(t *testing.T) {
	_, path := scenario(t, "single-line.toml")
	dir := t.TempDir()
	exact := filepath.Join(dir, "sl.csv")
	mustCLI(t, "simulate", path, "-o", exact)
	text, err := os.ReadFile(exact)
	if err != nil {
		t.Fatal(err)
	}
	// Every data row's time (the first field, Unix seconds) as 1.77841E+09.
	rounded := regexp.MustCompile(`(?m)^[0-9.e+]+,`).ReplaceAllString(string(text), "1.77841E+09,")
	if rounded == string(text) {
		t.Fatal("no time rewritten")
	}
	log := filepath.Join(dir, "excel.csv")
	if err := os.WriteFile(log, []byte(rounded), 0o644); err != nil {
		t.Fatal(err)
	}
	var doc resultDoc
	if err := json.Unmarshal([]byte(mustCLI(t, "locate", "--json", "--group-by", "group", log)), &doc); err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(doc.Warnings, "\n"); !strings.Contains(w, "excel.csv: every one of the") || !strings.Contains(w, "has the same time") {
		t.Errorf("no warning that every row has one time: %q", doc.Warnings)
	}
	if out := mustCLI(t, "inspect", log); !strings.Contains(out, "has the same time") {
		t.Errorf("inspect: no warning that every row has one time:\n%s", out)
	}
}
