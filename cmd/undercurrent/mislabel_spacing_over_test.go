package main

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestMislabelOneSpacingOverSplit: the Corran Ley feeder (simulated
// truth, steady 25 A) walked on traverses 5 m and 20 m apart, then, after
// a pause of 5 minutes, T05's place walked again under the name T04 (the
// crew did not change the name). At 5 m the run after the pause was
// split off as "T04 (line 2)"; at 20 m, further than the 5 m within which
// a run after a pause was weighed at all, it stayed in T04, fitted as one
// traverse: a station half way between T04 and T05 where nobody walked,
// a blend of the two crossings, a poor fit, and no mislabel warning
// (found in review). Now at both spacings the run is "T04 (line 2)", at
// T05's chainage (one spacing past T04), T04 keeps its own station and
// fits sound, and one warning names the mislabel.
func TestMislabelOneSpacingOverSplit(t *testing.T) {
	dir := t.TempDir()
	for _, spacing := range []float64{5, 20} {
		tag := fmt.Sprintf("s%g", spacing)
		path := simulateText(t, dir, tag, corranLey(spacing, 8, 1000, 25, 25, 63, "2026-09-14T09:00:00Z"), ".csv")
		s, err := ingest.ReadSamples(path)
		if err != nil {
			t.Fatal(err)
		}
		all := rowsOf(s, func(string) bool { return true }, nil)
		t05 := rowsOf(s, inRange("T05", "T05"), nil)
		if t05.Len() < 20 {
			t.Fatalf("%s: T05 has %d readings", tag, t05.Len())
		}
		appendRows(all, t05, all.Time[len(all.Time)-1]-t05.Time[0]+300, "T04", nil)
		log := writeSplitLog(t, dir, tag+"-mislabel.csv", all)
		doc := decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", log))
		at, ok := map[string]float64{}, map[string]bool{}
		for _, g := range doc.Groups {
			if g.Chainage != nil {
				at[g.Key], ok[g.Key] = *g.Chainage, g.OK
			}
		}
		c4, in4 := at["T04"]
		c5, in5 := at["T05"]
		cl, inl := at["T04 (line 2)"]
		if !in4 || !in5 || !inl {
			t.Errorf("%g m spacing: groups on the route %v, want T04, T05 and T04 (line 2) (T05 walked again under T04's name)", spacing, at)
			continue
		}
		if math.Abs(c4-3*spacing) > 0.1*spacing || math.Abs(c5-4*spacing) > 0.1*spacing || math.Abs(cl-c5) > 0.1*spacing {
			t.Errorf("%g m spacing: T04 at %.2f m, T05 at %.2f m, T04 (line 2) at %.2f m; want %g, %g and %g m (the scenario's traverses)", spacing, c4, c5, cl, 3*spacing, 4*spacing, 4*spacing)
		}
		if !ok["T04"] || !ok["T04 (line 2)"] {
			t.Errorf("%g m spacing: T04 sound %v, T04 (line 2) sound %v, want both", spacing, ok["T04"], ok["T04 (line 2)"])
		}
		n := 0
		for _, w := range doc.Warnings {
			if strings.Contains(w, "(a mislabel)") && strings.Contains(w, "T04 (line 2)") {
				n++
			}
		}
		if n != 1 {
			t.Errorf("%g m spacing: %d warnings name the mislabel T04 (line 2), want one: %q", spacing, n, doc.Warnings)
		}
	}
}
