package main

import (
	"math"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestMoreConductorsThanTheFitHolds: six DC lines 1.8-2.2 m apart under
// 16 m traverses (testdata/scenarios/six-lines.toml, invented). At the
// default maximum of four lines the count stops at three, four lines
// collapsing into a pair, and the fits miss the readings by 100 times the
// noise; nothing said that the maximum, not the readings, stopped the
// count. Each group now carries inverse.MoreLinesNote, is not sound, and
// one caution names them all. With --max-count 6 every traverse fits six
// lines whose currents lie within 3 sigma of the scenario's.
func TestMoreConductorsThanTheFitHolds(t *testing.T) {
	sc, doc := locateJSON(t, "six-lines.toml", "--group-by", "group", "--reference-z", "0")
	if len(doc.Groups) != len(sc.Lines()) {
		t.Fatalf("%d groups, want %d", len(doc.Groups), len(sc.Lines()))
	}
	for _, g := range doc.Groups {
		if !hasNotePrefix(g.Notes, inverse.MoreLinesNote) {
			t.Errorf("%s (%d lines): no note %q among %q", g.Key, len(g.Sources), inverse.MoreLinesNote, g.Notes)
		}
	}
	var named []docFinding
	for _, f := range doc.Findings {
		if strings.HasPrefix(f.Message, inverse.MoreLinesNote) {
			named = append(named, f)
		}
	}
	if len(named) != 1 || len(named[0].Groups) != len(doc.Groups) || named[0].Severity != "caution" {
		t.Errorf("want one caution %q naming the %d groups, got %+v", inverse.MoreLinesNote, len(doc.Groups), named)
	}

	// The maximum raised: six lines, each current within 3 sigma.
	_, six := locateJSON(t, "six-lines.toml", "--group-by", "group", "--reference-z", "0", "--max-count", "6")
	truth := crossingsByLine(sc)
	for _, g := range six.Groups {
		if hasNotePrefix(g.Notes, inverse.MoreLinesNote) {
			t.Errorf("%s: noted %q at --max-count 6", g.Key, inverse.MoreLinesNote)
		}
		if len(g.Sources) != 6 {
			t.Errorf("%s: %d sources at --max-count 6, want 6", g.Key, len(g.Sources))
			continue
		}
		for _, c := range truth[g.Key] {
			s, _ := matchSource(g.Sources, c)
			align := s.Direction[0]*c.Dir[0] + s.Direction[1]*c.Dir[1] + s.Direction[2]*c.Dir[2]
			got := s.Current * math.Copysign(1, align)
			if !(s.CurrentSigma > 0) || math.Abs(got-c.Current) > 3*s.CurrentSigma {
				t.Errorf("%s conductor %d: current %.3f ± %.3f A, true %.3g A", g.Key, c.Conductor+1, got, s.CurrentSigma, c.Current)
			}
		}
	}
	for _, f := range six.Findings {
		if strings.HasPrefix(f.Message, inverse.MoreLinesNote) {
			t.Errorf("finding at --max-count 6: %s", f.Message)
		}
	}

	// Two lines (testdata/scenarios/two-conductors.toml): nothing new.
	_, two := locateJSON(t, "two-conductors.toml", "--group-by", "group", "--reference-z", "0")
	for _, g := range two.Groups {
		if hasNotePrefix(g.Notes, inverse.MoreLinesNote) {
			t.Errorf("two-conductors %s: noted %q", g.Key, inverse.MoreLinesNote)
		}
	}
	for _, f := range two.Findings {
		if strings.Contains(f.Message, inverse.MoreLinesNote) {
			t.Errorf("two-conductors: %s", f.Message)
		}
	}
}

// TestMaxCountFlag: --max-count takes 1 to 8, and not with --count N.
func TestMaxCountFlag(t *testing.T) {
	for _, args := range [][]string{{"--max-count", "0"}, {"--max-count", "9"}, {"--max-count", "5", "--count", "2"}} {
		code, _, errOut := cli(t, append(append([]string{"locate"}, args...), "no-such.csv")...)
		if code == 0 || !strings.Contains(errOut, "--max-count") {
			t.Errorf("locate %v: exit %d, %q; want a usage error naming --max-count", args, code, errOut)
		}
	}
}

// hasNotePrefix reports whether a note of notes begins with p.
func hasNotePrefix(notes []string, p string) bool {
	for _, n := range notes {
		if strings.HasPrefix(n, p) {
			return true
		}
	}
	return false
}
