package main

import (
	"math"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestReusedGroupsWarningGivesOffset: single-line.toml (simulated with
// seed 1) in two logs, the second the same traverses a day later with
// every position moved (simulated truth: the shift given): 0.5 m along
// the conductor, so 0.5 m across the traverses' lines; 0.6 m along the
// traverses, 0 m across their lines and 0.6 m along them. The warning
// that the second log's groups are fitted apart had said the readings
// "lie 0 m ... apart" (the distance between their overlapping extents;
// found in review); it must now give the distance across the lines, to
// the centimetre, and the shift along them when there is one. A log of
// the traverses 140 m off along the conductor still gives the distance
// between the readings' extents (133-134 m: the traverses' extents are
// boxes of 4 by 6.9 m on a diagonal 140 m long), and a log holding both
// kinds names each.
func TestReusedGroupsWarningGivesOffset(t *testing.T) {
	s := singleLineSeed1(t)
	// The conductor's direction (the scenario's 60° from north) and the
	// traverses' across it.
	az := 60 * math.Pi / 180
	along := [2]float64{math.Sin(az), math.Cos(az)}
	across := [2]float64{along[1], -along[0]}
	moved := func(shift [2]float64, keep func(string) bool, far func(string) bool) *ingest.Samples {
		m := rowsOf(s, keep, nil)
		for i := range m.X {
			m.Time[i] += 86400
			m.X[i] += shift[0]
			m.Y[i] += shift[1]
			if far != nil && far(m.Group[i]) {
				m.X[i] += 140 * along[0]
				m.Y[i] += 140 * along[1]
			}
		}
		return m
	}
	all := func(string) bool { return true }
	for _, c := range []struct {
		name   string
		later  *ingest.Samples
		say    []string
		notSay string
	}{
		{"0.5 m along the conductor", moved([2]float64{0.5 * along[0], 0.5 * along[1]}, all, nil),
			[]string{"the readings cover the same ground again 24 h later, 0.5 m across the lines of those of a.csv, which keeps the names"}, "0 m"},
		{"0.6 m along the traverses", moved([2]float64{0.6 * across[0], 0.6 * across[1]}, all, nil),
			[]string{"the readings cover the same ground again 24 h later, 0 m across and 0.6 m along (between their middles) the lines of those of a.csv"}, "lie 0 m"},
		{"140 m on", moved([2]float64{}, all, all),
			[]string{"the readings lie 133 m and 24 h apart from those of a.csv"}, "same ground again 24 h"},
		{"T01-T03 140 m on, the rest 0.5 m along the conductor", moved([2]float64{0.5 * along[0], 0.5 * along[1]}, all, inRange("T01", "T03")),
			[]string{"the readings of T01, T02 and T03 lie 134 m and 24 h apart from those of a.csv, and those of T04, T05, T06 and T07 cover the same ground again 24 h later, 0.5 m across the lines of those of a.csv"}, "0 m"},
	} {
		first := rowsOf(s, all, nil)
		w, _ := nameReusedGroups([]string{"a.csv", "b.csv"}, []*ingest.Samples{first, c.later})
		if len(w) != 1 {
			t.Errorf("%s: %d warnings, want one: %q", c.name, len(w), w)
			continue
		}
		for _, want := range c.say {
			if !strings.Contains(w[0], want) {
				t.Errorf("%s: the warning does not say %q: %s", c.name, want, w[0])
			}
		}
		if strings.Contains(w[0], c.notSay) {
			t.Errorf("%s: the warning says %q: %s", c.name, c.notSay, w[0])
		}
		if g := c.later.Group[0]; g != "b.csv:T01" {
			t.Errorf("%s: the later T01 named %q, want b.csv:T01", c.name, g)
		}
	}
}
