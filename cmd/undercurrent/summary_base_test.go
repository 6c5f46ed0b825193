package main

import (
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// TestSummarySaysBaseCorrection: the terminal summary says in one line
// whether a base correction was applied, with what it removed (as
// results.json's base_station does), or, on a DC walk of over half an hour
// without one, that none was. Before, both summaries read alike. A walk of
// ten minutes says nothing of it. The walk is TestCurvedDriftWithoutBaseWarned's
// (slowDCScenario from 13:30 UTC on 2 November 2014 with the Boulder
// observatory's real variation added).
func TestSummarySaysBaseCorrection(t *testing.T) {
	full := ingesttest.IAGAFile(t, "bou20141102vmin.min")
	base, err := ingest.ReadSamples(full, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	walk, _ := withBoulderVariation(t, dir, slowDCScenario(t, dir, "2014-11-02T13:30:00Z", 5), base)
	line := func(out string) string {
		for _, l := range strings.Split(out, "\n") {
			if strings.HasPrefix(l, "base-station correction") {
				return l
			}
		}
		return ""
	}
	with := line(mustCLI(t, "locate", "--group-by", "group", "--base", full, walk))
	if !strings.HasPrefix(with, "base-station correction from "+full+": ") || !strings.Contains(with, "marram-bank.csv: departures up to ") || !strings.Contains(with, "nT (east/north/up) removed") {
		t.Errorf("with --base: summary line %q", with)
	}
	without := line(mustCLI(t, "locate", "--group-by", "group", walk))
	if !strings.HasPrefix(without, "base-station correction: none applied") || !strings.Contains(without, "span 37 min") || !strings.Contains(without, "--base") {
		t.Errorf("without --base: summary line %q", without)
	}
	dir = t.TempDir()
	short, _ := withBoulderVariation(t, dir, slowDCScenario(t, dir, "2014-11-02T13:30:00Z", 2), base)
	if l := line(mustCLI(t, "locate", "--group-by", "group", short)); l != "" {
		t.Errorf("a walk of ten minutes without --base: summary line %q", l)
	}
}
