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

// A column name holding a comma (RFC 4180, section 2, item 6) is mapped
// with --column as it is written: the flag's list splits the value at
// its commas, and the parts without "=" are put back into the name.
func TestColumnFlagNameWithComma(t *testing.T) {
	p := filepath.Join(t.TempDir(), "log.csv")
	text := "time,x,y,z,\"Field X, nT\",\"Field Y, nT\",\"Field Z, nT\"\n1776760800,0,0,0,450,16000,-46250\n1776760801,1,0,0,450,16000,-46250\n"
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "inspect", "--column", "bx=Field X, nT", "--column", "by=Field Y, nT,bz=Field Z, nT", p)
	for _, want := range []string{"bx  Field X, nT", "by  Field Y, nT", "bz  Field Z, nT"} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect output lacks %q:\n%s", want, out)
		}
	}
}
