package main

import (
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// reorderedCopy returns a copy of the samples s (positions, field, time
// and group) with its rows in the order orig (the row of s each row
// comes from).
func reorderedCopy(s *ingest.Samples, orig []int) *ingest.Samples {
	c := &ingest.Samples{Frame: s.Frame, Origin: s.Origin, Meta: s.Meta}
	for _, i := range orig {
		c.Time = append(c.Time, s.Time[i])
		c.X, c.Y, c.Z = append(c.X, s.X[i]), append(c.Y, s.Y[i]), append(c.Z, s.Z[i])
		c.Bx, c.By, c.Bz = append(c.Bx, s.Bx[i]), append(c.By, s.By[i]), append(c.Bz, s.Bz[i])
		c.Group = append(c.Group, s.Group[i])
	}
	return c
}

// traversesReversed returns the rows of s with its groups in the reverse
// order of their first rows, each group's rows in the log's order.
func traversesReversed(s *ingest.Samples) []int {
	var order []string
	rows := map[string][]int{}
	for i, g := range s.Group {
		if rows[g] == nil {
			order = append(order, g)
		}
		rows[g] = append(rows[g], i)
	}
	var out []int
	for k := len(order) - 1; k >= 0; k-- {
		out = append(out, rows[order[k]]...)
	}
	return out
}

// TestLocateOneLogRowOrderSetsNoChainage: the Kestrel Moor survey
// (testdata/scenarios/kestrel-moor-step.toml, simulated truth: the pipe
// walked from T01 to T21, the 0.30 A coating defect at chainage 250 m
// between T13 and T14) in one log, its rows in time order, with its
// traverses in the reverse order (each in time order, read with
// --time-order per-group: a database export, two daily files joined) and
// with its rows shuffled (--time-order any). Within one log the groups
// kept the order of their first rows: the reversed and the shuffled logs
// put chainage 0 at T21 and negated every DC current, while the same rows
// as two logs given in any order did not (found in review). Now every
// order gives the ordered log's chainages and currents exactly, T01 at
// chainage 0 with a positive current (the simulated current flows from
// T01 towards T21). The same reversed log with times counted from the
// logger's start (not calendar times) is put in time order too, and
// warned of: a log joined from logs whose clocks each start at 0 would be
// mixed up.
func TestLocateOneLogRowOrderSetsNoChainage(t *testing.T) {
	s := kestrelMoor(t)
	dir := t.TempDir()
	n := s.Len()
	inOrder := make([]int, n)
	for i := range inOrder {
		inOrder[i] = i
	}
	ordered := writeSplitLog(t, dir, "ordered.csv", reorderedCopy(s, inOrder))
	reversed := writeSplitLog(t, dir, "reversed.csv", reorderedCopy(s, traversesReversed(s)))
	shuffled := writeSplitLog(t, dir, "shuffled.csv", reorderedCopy(s, rand.New(rand.NewPCG(17, 2)).Perm(n)))
	rel := reorderedCopy(s, traversesReversed(s))
	t0 := s.Time[0]
	for i := range rel.Time {
		rel.Time[i] -= t0
	}
	relative := writeSplitLog(t, dir, "relative.csv", rel)

	type station struct {
		chainage, current float64
	}
	run := func(order, path string) (map[string]station, []string) {
		doc := decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", "--count", "1", "--time-order", order, path))
		got := map[string]station{}
		for _, g := range doc.Groups {
			if g.Chainage == nil || len(g.Sources) == 0 {
				t.Fatalf("%s: group %s has no chainage or no source", path, g.Key)
			}
			got[g.Key] = station{*g.Chainage, g.Sources[0].Current}
		}
		if len(got) != 21 {
			t.Fatalf("%s: %d groups, want the survey's 21", path, len(got))
		}
		return got, doc.Warnings
	}
	want, _ := run("ordered", ordered)
	if st := want["T01"]; st.chainage != 0 || st.current <= 0 {
		t.Fatalf("ordered log: T01 at chainage %.1f m with %.4f A; want chainage 0 and a positive current", st.chainage, st.current)
	}
	for _, c := range []struct {
		name, order, path string
		warn              string // a warning the run must give
	}{
		{"traverses reversed", "per-group", reversed, ""},
		{"rows shuffled", "any", shuffled, "time goes backwards within a group at"},
		{"traverses reversed, times from the logger's start", "per-group", relative, "the groups are not in time order in the log (group T01 starts at 0 s, before group T21"},
	} {
		got, warns := run(c.order, c.path)
		for k, st := range want {
			if got[k] != st {
				t.Errorf("%s: %s at chainage %.3f m with %.6f A; the ordered log gives %.3f m, %.6f A", c.name, k, got[k].chainage, got[k].current, st.chainage, st.current)
			}
		}
		if c.warn != "" && !strings.Contains(strings.Join(warns, "\n"), c.warn) {
			t.Errorf("%s: no warning holding %q:\n%s", c.name, c.warn, strings.Join(warns, "\n"))
		}
		for _, w := range warns {
			if c.warn == "" && strings.Contains(w, "not in time order") {
				t.Errorf("%s: calendar times, yet warned: %s", c.name, w)
			}
		}
	}
}

// TestLocateACShuffledWithinTraverses: the AC walk of
// testdata/scenarios/ac-walk-2khz.toml (simulated truth: 20 A RMS at 50
// Hz, 35°, logged at 2 kHz) with its rows shuffled, read with --time-order
// any. The sample rate was measured from the steps between rows in file
// order, and locate refused the log: 50 Hz "at or above the Nyquist
// frequency" of a log sampled at 2 kHz (a shuffled 500 Hz log was said to
// have a Nyquist frequency of 0.163 Hz; found in review). Each group's
// rows are now put in time order first, with a warning, and the shuffled
// log gives the ordered log's currents, phases and depths exactly, each
// within kSigma of the truth (checkOnly).
func TestLocateACShuffledWithinTraverses(t *testing.T) {
	dir := t.TempDir()
	sc, log := acWalkEdit(t, dir, "50.0", "", false, nil)
	s, err := ingest.ReadSamples(log)
	if err != nil {
		t.Fatal(err)
	}
	shuffled := writeSplitLog(t, dir, "shuffled.csv", reorderedCopy(s, rand.New(rand.NewPCG(6, 17)).Perm(s.Len())))
	want := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
	got := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", "--time-order", "any", shuffled)
	checkOnly(t, got, sc, sc.Conductors[0].Frequency, 0, 1e-9)
	if !strings.Contains(strings.Join(got.Warnings, "\n"), "time goes backwards within a group at") {
		t.Errorf("no warning that the rows were put in time order: %q", got.Warnings)
	}
	if len(got.Groups) != len(want.Groups) {
		t.Fatalf("%d groups, the ordered log %d", len(got.Groups), len(want.Groups))
	}
	for i, g := range got.Groups {
		w := want.Groups[i]
		if g.Key != w.Key || len(g.Sources) == 0 || len(w.Sources) == 0 {
			t.Errorf("group %d: %s with %d sources; the ordered log: %s with %d", i, g.Key, len(g.Sources), w.Key, len(w.Sources))
			continue
		}
		a, b := g.Sources[0], w.Sources[0]
		if a.Current != b.Current || a.Depth != b.Depth || a.Phase == nil || b.Phase == nil || *a.Phase != *b.Phase {
			t.Errorf("%s: %.6f A at %.5f m; the ordered log %.6f A at %.5f m (phases %v, %v)", g.Key, a.Current, a.Depth, b.Current, b.Depth, a.Phase, b.Phase)
		}
	}
}

// TestLocateOneLogRewalkRowOrder: a traverse walked again in one log
// (rewalkOneLog: testdata/scenarios/single-line.toml, its T04 walked again
// 20 minutes later with the current 10% higher, simulated truth) with its
// traverses in the reverse order (each in time order, --time-order
// per-group) and with its rows shuffled (--time-order any). The walks are
// parted at pauses between a group's readings, taken in the order given,
// and the route's direction followed the groups' first rows. Every order
// must give the ordered log's groups (the walk again, T04 (walk 2),
// among them), chainages and currents exactly.
func TestLocateOneLogRewalkRowOrder(t *testing.T) {
	dir := t.TempDir()
	args := rewalkOneLog(t, dir)
	log := args[len(args)-1]
	s, err := ingest.ReadSamples(log)
	if err != nil {
		t.Fatal(err)
	}
	reversed := writeSplitLog(t, dir, "reversed.csv", reorderedCopy(s, traversesReversed(s)))
	shuffled := writeSplitLog(t, dir, "shuffled.csv", reorderedCopy(s, rand.New(rand.NewPCG(4, 20)).Perm(s.Len())))
	type station struct {
		chainage, current float64
	}
	run := func(order, path string) map[string]station {
		a := append(append([]string{"locate", "--json", "--group-by", "group", "--count", "1", "--time-order", order}, args[:len(args)-1]...), path)
		doc := decodeDoc(t, mustCLI(t, a...))
		got := map[string]station{}
		for _, g := range doc.Groups {
			if g.Chainage == nil || len(g.Sources) == 0 {
				t.Fatalf("%s: group %s has no chainage or no source", path, g.Key)
			}
			got[g.Key] = station{*g.Chainage, g.Sources[0].Current}
		}
		return got
	}
	want := run("ordered", log)
	if _, ok := want["T04 (walk 2)"]; !ok {
		t.Fatalf("the ordered log has no group T04 (walk 2): %v", want)
	}
	for _, c := range []struct{ name, order, path string }{{"traverses reversed", "per-group", reversed}, {"rows shuffled", "any", shuffled}} {
		got := run(c.order, c.path)
		if len(got) != len(want) {
			t.Errorf("%s: %d groups, the ordered log %d: %v", c.name, len(got), len(want), got)
		}
		for k, st := range want {
			if g, ok := got[k]; !ok || g != st {
				t.Errorf("%s: %s at chainage %.3f m with %.6f A (found %v); the ordered log gives %.3f m, %.6f A", c.name, k, g.chainage, g.current, ok, st.chainage, st.current)
			}
		}
	}
}
