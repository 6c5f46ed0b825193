package main

import (
	"math"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// rowSpan returns rows lo to hi-1 of s, their times shifted by dt.
func rowSpan(s *ingest.Samples, lo, hi int, dt float64) *ingest.Samples {
	out := &ingest.Samples{Frame: s.Frame, Origin: s.Origin, Meta: s.Meta}
	for i := lo; i < hi; i++ {
		out.Time = append(out.Time, s.Time[i]+dt)
		out.X, out.Y, out.Z = append(out.X, s.X[i]), append(out.Y, s.Y[i]), append(out.Z, s.Z[i])
		out.Bx, out.By, out.Bz = append(out.Bx, s.Bx[i]), append(out.By, s.By[i]), append(out.Bz, s.Bz[i])
		out.Group = append(out.Group, s.Group[i])
	}
	return out
}

// TestLocateTraverseContinuedAfterPause: the Kestrel Moor survey
// (simulated truth: testdata/scenarios/kestrel-moor-step.toml, traverse Tn
// over the segment carrying currents_a[n-1]) stopped partway along T07 and
// continued in a second file 90 s later (a battery swap). The two parts
// lie end to end on one line: one traverse. The rule for reused names (one
// group within 5 m and 60 s) fitted the part after the pause apart: with
// its last 15 readings alone the fit failed and the run gained a false
// caution, and cut halfway two stations at 120 m had sigmas four times the
// whole traverse's (found in review). Both cuts now give the 21 traverses
// of the single log, T07 among them once, finding the pipe's current.
func TestLocateTraverseContinuedAfterPause(t *testing.T) {
	sc, _ := scenario(t, "kestrel-moor-step.toml")
	s := kestrelMoor(t)
	first, last := -1, -1
	for i, g := range s.Group {
		if g == "T07" {
			if first < 0 {
				first = i
			}
			last = i
		}
	}
	if first < 0 || last-first < 40 {
		t.Fatalf("T07 has rows %d to %d: not the survey the test expects", first, last)
	}
	want := sc.Conductors[0].Currents[6]
	for _, c := range []struct {
		name string
		cut  int
	}{{"the last 15 readings after the pause", last - 14}, {"half the traverse after the pause", (first + last) / 2}} {
		dir := t.TempDir()
		a := writeSplitLog(t, dir, "before.csv", rowSpan(s, 0, c.cut, 0))
		b := writeSplitLog(t, dir, "after.csv", rowSpan(s, c.cut, s.Len(), 90))
		doc := decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", "--count", "1", a, b))
		var keys []string
		for _, g := range doc.Groups {
			keys = append(keys, g.Key)
			if g.Key != "T07" {
				continue
			}
			if !g.OK || len(g.Sources) == 0 {
				t.Errorf("%s: T07 not sound", c.name)
			} else if got := math.Abs(g.Sources[0].Current); math.Abs(got-want) > 0.05*want {
				// Within 5%: the run has no calibration, and the sensor's
				// soft-iron matrix biases the currents by up to 3.5%, as the
				// scenario says.
				t.Errorf("%s: T07 %.4f A, want %.4f A within 5%%", c.name, got, want)
			}
		}
		if len(doc.Groups) != 21 || strings.Contains(strings.Join(keys, " "), ":") {
			t.Errorf("%s: groups %q, want the 21 traverses of the single log", c.name, keys)
		}
		if w := strings.Join(doc.Warnings, "\n"); strings.Contains(w, "another traverse under the same name") {
			t.Errorf("%s: the continued traverse taken for another:\n%s", c.name, w)
		}
	}
}

// TestLocateReusedNamesEarliestKeeps: the Kestrel Moor survey in three
// logs whose traverses are each numbered T01-T07. Given with the last
// walked first, that log kept the bare names: the table read
// a.csv:T01 ... b.csv:T07, then T01 ... T07 at 280-400 m, and every
// output's names changed with the order on the command line; each warning
// named only the log that kept the names (found in review). The earliest
// log now keeps them in any order, the names and chainages are those of
// the order walked, and each warning names every log that holds them.
func TestLocateReusedNamesEarliestKeeps(t *testing.T) {
	s := kestrelMoor(t)
	dir := t.TempDir()
	renumber := func(from int) map[string]string {
		m := map[string]string{}
		for n := 1; n <= 7; n++ {
			m["T"+twoDigits(from+n-1)] = "T" + twoDigits(n)
		}
		return m
	}
	a := writeSplitLog(t, dir, "a.csv", rowsOf(s, inRange("T01", "T07"), nil))
	b := writeSplitLog(t, dir, "b.csv", rowsOf(s, inRange("T08", "T14"), renumber(8)))
	c := writeSplitLog(t, dir, "c.csv", rowsOf(s, inRange("T15", "T21"), renumber(15)))
	var walked map[string]float64
	for _, order := range [][]string{{a, b, c}, {c, a, b}, {b, c, a}} {
		args := append([]string{"locate", "--json", "--group-by", "group", "--count", "1"}, order...)
		doc := decodeDoc(t, mustCLI(t, args...))
		got := map[string]float64{}
		for _, g := range doc.Groups {
			if g.Chainage == nil {
				t.Fatalf("order %q: group %s has no chainage", order, g.Key)
			}
			got[g.Key] = *g.Chainage
		}
		// The walk's start, a.csv's T01, is chainage 0 and keeps its name.
		if ch, ok := got["T01"]; !ok || ch != 0 {
			t.Errorf("order %q: T01 at chainage %v (present %v); want the bare name at chainage 0, the walk's start", order, ch, ok)
		}
		w := strings.Join(doc.Warnings, "\n")
		for _, want := range []string{
			c + ": the groups T01, T02, T03, T04, T05, T06 and T07 are also in " + a + " and " + b,
			b + ": the groups T01, T02, T03, T04, T05, T06 and T07 are also in " + a + " and " + c,
			"named c.csv:T01", "named b.csv:T01",
		} {
			if !strings.Contains(w, want) {
				t.Errorf("order %q: warnings lack %q:\n%s", order, want, w)
			}
		}
		if walked == nil {
			walked = got
			continue
		}
		for k, ch := range walked {
			if got[k] != ch {
				t.Errorf("order %q: %s at %.3f m; in the order walked %.3f m", order, k, got[k], ch)
			}
		}
	}
}
