package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestLocateBaseLatLonNoHeightWarning: a base log that records its fixed
// position as latitude and longitude, with no height, drew the survey's
// warning to map a height with --column, though the base log's positions
// play no part in the correction and --column maps survey columns (found
// in review). The Kestrel Moor base record (simulated, as the README's
// walk-through makes it) with constant lat and lon columns added draws no
// such warning.
func TestLocateBaseLatLonNoHeightWarning(t *testing.T) {
	dir := t.TempDir()
	survey, b := kestrelMoorWithBase(t, dir)
	plain := filepath.Join(dir, "base.csv")
	if err := ingest.WriteSamples(plain, b); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(plain)
	if err != nil {
		t.Fatal(err)
	}
	var lines []string
	header := true
	for _, l := range strings.Split(strings.TrimRight(string(raw), "\n"), "\n") {
		switch {
		case strings.HasPrefix(l, "#"):
		case header:
			l += ",lat,lon"
			header = false
		default:
			l += ",54.3123,-2.0822"
		}
		lines = append(lines, l)
	}
	ll := filepath.Join(dir, "base-ll.csv")
	if err := os.WriteFile(ll, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "locate", "--group-by", "group", "--base", ll, "-o", filepath.Join(dir, "res"), survey)
	if strings.Contains(out, "no column for height") {
		t.Errorf("a base log's latitude and longitude drew the height warning:\n%s", out)
	}
	if !strings.Contains(out, "fitted 21 group(s)") {
		t.Errorf("the run with the base log did not fit the 21 traverses:\n%s", out)
	}
}
