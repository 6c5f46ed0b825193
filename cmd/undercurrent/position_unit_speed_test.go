package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPositionsInMillimetresWarned checks the position unit's plausibility
// check: the single-line scenario's log (25 A, a walk at 0.5 m/s) written
// with x, y, z in millimetres under plain x, y, z headers, as a logger
// writing mm does, is read as metres (a 25 kA line 1.4 km down), and the
// run must say so, naming --unit x=mm,y=mm,z=mm; the log in metres, and
// the mm log read with that unit, draw no such warning, and the latter
// fits the simulated 25 A (simulated truth).
func TestPositionsInMillimetresWarned(t *testing.T) {
	s, dir, canon := canonicalLog(t, "single-line.toml")
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,group\n")
	for i := range s.Len() {
		fmt.Fprintf(&b, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%s\n", s.Time[i], 1000*s.X[i], 1000*s.Y[i], 1000*s.Z[i], s.Bx[i], s.By[i], s.Bz[i], s.Group[i])
	}
	mm := filepath.Join(dir, "mm.csv")
	if err := os.WriteFile(mm, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	speedWarning := func(doc resultDoc) string {
		for _, w := range doc.Warnings {
			if strings.Contains(w, "m/s") && strings.Contains(w, "positions move") {
				return w
			}
		}
		return ""
	}
	if w := speedWarning(locateGrouped(t, mm)); w == "" || !strings.Contains(w, "--unit x=mm,y=mm,z=mm") || !strings.Contains(w, "mm.csv") {
		t.Errorf("positions in mm read as metres: warning %q, want one naming the file and --unit x=mm,y=mm,z=mm", w)
	}
	if w := speedWarning(locateGrouped(t, canon)); w != "" {
		t.Errorf("positions in metres warned: %s", w)
	}
	doc := locateGrouped(t, "--unit", "x=mm,y=mm,z=mm", mm)
	if w := speedWarning(doc); w != "" {
		t.Errorf("unit given, still warned: %s", w)
	}
	for _, g := range doc.Groups {
		if len(g.Sources) > 0 && math.Abs(g.Sources[0].Current-25) > 5*g.Sources[0].CurrentSigma+0.01 {
			t.Errorf("%s: %.4g A with the unit given, want the simulated 25 A", g.Key, g.Sources[0].Current)
		}
	}
}
