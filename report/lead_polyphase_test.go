package report

import (
	"testing"

	"undercurrent/inverse"
)

// polyphaseFit is an AC fit of three parallel lines along east, 0.3 m
// apart at 1.1 m below the sensors, carrying cur A each (sigma 0.7 A) at
// phases ph (degrees), with inverse's pairing of the strongest line (the
// first) with each other line as carrying the opposite current
// (Result.Opposed, formed for lines over 90° apart).
func polyphaseFit(cur float64, ph [3]float64) Fit {
	res := &inverse.Result{Status: inverse.ConvergedStep}
	for k := range 3 {
		s := inverse.SourceEstimate{Kind: "line", Point: [3]float64{0, 0.3 * float64(k-1), -1.1}, Dir: [3]float64{1, 0, 0},
			Current: cur, CurrentSigma: 0.7, Phase: ph[k], PhaseSigma: 0.05, Depth: 1.1, DepthSigma: 0.001}
		s.Identifiable.Current, s.Identifiable.Azimuth = true, true
		res.Sources = append(res.Sources, s)
	}
	for j := 1; j < 3; j++ {
		if d := wrapDeg(ph[j] - ph[0]); d > 90 || d < -90 {
			res.Opposed = append(res.Opposed, inverse.PairEstimate{Lines: [2]int{0, j}, Spacing: 0.3 * float64(j), Point: [3]float64{0, 0.15 * float64(j), -1.1}})
		}
	}
	return Fit{Result: res, Problem: &inverse.Problem{Points: [][3]float64{{0, 0, 0}}}}
}

// TestLeadCandidatesThreePhase: the cores of a balanced three-phase
// circuit, 120° apart, are each "opposed" to the strongest (inverse pairs
// lines over 90° apart), but none is its return: conductor 1 may be any
// of the three tied cores, chosen by where it lies (leadByPosition).
// Before, any opposed line kept the strongest first, and conductor 1 was
// whichever core the noise made the strongest at each traverse (review
// rv28c). A line within polyphaseReturnDeg of anti-phase (170°: a
// go-and-return pair, whose centre the route may follow) still keeps it,
// as does any opposed line of a DC fit.
func TestLeadCandidatesThreePhase(t *testing.T) {
	f := polyphaseFit(200, [3]float64{120, -120, 0})
	if c := leadCandidates(&f, true); len(c) != 3 {
		t.Errorf("balanced three-phase cores: candidates %v, want all three", c)
	}
	if !swapFree(&f, true) {
		t.Error("balanced three-phase cores may not be reordered by leadBySwap")
	}
	f = polyphaseFit(200, [3]float64{0, 170, -120})
	if c := leadCandidates(&f, true); c != nil {
		t.Errorf("a core 170° from the strongest (its return): candidates %v, want none", c)
	}
	if swapFree(&f, true) {
		t.Error("a go-and-return pair's strongest core may be moved by leadBySwap")
	}
	f = polyphaseFit(200, [3]float64{120, -120, 0})
	if c := leadCandidates(&f, false); c != nil {
		t.Errorf("a DC fit with opposed lines: candidates %v, want none", c)
	}
}
