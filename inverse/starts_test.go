package inverse

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestSettingsStarts: a caller's start (Settings.Starts) of as many lines as
// the fit is taken when it fits better, and never makes the fit worse; a
// set of another count is not used; unusable sets are refused. Three DC
// cables of one trench, 0.5 m apart at 0.8 m (the fields are Biot-Savart's,
// as the package's own forward model, checked against DOMAIN.md's values in
// TestForwardCheckValues), 2 nT of noise, under three traverses; the start
// given is the truth moved 0.05 m, placed 3 m along the cables from the
// readings (givenStarts moves it along the line to them).
func TestSettingsStarts(t *testing.T) {
	truth := []Line{
		{Point: [3]float64{-0.5, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.5, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
	}
	cur := []float64{30, -18, 12}
	pts := grid(3, 41, 4, 1, 0.3)
	f := simulate(pts, truth, cur, [3]float64{100, 200, -300}, 2, rand.New(rand.NewPCG(3, 4)))
	p := &Problem{Points: pts, Fields: f, Sigma: 2}
	zero := 0.0
	plain, err := FitLines(p, &Settings{Count: 3, ReferenceZ: &zero})
	if err != nil {
		t.Fatal(err)
	}
	var near []Line
	for _, l := range truth {
		near = append(near, Line{Point: [3]float64{l.Point[0] + 0.05, 3, l.Point[2] - 0.05}, Dir: l.Dir})
	}
	given, err := FitLines(p, &Settings{Count: 3, ReferenceZ: &zero, Starts: [][]Line{near}})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("chi-square %.1f on its own starts, %.1f with the start given (DOF %d)", plain.Chi2, given.Chi2, given.DOF)
	if given.Chi2 > plain.Chi2*(1+1e-9) {
		t.Errorf("with the start given chi-square %.3f, above %.3f without", given.Chi2, plain.Chi2)
	}
	// The fit with the start reaches the truth: each line within 5 sigma of a
	// true one across the cables (east) and in depth, with its current.
	for _, s := range given.Sources {
		ok := false
		for k, l := range truth {
			if math.Abs(s.Point[0]-l.Point[0]) <= 5*s.OffsetSigma+1e-3 && math.Abs(s.Depth+l.Point[2]) <= 5*s.DepthSigma+1e-3 && math.Abs(math.Abs(s.Current)-math.Abs(cur[k])) <= 5*s.CurrentSigma+1e-3 {
				ok = true
			}
		}
		if !ok {
			t.Errorf("line %.3f ± %.3f A at east %.4f ± %.4f m, depth %.4f ± %.4f m: on no true cable", s.Current, s.CurrentSigma, s.Point[0], s.OffsetSigma, s.Depth, s.DepthSigma)
		}
	}
	// A set of two lines is no start for three: the fit is as without it.
	other, err := FitLines(p, &Settings{Count: 3, ReferenceZ: &zero, Starts: [][]Line{near[:2]}})
	if err != nil {
		t.Fatal(err)
	}
	if other.Chi2 != plain.Chi2 {
		t.Errorf("a start of two lines changed a fit of three: chi-square %.6f against %.6f", other.Chi2, plain.Chi2)
	}
	for _, s := range [][][]Line{
		{{}},
		{{{Point: [3]float64{0, 0, -1}}}},
		{{{Point: [3]float64{math.NaN(), 0, -1}, Dir: [3]float64{0, 1, 0}}}},
	} {
		if _, err := FitLines(p, &Settings{Starts: s}); err == nil || !strings.Contains(err.Error(), "Starts") {
			t.Errorf("starts %v: err %v, want a refusal naming Starts", s, err)
		}
	}
}
