package main

import (
	"fmt"
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
	// Without --group-by, the hint to group counts the column's values, not
	// the blank.
	ungrouped := locateDoc(t, holey)
	want := fmt.Sprintf("group column \"group\" with %d values", len(clean.Groups))
	var hinted bool
	for _, w := range ungrouped.Warnings {
		hinted = hinted || strings.Contains(w, want)
	}
	if !hinted {
		t.Errorf("no warning saying %q: %q", want, ungrouped.Warnings)
	}
}

// TestLocateFailureKeepsWarnings: warnings gathered before a failure are
// printed after its error (whose line stays first), since they are often
// its explanation: a time column in milliseconds read as seconds (a sample
// every 0.5 s, not every 0.5 ms) fails with "at or above the Nyquist
// frequency", and the reader's warning that the times look like
// milliseconds must follow.
func TestLocateFailureKeepsWarnings(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz\n")
	for i := range 400 {
		fmt.Fprintf(&b, "%.1f,%g,0,0,-150,19200,-45100\n", 1772359200000+0.5*float64(i), 0.01*float64(i))
	}
	log := filepath.Join(t.TempDir(), "ms.csv")
	if err := os.WriteFile(log, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "locate", "--freq", "50", log)
	w := strings.Index(errOut, "warning: ")
	e := strings.Index(errOut, "undercurrent locate: ")
	if code != 1 || e != 0 || w < e || !strings.Contains(errOut[w:], "milliseconds") || !strings.Contains(errOut[e:w], "Nyquist") {
		t.Errorf("exit %d, stderr:\n%s\nwant the Nyquist error, then the milliseconds warning", code, errOut)
	}
}
