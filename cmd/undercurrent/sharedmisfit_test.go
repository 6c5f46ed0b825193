package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateSharedMisfit: a go-and-return pair of cores 0.3 m apart 1.5 m
// down, 10 A out and 9 A back under 20 nT readings
// (testdata/scenarios/open/ac-pair-net1A.toml), fitted with one line, which
// lies 1.2 m aside (as the automatic count did before it reported such a
// pair as a pair). Every traverse misses the readings by
// about 24 nT against the 2 nT the windows themselves show, and each fit,
// measured against the median of the others, passed as sound with no word.
// locate must warn that the fitted lines do not describe the field; the
// AC walk over one cable, whose fits meet the windows' noise, must not.
func TestLocateSharedMisfit(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "pair.arrows")
	mustCLI(t, "simulate", "--seed", "2", filepath.Join("..", "..", "testdata", "scenarios", "open", "ac-pair-net1A.toml"), "-o", log)
	_, walk := acWalkAt(t, dir, "50.0", "")
	// Two traverses only: the route's own poor-fit check is off (no
	// reference noise with fewer than three groups), and the warning read
	// its limit of -1 as sqrt(-1), never firing (found in review).
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "open", "ac-pair-net1A.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(raw), "count = 7\n") {
		t.Fatal("ac-pair-net1A.toml no longer sets count = 7")
	}
	two := filepath.Join(dir, "pair2.toml")
	if err := os.WriteFile(two, []byte(strings.Replace(string(raw), "count = 7\n", "count = 2\n", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	log2 := filepath.Join(dir, "pair2.arrows")
	mustCLI(t, "simulate", "--seed", "2", two, "-o", log2)
	// The pair is fitted with one line (--count 1): the automatic count now
	// reports it as a go-and-return pair whose fits describe the field
	// (TestPairScenarios), and the one-line fits are the shared misfit.
	for _, c := range []struct {
		log   string
		warn  bool
		count string
	}{{log, true, "1"}, {log2, true, "1"}, {walk, false, "auto"}} {
		doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", "--count", c.count, c.log)
		var got string
		for _, w := range doc.Warnings {
			if strings.Contains(w, "do not describe this field") {
				got = w
			}
		}
		if c.warn && !strings.Contains(got, "groups' fits miss the readings") {
			t.Errorf("%s: warnings %q, want one saying the fits miss the readings", filepath.Base(c.log), doc.Warnings)
		}
		if !c.warn && got != "" {
			t.Errorf("%s: warning %q", filepath.Base(c.log), got)
		}
	}
}
