package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestIAGALayoutFlagsRefused: --unit, --column, --frame, --delimiter,
// --decimal-comma (and the other flags describing a log's layout) given
// with an IAGA-2002 input to inspect or convert are a usage error before
// any work, as locate refuses --base-unit and the like for an IAGA-2002
// base: the format fixes the columns, their axes and unit (nT). Before,
// they were dropped without a word (exit 0, same output as without
// them). The input is a real INTERMAGNET file (Boulder, November 2014).
func TestIAGALayoutFlagsRefused(t *testing.T) {
	iaga := ingestIAGA(t, "bou20141101vmin.min")
	dir := t.TempDir()
	for _, c := range []struct {
		flags []string
		named string
	}{
		{[]string{"--unit", "bx=uT,by=uT,bz=uT"}, "--unit does not apply"},
		{[]string{"--column", "bx=BOUZ", "--frame", "ned"}, "--column, --frame do not apply"},
		{[]string{"--frame", "ned"}, "--frame does not apply"},
		{[]string{"--delimiter", ";"}, "--delimiter does not apply"},
		{[]string{"--decimal-comma"}, "--decimal-comma does not apply"},
	} {
		for _, cmd := range [][]string{{"inspect", iaga}, {"convert", iaga, filepath.Join(dir, "out.csv")}} {
			args := append(append([]string{cmd[0]}, c.flags...), cmd[1:]...)
			code, stdout, errOut := cli(t, args...)
			if code != 2 || !strings.Contains(errOut, c.named) || !strings.Contains(errOut, "it is an IAGA-2002 file") || stdout != "" {
				t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and %q", args, code, stdout, errOut, c.named)
			}
		}
	}
	if _, err := os.Lstat(filepath.Join(dir, "out.csv")); err == nil {
		t.Error("a refused convert wrote its output")
	}
	// The flags that do apply to an IAGA-2002 file are still taken.
	if code, _, errOut := cli(t, "inspect", "--iaga-baseline-frame", iaga); code != 0 {
		t.Errorf("inspect --iaga-baseline-frame: exit %d: %s", code, errOut)
	}
	if code, _, errOut := cli(t, "convert", iaga, filepath.Join(dir, "ok.csv")); code != 0 {
		t.Errorf("convert: exit %d: %s", code, errOut)
	}
	// A CSV log takes them as before.
	csv := filepath.Join(dir, "ok.csv")
	if code, _, errOut := cli(t, "inspect", "--frame", "enu", csv); code != 0 {
		t.Errorf("inspect --frame enu on CSV: exit %d: %s", code, errOut)
	}
}
