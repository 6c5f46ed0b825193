package route

import (
	"strings"
	"testing"
)

// TestUnsearchedStretchNamed: a straight route of 15 stations 20 m apart
// carrying 2 A (simulated truth, no noise) whose stations 5-8 failed (a
// mains cable swamping them, say) gets one caution naming the stretch
// from the last usable station before them to the first after, T04 (80 m)
// to T09 (180 m); one failed station alone, and failed stations at the
// route's end, get none. Before, such a hole in the profile went without
// a word (found in review: 650 m of a pipeline).
func TestUnsearchedStretchNamed(t *testing.T) {
	build := func(failed ...int) *Route {
		st := make([]Station, 15)
		for i := range st {
			x := float64(i) * 20
			st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1.5}, Dir: [3]float64{1, 0, 0},
				Current: 2, CurrentSigma: 0.01, Depth: 1.5, DepthSigma: 0.01, OK: true}
		}
		for _, i := range failed {
			st[i].OK, st[i].Problem = false, "no current found"
			st[i].Current, st[i].CurrentSigma = 0, 0
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	got := findings(build(5, 6, 7, 8), KindUnsearched)
	if len(got) != 1 {
		t.Fatalf("%d unsearched findings for four failed stations in a row, want 1", len(got))
	}
	f := got[0]
	if f.From != 80 || f.To != 180 || f.Severity != SeverityCaution {
		t.Errorf("stretch %g-%g m (%s), want 80-180 m, a caution", f.From, f.To, f.Severity)
	}
	if !strings.Contains(f.Message, "between "+key(4)+" (chainage 80.0 m) and "+key(9)+" (180.0 m)") {
		t.Errorf("message does not name the stretch: %s", f.Message)
	}
	for _, c := range [][]int{{6}, {12, 13, 14}} {
		if got := findings(build(c...), KindUnsearched); len(got) != 0 {
			t.Errorf("failed %v: %d unsearched findings, want none: %s", c, len(got), got[0].Message)
		}
	}
}

// TestUnsearchedBesideStepAcross: a route of 11 stations 20 m apart
// carrying 2.0 A that falls to 1.6 A at 100 m (simulated truth, no noise)
// whose stations T02-T08 failed: the step is found across the stretch
// from T01 to T09, and the caution naming that stretch says the step is
// placed only to it and that another step within it would not be found,
// not that a step there would not be found. Before, the two findings,
// printed one after the other, read as a contradiction (found in review).
func TestUnsearchedBesideStepAcross(t *testing.T) {
	st := make([]Station, 11)
	for i := range st {
		x := float64(i) * 20
		cur := 2.0
		if x > 100 {
			cur = 1.6
		}
		st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1.5}, Dir: [3]float64{1, 0, 0},
			Current: cur, CurrentSigma: 0.01, Depth: 1.5, DepthSigma: 0.01, OK: true}
		if i >= 2 && i <= 8 {
			st[i].OK, st[i].Problem = false, "no current found"
			st[i].Current, st[i].CurrentSigma = 0, 0
		}
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(findings(r, KindCurrentStep)) != 1 {
		t.Fatalf("want one step across the failed stretch: %+v", r.Findings)
	}
	got := findings(r, KindUnsearched)
	if len(got) != 1 {
		t.Fatalf("%d unsearched findings, want 1", len(got))
	}
	if strings.Contains(got[0].Message, "a step there (current leaving or joining) would not be found") ||
		!strings.Contains(got[0].Message, "the step found across this stretch is placed only to it") {
		t.Errorf("the caution contradicts the step found across the stretch: %s", got[0].Message)
	}
}
