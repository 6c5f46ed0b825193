package main

// Base records given in several files (--base more than once): the join
// does not depend on the order of the files, and a level step where one
// file ends and the next begins is refused.

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
	"undercurrent/report"
)

// A base logger restarted between its two files reads another level: the
// Kestrel Moor simulation's base log split in two, the second half 50 nT
// higher east and 30 nT lower north (a fluxgate logger set down again can
// move by tens of nT), is refused, naming the step; split without a step
// it is joined and every group is fitted as with the one file. The refusal exits 1,
// as input that cannot be used does (README), not 2 as a usage error. Before,
// the step was joined without a word and went into the correction, where
// the traverse walked across it read a poor fit blamed on a bend of the
// conductor (a step of the field along one traverse, simulated truth: the
// pipe is straight there).
func TestLocateBaseFilesLevelStepRefused(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	mid := base.Len() / 2
	first, second := filepath.Join(dir, "base-1.csv"), filepath.Join(dir, "base-2.csv")
	writeBaseCSV(t, first, base, 1, func(i int) bool { return i < mid })
	writeBaseCSV(t, second, base, 1, func(i int) bool { return i >= mid })
	whole := baseLocateDoc(t, "--base", filepath.Join(dir, "base.csv"), survey)
	split := baseLocateDoc(t, "--base", first, "--base", second, survey)
	if len(split.Groups) != len(whole.Groups) {
		t.Fatalf("%d groups split, %d whole", len(split.Groups), len(whole.Groups))
	}
	stepped := &ingest.Samples{Time: base.Time, Bx: append([]float64(nil), base.Bx...), By: append([]float64(nil), base.By...), Bz: base.Bz}
	for i := mid; i < base.Len(); i++ {
		stepped.Bx[i] += 50
		stepped.By[i] -= 30
	}
	step := filepath.Join(dir, "base-2-step.csv")
	writeBaseCSV(t, step, stepped, 1, func(i int) bool { return i >= mid })
	for _, order := range [][2]string{{first, step}, {step, first}} {
		code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", order[0], "--base", order[1], survey, "-o", filepath.Join(dir, "out"))
		// A data problem, exit 1 (before: 2, a usage error, though the
		// step is found only once both files are read).
		if code != 1 || !strings.Contains(stderr, "do not join at one level") || !strings.Contains(stderr, "steps by +50.") || !strings.Contains(stderr, "nT east, -30.") {
			t.Errorf("--base %s --base %s: exit %d, stderr:\n%s\nwant the level step refused", filepath.Base(order[0]), filepath.Base(order[1]), code, stderr)
		}
	}
}

// Two files of one record, one of them with a minute left out (Boulder's
// one-minute record of 1 November 2014, INTERMAGNET / USGS, IAGA-2002;
// ../shared/data/iaga2002/SOURCE.md, the 16:10 row deleted): the other
// file fills the minute, in either order, and the survey is corrected as
// with the whole file alone. Before, the files were joined one after
// another: with the cut file first the whole file's 16:10 reading was
// refused as "readings at other times", and with it second the run was
// accepted.
func TestLocateBaseFilesJoinedInEitherOrder(t *testing.T) {
	day := ingesttest.IAGAFile(t, "bou20141101vmin.min")
	dir := t.TempDir()
	raw, err := os.ReadFile(day)
	if err != nil {
		t.Fatal(err)
	}
	var kept []string
	cut := 0
	for _, l := range strings.SplitAfter(string(raw), "\n") {
		if strings.HasPrefix(l, "2014-11-01 16:10:00.000") {
			cut++
			continue
		}
		kept = append(kept, l)
	}
	if cut != 1 {
		t.Fatalf("%d rows at 16:10, want 1", cut)
	}
	holed := filepath.Join(dir, "bou-no1610.min")
	if err := os.WriteFile(holed, []byte(strings.Join(kept, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	base, err := ingest.ReadSamples(day, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	sc := slowDCScenario(t, dir, "2014-11-01T16:00:00Z", 3)
	survey, _ := withBoulderVariation(t, dir, sc, base)
	alone, _ := locateBaseDoc(t, "--base", day, survey)
	for _, order := range [][2]string{{holed, day}, {day, holed}} {
		code, out, stderr := cli(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", "--base", order[0], "--base", order[1], survey)
		if code != 0 {
			t.Errorf("--base %s --base %s: exit %d\n%s", filepath.Base(order[0]), filepath.Base(order[1]), code, stderr)
			continue
		}
		var doc report.Document
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		if len(doc.BaseStation.BaseGaps) != 0 {
			t.Errorf("gaps %+v: the other file holds 16:10", doc.BaseStation.BaseGaps)
		}
		for i, g := range doc.Groups {
			if c, w := g.Sources[0], alone.Groups[i].Sources[0]; c.Current != w.Current || c.Depth != w.Depth || g.Problem != "" {
				t.Errorf("%s: %v A %v m (problem %q), with the whole file alone %v A %v m", g.Key, c.Current, c.Depth, g.Problem, w.Current, w.Depth)
			}
		}
	}
}
