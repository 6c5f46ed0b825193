package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestTruthExtensionChecked: simulate --truth writes CSV, so a name with
// another extension (.parquet, .json) or none is refused before any
// work, as -o and --base-log refuse an extension they cannot write.
// Before, a CSV file was written under the name given, exit 0.
func TestTruthExtensionChecked(t *testing.T) {
	dir := t.TempDir()
	sc := filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml")
	for _, name := range []string{"tr.parquet", "tr.json", "tr"} {
		truth := filepath.Join(dir, name)
		log := filepath.Join(dir, "log-"+name+".csv")
		code, stdout, errOut := cli(t, "simulate", sc, "-o", log, "--truth", truth)
		if code != 2 || !strings.Contains(errOut, "--truth "+truth+": ") || !strings.Contains(errOut, "written as CSV") || stdout != "" {
			t.Errorf("--truth %s: exit %d, stdout %q, stderr %q; want exit 2 saying the table is CSV", name, code, stdout, errOut)
		}
		for _, p := range []string{truth, log} {
			if _, err := os.Lstat(p); err == nil {
				t.Errorf("--truth %s: a refused run wrote %s", name, p)
			}
		}
	}
	for _, name := range []string{"tr.csv", "TR.TXT"} {
		truth := filepath.Join(dir, name)
		if code, _, errOut := cli(t, "simulate", sc, "-o", filepath.Join(dir, "ok-"+name+".csv"), "--truth", truth); code != 0 {
			t.Errorf("--truth %s: exit %d: %s", name, code, errOut)
		}
		if data, err := os.ReadFile(truth); err != nil || !strings.HasPrefix(string(data), "line,conductor,") {
			t.Errorf("--truth %s: not the CSV truth table (%v)", name, err)
		}
	}
}
