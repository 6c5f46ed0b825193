package route

import (
	"fmt"
	"strings"
	"testing"
)

// fallStations simulates ten stations 5 m apart along a straight conductor
// 1 m down, carrying 10 A on the first five and 8 A on the last five
// (simulated truth: a 2 A fall between S05 and S06), each with the given
// current sigma.
func fallStations(sigma float64) []Station {
	var st []Station
	for i := range 10 {
		current := 10.0
		if i >= 5 {
			current = 8
		}
		st = append(st, Station{Key: fmt.Sprintf("S%02d", i+1), Point: [3]float64{0, 5 * float64(i), -1}, Dir: [3]float64{0, 1, 0},
			Current: current, CurrentSigma: sigma, Depth: 1, DepthSigma: 0.02, OK: true})
	}
	return st
}

// A used station with a zero current sigma is refused with an error that
// names it: the step tests weigh each change against the stations'
// combined sigma, and with zeros the simulated 2 A fall was dropped
// without a word.
func TestBuildRefusesZeroCurrentSigma(t *testing.T) {
	_, err := Build(fallStations(0), nil)
	if err == nil || !strings.Contains(err.Error(), `"S01"`) || !strings.Contains(err.Error(), "current sigma is 0") {
		t.Fatalf("zero current sigmas: error %v, want a refusal naming S01's zero current sigma", err)
	}
	one := fallStations(0.05)
	one[5].CurrentSigma = 0
	if _, err := Build(one, nil); err == nil || !strings.Contains(err.Error(), `"S06"`) {
		t.Errorf("one zero current sigma: error %v, want a refusal naming S06", err)
	}
	// Stations whose current is not used keep any sigma: a failed fit and
	// a magnetised object.
	skip := fallStations(0.05)
	skip[2].OK, skip[2].CurrentSigma = false, 0
	skip[7].Dipole, skip[7].CurrentSigma = true, 0
	if _, err := Build(skip, nil); err != nil {
		t.Errorf("failed and dipole stations with zero sigma: %v", err)
	}
	// With a sigma given, the fall is found where it was simulated.
	r, err := Build(fallStations(0.05), nil)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep && strings.Join(f.Keys, ",") == "S05,S06" {
			found = true
		}
	}
	if !found {
		t.Errorf("no current step between S05 and S06 with sigma 0.05 A: %+v", r.Findings)
	}
}
