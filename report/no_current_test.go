package report

import (
	"strings"
	"testing"

	"undercurrent/inverse"
)

// noCurrentFixture returns the fit of one traverse (an invented fixture at Harrow
// Fen substation) with the given line sources and notes, converged.
func noCurrentFixture(notes []string, ss ...inverse.SourceEstimate) *Fit {
	var pts [][3]float64
	for i := range 21 {
		pts = append(pts, [3]float64{-5 + 0.5*float64(i), 2, 0.3})
	}
	for i := range ss {
		ss[i].Kind = KindLine
		ss[i].Identifiable = inverse.Identifiable{Current: true, Depth: true, Offset: true}
		ss[i].Dir = [3]float64{0, 1, 0}
	}
	return &Fit{Key: "T01", Problem: &inverse.Problem{Points: pts, Sigma: 2},
		Result: &inverse.Result{Sources: ss, Status: inverse.ConvergedResidual, Notes: notes, DOF: 50, Chi2: 50, Sigma: 2}}
}

// TestNoCurrentAsksEveryLine: a traverse has no current found only when no line
// carries a current beyond currentK sigma (3 for DC: a normal value beyond three
// sigma has probability 0.0027). A line whose current is not resolved may carry
// any current, and listed first it does not hide a clean cable beside it: with
// --count 2 a phantom 33 m down at -54 ± 62 A beside the cable's 19.992 ± 0.050 A
// had the traverse reported as "no current found" and left out of the profile.
func TestNoCurrentAsksEveryLine(t *testing.T) {
	phantom := inverse.SourceEstimate{Current: -54, CurrentSigma: 62, Depth: 33, DepthSigma: 0}
	cable := inverse.SourceEstimate{Current: 19.992, CurrentSigma: 0.050, Depth: 1.3026, DepthSigma: 0.002}
	g, st := buildGroup(noCurrentFixture(nil, phantom, cable), false, 0, 0, false, 0)
	if !g.OK || strings.HasPrefix(g.Problem, "no current found") || !st.OK {
		t.Errorf("phantom listed before a clean cable: OK %v, station OK %v, problem %q; want a current found", g.OK, st.OK, g.Problem)
	}
	weak := inverse.SourceEstimate{Current: 2.1, CurrentSigma: 0.8, Depth: 1.5, DepthSigma: 0.4}
	g, _ = buildGroup(noCurrentFixture(nil, phantom, weak), false, 0, 0, false, 0)
	if g.OK || !strings.HasPrefix(g.Problem, "no current found") {
		t.Errorf("no line's current beyond 3 sigma (2.1 ± 0.8 A and -54 ± 62 A): OK %v, problem %q; want no current found", g.OK, g.Problem)
	}
}

// TestHeldAnglesRejectedFails: a single-traverse fit whose angles were held where
// the readings reject them (inverse.HeldAnglesRejectedNote) has a current and
// position biased beyond their sigmas (a 15 A cable read 24.6 ± 2.2 A), and its
// group is a failed fit, left out of the route's profile; one whose angles were
// fitted but only roughly (inverse.AnglesApproximateNote) is used with care.
func TestHeldAnglesRejectedFails(t *testing.T) {
	cable := inverse.SourceEstimate{Current: 24.6, CurrentSigma: 2.2, Depth: 1.35, DepthSigma: 0.14}
	note := inverse.HeldAnglesRejectedNote + ": holding them fits the readings clearly worse than leaving them free (chi-square higher by 548; more than 11.8, the 99.73% point for the angles held)"
	g, st := buildGroup(noCurrentFixture([]string{note}, cable), false, 0, 0, false, 0)
	if g.OK || st.OK || !strings.Contains(g.Problem, inverse.HeldAnglesRejectedNote) {
		t.Errorf("held angles rejected: OK %v, station OK %v, problem %q; want a failed fit saying why", g.OK, st.OK, g.Problem)
	}
	g, _ = buildGroup(noCurrentFixture(nil, cable), false, 0, 0, false, 0)
	if !g.OK || g.Problem != "" {
		t.Errorf("the same fit without the note: OK %v, problem %q; want sound", g.OK, g.Problem)
	}
	// Angles fitted only to more than 15 degrees, where holding them is
	// rejected: the fit is used, with care (its linearised sigmas are
	// approximate).
	note = inverse.AnglesApproximateNote + " (line 1: azimuth sigma 25.4 deg)"
	g, st = buildGroup(noCurrentFixture([]string{note}, cable), false, 0, 0, false, 0)
	if !g.OK || !st.OK || g.Problem != note {
		t.Errorf("angles approximate: OK %v, station OK %v, problem %q; want used with the note as its problem", g.OK, st.OK, g.Problem)
	}
}
