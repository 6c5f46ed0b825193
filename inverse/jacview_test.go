package inverse

import (
	"fmt"
	"reflect"
	"testing"
)

// TestJacViewSameFits: the LM engine reading a DC fit's Jacobian where the separable
// leaves it, negated (lmProblem.jacView), in place of a negated copy (jacCols) must
// change no fit, bit for bit: negation is exact in IEEE 754 arithmetic, so the scaled
// columns, the gradient and the predicted reductions are the same numbers. The
// fixtures are those of TestSummaryMemoSameFits (the benchmark surveys with the
// scipy mirror's settings, the automatic count and Huber weights, stacked pairs DC
// and AC, a pair beside a cable; simulated by Biot-Savart).
func TestJacViewSameFits(t *testing.T) {
	defer func() { lmNoJacView = false }()
	for _, c := range sameFitFixtures(t) {
		t.Run(c.name, func(t *testing.T) {
			lmNoJacView = false
			with, err1 := FitLines(c.p, c.set)
			lmNoJacView = true
			without, err2 := FitLines(c.p, c.set)
			lmNoJacView = false
			if fmt.Sprint(err1) != fmt.Sprint(err2) {
				t.Fatalf("error %v with the view, %v without", err1, err2)
			}
			if !reflect.DeepEqual(with, without) {
				t.Errorf("the fit differs with the view:\n%+v\nwithout:\n%+v", with, without)
			}
		})
	}
}
