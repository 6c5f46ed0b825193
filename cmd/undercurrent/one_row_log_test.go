package main

import (
	"os"
	"strings"
	"testing"
)

// TestLocateOneRowLog: a log of one data row was refused with
// "undercurrent locate: no stations", naming neither the group nor why
// (two rows gave the clear "2 readings are too few for a line fit"). The
// refusal must name the group, its one reading and what a fit needs.
// Invented values.
func TestLocateOneRowLog(t *testing.T) {
	dir := t.TempDir()
	log := dir + "/one.csv"
	if err := os.WriteFile(log, []byte("time,x,y,z,bx,by,bz,group\n1770040800,-0.27,4.46,0.3,39,18861,-43983,T01\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--reference-z", "0", "-o", dir+"/out", log)
	if code == 0 {
		t.Fatal("a one-row log was fitted")
	}
	for _, want := range []string{"group T01 has 1 reading at one place", "too few for a line fit", "along a traverse"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("the refusal lacks %q:\n%s", want, errOut)
		}
	}
}
