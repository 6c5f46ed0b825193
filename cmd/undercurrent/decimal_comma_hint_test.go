package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The refusal of a decimal comma names the command line's flag, not the
// Go option behind it.
func TestDecimalCommaHintNamesFlag(t *testing.T) {
	p := filepath.Join(t.TempDir(), "log.csv")
	if err := os.WriteFile(p, []byte("time;x;y;z;bx;by;bz\n1776760800;0;0;0;450,5;16000;-46250\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "inspect", "--decimal-comma=false", p)
	want := p + `:2: column bx: "450,5" is not a number (a decimal comma? read the file with decimal commas: --decimal-comma)`
	if code != 1 || !strings.Contains(errOut, want) || strings.Contains(errOut, "WithDecimalComma") {
		t.Errorf("exit %d, stderr %q; want %q", code, errOut, want)
	}
}
