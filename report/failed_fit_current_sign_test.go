package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestFailedFitFindingQuotesGroupCurrent: a fit that finds no current
// quotes its strongest line's current in its group's problem, and the
// poor-fit finding about it quotes that problem. SetRoute turns the line
// along the route, negating a DC current, and rewords the group's problem
// with it; the finding kept the sign the fit first had (review: "-0.0023 ±
// 0.0023 A" in the group's problem and the table, "0.0023 ± 0.0023 A" in
// the finding of the same fit). The readings are simulated (Biot-Savart
// for an infinite line, lineField): eight traverses 5 m apart, walked
// against the direction in which the fits set their lines, over an 8 A
// cable 0.9 m below the sensors that ends before the third, with 2 nT of
// noise, so that six fits find only noise and the route turns their
// lines; the test checks that it does.
func TestFailedFitFindingQuotesGroupCurrent(t *testing.T) {
	rng := rand.New(rand.NewPCG(60, 8))
	az := 60 * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	earth := [3]float64{-150, 19200, -45100}
	var fits []Fit
	for i := range 8 {
		current := 8.0
		if i >= 2 {
			current = 0
		}
		// Walked from the far end back: the route runs along -u.
		p0 := [3]float64{5 * float64(7-i) * u[0], 5 * float64(7-i) * u[1], -0.9}
		prob := acrossLine(p0, u, current, earth, 2, rng)
		res, err := inverse.FitLines(&prob, &inverse.Settings{Count: 1})
		fits = append(fits, Fit{Key: fmt.Sprintf("W%d", i+1), Problem: &prob, Result: res, Err: err})
	}
	fitted := map[string]float64{}
	for _, f := range fits {
		if f.Result != nil && len(f.Result.Sources) > 0 {
			fitted[f.Key] = f.Result.Sources[0].Current
		}
	}
	d, err := Build(Document{Title: "Wickham Staithe spur"}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	failed, turned := 0, 0
	for _, g := range d.Groups {
		if g.OK || !strings.HasPrefix(g.Problem, "no current found") || len(g.Sources) == 0 {
			continue
		}
		failed++
		s := g.Sources[0]
		if s.Current != 0 && s.Current == -fitted[g.Key] {
			turned++
		}
		want := "current, " + PlusMinus(s.Current, s.CurrentSigma) + " A,"
		if !strings.Contains(g.Problem, want) {
			t.Errorf("%s: sources[0] %s A, problem %q", g.Key, PlusMinus(s.Current, s.CurrentSigma), g.Problem)
		}
		found := false
		for _, f := range d.Findings {
			if f.Kind != "poor-fit" || len(f.Groups) != 1 || f.Groups[0] != g.Key {
				continue
			}
			found = true
			if !strings.Contains(f.Message, want) {
				t.Errorf("%s: the finding %q does not give the group's current as %q", g.Key, f.Message, want)
			}
		}
		if !found {
			t.Errorf("%s: no poor-fit finding about the failed fit", g.Key)
		}
	}
	if failed == 0 || turned == 0 {
		t.Fatalf("%d fits found no current, %d of them turned along the route: the case this test is for did not arise", failed, turned)
	}
}
