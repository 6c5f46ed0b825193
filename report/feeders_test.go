package report

import (
	"math"
	"strings"
	"testing"
)

// TestTwoFeedersFollowedApart: two DC feeders 0.6 m apart at 0.8 m on the
// invented Sedge Ings site, 12 A north and 8 A south (each with its own
// load), crossed by eight traverses (partnerFits: Biot-Savart, DOMAIN.md,
// 1 nT noise), each resolving the two to about 1%. The route follows
// feeder A as conductor 1 at 12 A and feeder B as conductor 2 at 8 A at
// every group. Before, the
// route followed them as one go-and-return pair at their 4 A net current
// and feeder B got no number. Three seeds.
func TestTwoFeedersFollowedApart(t *testing.T) {
	for _, seed := range []uint64{2, 3, 4} {
		var lines [][]partnerLine
		for range 8 {
			lines = append(lines, []partnerLine{{0, 0.8, 12}, {0.6, 0.8, -8}})
		}
		fits := partnerFits(t, seed, lines)
		d, err := Build(Document{Title: "Sedge Ings feeders (invented)"}, fits, nil)
		if err != nil {
			t.Fatal(err)
		}
		if d.Route == nil || d.Route.PairNet {
			t.Errorf("seed %d: want conductor 1 followed as feeder A, not a pair's net", seed)
			continue
		}
		for _, st := range d.Route.Stations {
			if math.Abs(math.Abs(st.Current)-12) > 5*st.CurrentSigma+0.05 {
				t.Errorf("seed %d: %s conductor 1 reads %.3f ± %.3f A, want 12 A", seed, st.Key, st.Current, st.CurrentSigma)
			}
		}
		var b *Track
		for i := range d.Conductors {
			if math.Abs(d.Conductors[i].Offset-0.6) < 0.1 {
				b = &d.Conductors[i]
			}
		}
		if b == nil {
			t.Errorf("seed %d: feeder B not followed as a conductor (%d conductors)", seed, len(d.Conductors))
			continue
		}
		if n := len(b.Route.Stations); n != 8 {
			t.Errorf("seed %d: feeder B followed at %d of 8 groups", seed, n)
		}
		for _, st := range b.Route.Stations {
			if math.Abs(math.Abs(st.Current)-8) > 5*st.CurrentSigma+0.05 {
				t.Errorf("seed %d: %s conductor 2 reads %.3f ± %.3f A, want 8 A", seed, st.Key, st.Current, st.CurrentSigma)
			}
		}
	}
}

// TestTwoFeedersPartnerChangeStaysPair: feeders of 12 A and -8 A as in
// TestTwoFeedersFollowedApart (net 33% of feeder A's, past feederMinNet),
// but at the last two of eight traverses feeder B is gone and another line,
// 3 A south at east 0.25 m, lies beside feeder A, as in
// TestPairPartnerChangeCaveated. Those groups do not resolve the close
// pair, so the route stays a pair (twoFeeders), and the change in its net
// current there is worded as a change of the core paired with conductor 1,
// no warning: taken as two feeders, conductor 1 would read the close
// pair's 9 A net for feeder A's 12 A there.
func TestTwoFeedersPartnerChangeStaysPair(t *testing.T) {
	var lines [][]partnerLine
	for i := range 8 {
		ls := []partnerLine{{0, 0.8, 12}, {0.6, 0.8, -8}}
		if i >= 6 {
			ls = []partnerLine{{0, 0.8, 12}, {0.25, 0.8, -3}}
		}
		lines = append(lines, ls)
	}
	fits := partnerFits(t, 2, lines)
	d, err := Build(Document{Title: "Sedge Ings feeders (invented)"}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	if d.Route == nil || !d.Route.PairNet {
		t.Fatal("want the route to follow the pair's net current")
	}
	for _, f := range d.Findings {
		if f.Conductor > 1 || !strings.HasPrefix(f.Kind, "current-") {
			continue
		}
		if !strings.Contains(f.Message, "change of the core paired with conductor 1") || f.Severity == SeverityWarning {
			t.Errorf("finding %s %s: want it worded as a change of partner, not a warning: %s", f.Severity, f.Kind, f.Message)
		}
	}
}
