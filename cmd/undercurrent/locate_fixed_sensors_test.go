package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateFixedSensorsRefusedFromColumns checks that a record of fixed
// sensors (one row per sensor and time, no position columns) is refused
// from its header, before its rows or the base log are read, with words
// that send it to serve and replay. The log's last row holds a mistyped
// reading: had locate read the rows through (as it did, taking seconds and
// over a gigabyte on a 9 M-row record), it would have stopped there; the
// base log named does not exist, and was read before the survey log.
func TestLocateFixedSensorsRefusedFromColumns(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("time,bx,by,bz,group\n")
	sensors := []string{"w1", "w2", "e1", "e2", "n1"}
	for i := 0; i < 400; i++ {
		for _, s := range sensors {
			fmt.Fprintf(&b, "%.3f,1200.5,19200.25,-45000.75,%s\n", float64(i)*0.002, s)
		}
	}
	b.WriteString("0.800,1200.5,19200.25,-45000.75oo,w1\n")
	log := filepath.Join(dir, "fixed.csv")
	if err := os.WriteFile(log, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"alone", []string{log}},
		{"with a base", []string{"--base", filepath.Join(dir, "base.min"), log}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(dir, "out-"+strings.ReplaceAll(tc.name, " ", "-"))
			code, _, stderr := cli(t, append(append([]string{"locate"}, tc.args...), "-o", out)...)
			if code != 1 {
				t.Fatalf("exit %d, want 1; stderr:\n%s", code, stderr)
			}
			for _, want := range []string{"fixed.csv has no positions", "--column", "undercurrent serve", "undercurrent replay"} {
				if !strings.Contains(stderr, want) {
					t.Errorf("stderr lacks %q:\n%s", want, stderr)
				}
			}
			for _, not := range []string{"45000.75oo", "base.min"} {
				if strings.Contains(stderr, not) {
					t.Errorf("stderr has %q: the rows or the base were read before the columns refused the log:\n%s", not, stderr)
				}
			}
			if _, err := os.Stat(out); !os.IsNotExist(err) {
				t.Errorf("output %s left behind (%v)", out, err)
			}
		})
	}
}
