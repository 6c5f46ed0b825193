package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// A line above the sensors alone fails every fit (the solver keeps lines
// below them), and the failure must name it, with its estimate, not send
// the user to the field's axes: in review the axes hint was followed and
// the mirror image below ground was fitted as sound. Six traverses
// (invented fixtures, DC at 2 nT; readings by Biot-Savart,
// inverse.Line.Field) under a 25 A line 2.7 m above them: the refit with a
// line allowed above (aboveFit) reads the current and height within three
// sigma of the truth, and both the group's failure text and the shared
// misfit warning name a conductor above the sensors and no reversed axis.
// Before, both said "check the sensor's orientation ... an axis's sign
// reversed".
func TestOverheadLineAloneNamed(t *testing.T) {
	const noise, height, current = 2.0, 2.7, 25.0
	rng := rand.New(rand.NewPCG(9, 10))
	line := []inverse.Line{{Point: [3]float64{0.5, 0, height}, Dir: [3]float64{0, 1, 0}}}
	var fits []Fit
	for i := range 6 {
		p := linesAcross(rng, line, []float64{current}, 2*float64(i), noise)
		res, err := inverse.FitLines(p, nil)
		if err != nil {
			t.Fatal(err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: p, Result: res, MeasuredNoise: noise})
	}
	a := aboveFit(&fits[0], noise, false)
	if a == nil {
		t.Fatalf("no conductor above found; the below-only fit misses by %.3g nT", fits[0].Result.RMS)
	}
	if math.Abs(a.Height-height) > 3*a.HeightSigma+1e-3 || math.Abs(math.Abs(a.Current)-current) > 3*a.CurrentSigma+1e-3 {
		t.Errorf("above: %s A at %s m, want %g A at %g m", PlusMinus(a.Current, a.CurrentSigma), PlusMinus(a.Height, a.HeightSigma), current, height)
	}
	for _, w := range []string{
		unfitNoCurrent(&fits[0], fits[0].Result, false),
		sharedMisfit(fits, &BuildSettings{MeasuredNoise: noise}, &route.Settings{MaxReducedChi2: 4}),
	} {
		if !strings.Contains(w, "above the sensors explains") || strings.Contains(w, "sign reversed") {
			t.Errorf("overhead line alone: %q, want a conductor above the sensors named and no axis hint", w)
		}
	}
	// A buried line's fit is not refitted as one above: its mirror misses.
	down := []inverse.Line{{Point: [3]float64{0.5, 0, -height}, Dir: [3]float64{0, 1, 0}}}
	p := linesAcross(rng, down, []float64{current}, 0, noise)
	res, err := inverse.FitLines(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if a := aboveFit(&Fit{Problem: p, Result: res}, noise, false); a != nil {
		t.Errorf("buried line taken for one %.3g m above", a.Height)
	}
}
