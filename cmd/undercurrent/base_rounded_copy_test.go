package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestLocateBaseRoundedSurveyCopy: a survey log's own readings given as
// --base, exported with the field rounded to 0.01 or 0.1 nT (as a
// spreadsheet or a logger's export writes them), with or without its
// traverse column, are refused as the exact copy is. Before, only exact
// equality was caught: the rounded copy was taken as the base, the
// correction took the conductor's anomaly away, and every traverse read
// "no current found" with exit status 0. The scenario's own base station
// (offsets of 12-35 nT, as any second magnetometer elsewhere has) is
// still taken.
func TestLocateBaseRoundedSurveyCopy(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, _ := kestrelWithBase(t, dir)
	s, err := ingest.ReadSamples(survey)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name   string
		format string
		group  bool
	}{
		{"0.01 nT, with its traverse column", "%.2f", true},
		{"0.01 nT, no group column", "%.2f", false},
		{"0.1 nT, no group column", "%.1f", false},
	} {
		path := filepath.Join(dir, strings.NewReplacer(" ", "-", ",", "").Replace(c.name)+".csv")
		var sb strings.Builder
		sb.WriteString("time,bx,by,bz")
		if c.group {
			sb.WriteString(",traverse")
		}
		sb.WriteString("\n")
		for i := range s.Len() {
			fmt.Fprintf(&sb, "%.3f,"+c.format+","+c.format+","+c.format, s.Time[i], s.Bx[i], s.By[i], s.Bz[i])
			if c.group {
				sb.WriteString("," + s.Group[i])
			}
			sb.WriteString("\n")
		}
		if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		code, out, errOut := cli(t, "locate", "--group-by", "group", "--base", path, survey)
		want := fmt.Sprintf("%s: %d of the base log's %d readings are readings of the survey log %s (the same time and field, within 0.5 nT on all three axes", path, s.Len(), s.Len(), survey)
		if code != 1 || !strings.Contains(errOut, want) {
			t.Errorf("survey rounded to %s as --base: exit %d, stdout %q, stderr %q; want a refusal containing %q", c.name, code, out, errOut, want)
		}
	}
	code, out, errOut := cli(t, "locate", "--group-by", "group", "--base", basePath, survey)
	if code != 0 || strings.Contains(out+errOut, "survey's own readings") {
		t.Errorf("the scenario's base station: exit %d, stdout %q, stderr %q; want it taken", code, out, errOut)
	}
}
