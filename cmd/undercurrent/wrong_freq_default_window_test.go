package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestWrongFreqRefusedWithDefaultWindow: the demo's 50 Hz site
// (testdata/demo/fenwick-lane.toml, frequency_hz = 50: simulated truth)
// located with --freq 60 and the default window is refused, naming the
// 50 Hz the field runs at, as it is with --window 0.2. Before, one
// window's four-parameter fit diverged, the frequency check gave up on the
// whole log ("could not be checked"), and every traverse reported no
// conductor over a 42 A cable (found in review).
func TestWrongFreqRefusedWithDefaultWindow(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates the demo's 31 traverses")
	}
	log := filepath.Join(t.TempDir(), "fen.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "demo", "fenwick-lane.toml"), "-o", log)
	code, _, errOut := cli(t, "locate", "--freq", "60", "--group-by", "group", log)
	if code != 1 || !strings.Contains(errOut, "does not run at the 60 Hz given") || !strings.Contains(errOut, "about 50.00 Hz") {
		t.Errorf("exit %d, stderr %q; want 1 and a message naming 50 Hz", code, errOut)
	}
}
