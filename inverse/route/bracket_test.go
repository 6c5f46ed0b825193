package route

import (
	"fmt"
	"strings"
	"testing"
)

// TestCoverRunsMarks: runs of MarkShort stations are bounded by the
// nearest MarkClear or MarkUnseen station either side, MarkSkip stations
// passed over; the reach names what bounds each side, and that a station
// whose fit does not show the conductor says nothing of its cover there.
func TestCoverRunsMarks(t *testing.T) {
	const (
		S = MarkSkip
		C = MarkClear
		U = MarkUnseen
		X = MarkShort
	)
	stop := func(i int, unseen bool) Stop {
		return Stop{Name: fmt.Sprintf("T%02d", i), Chainage: 10 * float64(i), Unseen: unseen}
	}
	for _, tc := range []struct {
		name     string
		marks    []Mark
		runs     string // members/before/after per run
		from, to float64
		says     string // of the first run
	}{
		{"clear both sides", []Mark{C, X, X, C}, "[1 2]/0/3", 0, 30,
			"the shallow stretch may reach back to T00 (chainage 0.0 m) and on to T03 (chainage 30.0 m), the nearest stations either side where the pair is seen with enough cover"},
		{"unseen both sides, skip passed over", []Mark{U, S, X, S, U}, "[2]/0/4", 0, 40,
			"the nearest stations either side whose fits do not show the pair, which says nothing of its cover there"},
		{"clear before, unseen after", []Mark{C, X, U, X, X}, "[1]/0/2 [3 4]/2/-1", 0, 20,
			"back to T00 (chainage 0.0 m), the nearest station before it where the pair is seen with enough cover, and on to T02 (chainage 20.0 m), the nearest station after it, whose fit does not show the pair, which says nothing of its cover there"},
		{"none", []Mark{S, X, X}, "[1 2]/-1/-1", 10, 20,
			"no other station has enough cover, so the shallow cover may continue back past T01 (chainage 10.0 m) and on past T02 (chainage 20.0 m)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			runs := CoverRuns(tc.marks)
			var got []string
			for _, r := range runs {
				got = append(got, fmt.Sprintf("%v/%d/%d", r.Members, r.Before, r.After))
			}
			if strings.Join(got, " ") != tc.runs {
				t.Fatalf("runs %v, want %s", got, tc.runs)
			}
			b := BracketOf(runs[0], stop, tc.marks, "the pair")
			if from, to := b.Range(); from != tc.from || to != tc.to {
				t.Errorf("range %g-%g, want %g-%g", from, to, tc.from, tc.to)
			}
			if !strings.Contains(b.Reach(), tc.says) {
				t.Errorf("reach %q does not say %q", b.Reach(), tc.says)
			}
		})
	}
}
