package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateFreqZeroRefused: --freq 0 is a usage error like --freq -50.
// Before, 0 was taken as no --freq: the DC field was fitted without a
// word, and --window, --mains and --coil given beside it were refused as
// needing the --freq that had been given.
func TestLocateFreqZeroRefused(t *testing.T) {
	log := filepath.Join(t.TempDir(), "walk.csv")
	if err := os.WriteFile(log, []byte("time,x,y,z,bx,by,bz\n0,0,0,0.3,1500,20800,-47500\n1,1,0,0.3,1501,20800,-47500\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, extra := range [][]string{nil, {"--window", "0.2"}, {"--mains", "50"}, {"--coil", "turns=4000,area=3e-4,mu=120"}} {
		args := append(append([]string{"locate", "--freq", "0"}, extra...), log)
		code, _, errOut := cli(t, args...)
		if code != 2 || !strings.Contains(errOut, "--freq 0: want a positive frequency in Hz (leave --freq out to fit the DC field)") {
			t.Errorf("%s: exit %d, want 2 and a refusal of --freq 0:\n%s", strings.Join(args, " "), code, errOut)
		}
	}
}
