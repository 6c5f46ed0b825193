package report

import (
	"math"
	"testing"

	"undercurrent/inverse"
)

// TestPolishStopsOnRunawayObjective checks that the pattern search of the
// object's position is bounded when its objective keeps falling in one
// direction. Fixture: a uniform 707 nT field over a traverse from -4 to
// 4 m, no background fitted, no conductor held. A point dipole's field
// over readings spanning L, at a distance d, varies by about 3 L/d of
// itself (the 1/r^3 fall of the dipole field, Jackson, Classical
// Electrodynamics, eq. 5.56), so the uniform field is matched ever better
// by a dipole ever deeper with a moment growing as d^3: each step away
// lowers the residual and the step never halves. The search must stop
// after polishSweeps sweeps of six trial fits each.
func TestPolishStopsOnRunawayObjective(t *testing.T) {
	p := &inverse.Problem{Sigma: 1}
	for k := -16; k <= 16; k++ {
		p.Points = append(p.Points, [3]float64{0.25 * float64(k), 0, 0})
		p.Fields = append(p.Fields, [3]float64{500, 300, -400})
	}
	loc := &dipoleLocator{p: p, set: &inverse.Settings{Background: inverse.BackgroundNone},
		srcs: []inverse.Source{nil}, zTop: -0.1}
	start := [3]float64{0, 0, -2}
	rss0 := loc.rss(start)
	// The fixture is what it says: deeper is better, by any depth.
	prev := rss0
	for _, z := range []float64{-10, -100, -1000} {
		r := loc.rss([3]float64{0, 0, z})
		if !(r < prev) {
			t.Fatalf("residual %g at %g m, not under %g: the objective does not keep falling", r, z, prev)
		}
		prev = r
	}
	loc.evals = 0
	pos, rss := loc.polish(start, rss0, 0.25, 0.001)
	t.Logf("after %d fits: position %.2f m, residual %.4g (from %.4g)", loc.evals, pos, rss, rss0)
	if loc.evals > 6*polishSweeps {
		t.Errorf("%d fits, want at most %d (polishSweeps sweeps of 6)", loc.evals, 6*polishSweeps)
	}
	if !(rss < rss0) || !(pos[2] < start[2]) {
		t.Errorf("polish ended at %v, residual %g from %g: it did not follow the fall", pos, rss, rss0)
	}
}

// TestSettleWorkPerStep checks that the Levenberg-Marquardt steps of a
// search started far from the minimum (jointFit.settle) cost fits linear in
// the parameters, 2 per parameter for the Jacobian and at most settleTries
// trial steps, and that it stops within settleRounds steps at a lower
// residual. Fixture: the Harrow Fen split-cable traverse (dipole_split_test.go),
// its close pair merged as the merged search holds it, the object started
// 0.3 m off the true position along every axis. With the full Hessian by
// differences a step took 2 fits per pair of parameters: 264 for two lines.
func TestSettleWorkPerStep(t *testing.T) {
	fits := splitFits(t, splitObject, splitMoment)
	f := &fits[3]
	// As searchDipole: the weak lines left out, then the pair merged.
	strongest := 0.0
	for _, s := range f.Result.Sources {
		strongest = math.Max(strongest, math.Abs(s.Current))
	}
	var lines []*inverse.SourceEstimate
	for k := range f.Result.Sources {
		if s := &f.Result.Sources[k]; math.Abs(s.Current) >= weakShare*strongest {
			lines = append(lines, s)
		}
	}
	merged := closeLines(f.Problem, lines)
	if len(merged) >= len(lines) {
		t.Fatalf("the fixture's fit has no close pair (%d lines)", len(lines))
	}
	var srcs []inverse.Source
	for _, s := range merged {
		srcs = append(srcs, inverse.Line{Point: s.Point, Dir: s.Dir})
	}
	loc := &dipoleLocator{p: f.Problem, set: &inverse.Settings{}, srcs: append(srcs, nil), zTop: -0.1}
	start := [3]float64{splitObject[0] + 0.3, splitObject[1] + 0.3, splitObject[2] - 0.3}
	rss0 := loc.rss(start)
	jf := newJointFit(loc, start)
	if jf == nil {
		t.Fatal("no joint model")
	}
	loc.evals = 0
	rss := jf.settle(rss0)
	np := len(jf.step)
	// lambda runs from 1e-9 up to under 1e8 by factors of 10.
	const settleTries = 17
	limit := jf.steps * (2*np + settleTries)
	t.Logf("%d parameters, %d steps, %d fits (limit %d), residual %.6g from %.6g, object at %.3f m",
		np, jf.steps, loc.evals, limit, rss, rss0, jf.pos)
	if jf.steps < 1 || jf.steps > settleRounds {
		t.Errorf("%d steps, want 1 to %d", jf.steps, settleRounds)
	}
	if loc.evals > limit {
		t.Errorf("%d fits in %d steps, want at most %d (2 per parameter and %d trials a step)", loc.evals, jf.steps, limit, settleTries)
	}
	if !(rss < rss0) {
		t.Errorf("residual %g, started at %g", rss, rss0)
	}
}

// TestKeptSearchOnce checks the hand-over of a search from checkDipoles
// to checkTrackDipoles (keepSearch, keptSearch): the search kept for a
// fit is returned for that fit once, not for a fit with another Problem,
// and not after dropSearch. Fixture: the Harrow Fen split-cable traverse
// (dipole_split_test.go); the searches are stand-ins, compared by identity.
func TestKeptSearchOnce(t *testing.T) {
	fits := splitFits(t, splitObject, splitMoment)
	f := fits[3]
	ds := &dipoleSearch{gain: 42}
	keepSearch(&f, ds)
	if got, ok := keptSearch(&f); !ok || got != ds {
		t.Fatalf("kept search %p %v, want %p", got, ok, ds)
	}
	if got, ok := keptSearch(&f); ok {
		t.Errorf("search %p handed out twice", got)
	}
	keepSearch(&f, ds)
	other := f
	other.Problem = fits[2].Problem
	if got, ok := keptSearch(&other); ok {
		t.Errorf("search %p handed out for another traverse's readings", got)
	}
	keepSearch(&f, nil)
	if got, ok := keptSearch(&f); !ok || got != nil {
		t.Errorf("a search that found nothing: %p %v, want nil true", got, ok)
	}
	keepSearch(&f, ds)
	dropSearch(&f)
	if got, ok := keptSearch(&f); ok {
		t.Errorf("search %p handed out after dropSearch", got)
	}
}
