package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateNoSignal: a 50 Hz walk demodulated at 512 Hz holds no signal
// at all. Each traverse's fit still places a line somewhere, with a
// current within its noise (0.0009 ± 0.0013 A) and a depth that is noise
// (-0.02 m: above the sensors); before, the three groups were called sound
// and the cover check warned of a conductor 0.32 m above the ground. A
// group whose strongest line carries no significant current is not sound
// and stays out of the current and cover profile.
func TestLocateNoSignal(t *testing.T) {
	_, log := acWalkAt(t, t.TempDir(), "50.0", "")
	doc := locateDoc(t, "--freq", "512", "--mains", "none", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6", log)
	if len(doc.Groups) != 3 {
		t.Fatalf("%d groups, want 3", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if g.OK {
			t.Errorf("%s: called sound with no signal", g.Key)
		}
	}
	var said int
	for _, f := range doc.Findings {
		switch {
		case f.Kind == "shallow-cover":
			t.Errorf("a cover finding with no conductor: %s", f.Message)
		case f.Kind == "poor-fit" && strings.Contains(f.Message, "no current found") && strings.Contains(f.Message, "left out of the current and cover profile"):
			said++
		}
	}
	if said != 3 {
		t.Errorf("%d findings say no current was found, want 3: %+v", said, doc.Findings)
	}
	// Nor is the window's travel judged by a distance to a conductor that
	// is not there: at 150 Hz the failed fits' lines sit 2 cm under the
	// sensors, and the run warned of a travel 5 times that distance.
	at150 := locateDoc(t, "--freq", "150", "--group-by", "group", "--reference-z", "0", log)
	for _, w := range at150.Warnings {
		if strings.HasPrefix(w, "AC windows") {
			t.Errorf("travel warning from failed fits: %s", w)
		}
	}
	// Nor is a failed group's line conductor 1 in results.csv.
	out := filepath.Join(t.TempDir(), "out")
	mustCLI(t, "locate", "--freq", "512", "--mains", "none", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6", log, "-o", out)
	f, err := os.Open(filepath.Join(out, "results.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil || len(rows) < 2 {
		t.Fatalf("results.csv: %v, %d rows", err, len(rows))
	}
	col := -1
	for i, h := range rows[0] {
		if h == "conductor" {
			col = i
		}
	}
	for _, r := range rows[1:] {
		if r[col] != "" {
			t.Errorf("a source of a failed group is conductor %q: %v", r[col], r)
		}
	}
}
