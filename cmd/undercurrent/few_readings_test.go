package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateFewReadings: a traverse cut to three readings (one traverse of the
// two-conductors-fault scenario, simulated). locate had panicked on it (exit 2,
// nothing written). Now it fits one line, but from three degrees of freedom the
// noise estimated from the residuals, and with it every sigma, is uncertain by
// about 1/sqrt(2 x 3) = 41% of itself (the spread of the chi distribution; common
// practice), so the group must not be called sound unless the reading noise is given.
func TestLocateFewReadings(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "short.csv")
	text := `time,x,y,z,bx,by,bz
1773051736,-6,270,0.3,80.04608161740957,19140.134642644076,-43856.02282529236
1773051746,-1,270,0.3,3109.9710725927393,19152.912286033312,-41930.67435297937
1773051756,4,270,0.3,2022.132741275361,19143.944488454003,-47744.09786309644
`
	if err := os.WriteFile(log, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	doc := locateInto[pairDoc](t, log)
	if len(doc.Groups) != 1 {
		t.Fatalf("%d groups, want 1", len(doc.Groups))
	}
	if g := doc.Groups[0]; !strings.Contains(g.Problem, "degrees of freedom") || !strings.Contains(g.Problem, "41%") {
		t.Errorf("three readings: problem %q, want one on the 3 degrees of freedom (41%%)", g.Problem)
	}
	doc = locateInto[pairDoc](t, "--noise", "5", log)
	if g := doc.Groups[0]; strings.Contains(g.Problem, "degrees of freedom") {
		t.Errorf("three readings with the noise given: problem %q", g.Problem)
	}
}
