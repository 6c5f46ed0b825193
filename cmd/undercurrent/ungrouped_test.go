package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateUngroupedLeftOut: with --group-by, readings whose group cell is
// empty belong to no group. Fitted as one more group they made a false
// conductor at chainage 0 (a "current rises" step in review) and shifted
// every chainage; they are left out and counted in a warning, and the
// route is the one the grouped readings give.
func TestLocateUngroupedLeftOut(t *testing.T) {
	_, path := scenario(t, "single-line.toml")
	dir := t.TempDir()
	log := filepath.Join(dir, "log.csv")
	mustCLI(t, "simulate", path, "-o", log)
	raw, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(raw), "\n"), "\n")
	var head []string
	for len(lines) > 0 && strings.HasPrefix(lines[0], "#") {
		head, lines = append(head, lines[0]), lines[1:]
	}
	cols := strings.Split(lines[0], ",")
	gi := -1
	for i, c := range cols {
		if c == "group" {
			gi = i
		}
	}
	if gi < 0 {
		t.Fatalf("no group column in %q", lines[0])
	}
	// Blank the group of every 50th reading.
	blanked := 0
	for i := 1; i < len(lines); i += 50 {
		f := strings.Split(lines[i], ",")
		f[gi] = ""
		lines[i] = strings.Join(f, ",")
		blanked++
	}
	holey := filepath.Join(dir, "holey.csv")
	if err := os.WriteFile(holey, []byte(strings.Join(append(head, lines...), "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	clean := locateDoc(t, "--group-by", "group", log)
	doc := locateDoc(t, "--group-by", "group", holey)
	if len(doc.Groups) != len(clean.Groups) {
		t.Fatalf("%d groups with blanks, %d without", len(doc.Groups), len(clean.Groups))
	}
	for _, g := range doc.Groups {
		if g.Key == "" {
			t.Errorf("the blank-group readings were fitted as a group")
		}
	}
	var said bool
	for _, w := range doc.Warnings {
		said = said || strings.Contains(w, "readings with an empty group left out")
	}
	if !said {
		t.Errorf("no warning counts the readings left out: %q", doc.Warnings)
	}
	if len(doc.Findings) != len(clean.Findings) {
		t.Errorf("%d findings with blanks, %d without", len(doc.Findings), len(clean.Findings))
	}
}
