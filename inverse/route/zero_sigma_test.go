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

// A used station with a zero current sigma is read as exact (one part in
// a billion of its current): the step tests weigh each change against the
// stations' combined sigma, and with zeros the simulated 2 A fall was
// dropped without a word; refused instead, locate failed on a noise-free
// log. The fall is found where it was simulated with zero sigmas, one
// zero among given sigmas, or the sigmas given; steady exact currents
// with the rounding of a fit (1e-12 of the current) give no step.
func TestBuildZeroCurrentSigmaExact(t *testing.T) {
	fallAt := func(st []Station) bool {
		t.Helper()
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			if f.Kind == KindCurrentStep && strings.Join(f.Keys, ",") == "S05,S06" {
				return true
			}
		}
		t.Logf("findings: %+v", r.Findings)
		return false
	}
	if !fallAt(fallStations(0)) {
		t.Error("zero current sigmas: no current step between S05 and S06")
	}
	one := fallStations(0.05)
	one[5].CurrentSigma = 0
	if !fallAt(one) {
		t.Error("one zero current sigma: no current step between S05 and S06")
	}
	if !fallAt(fallStations(0.05)) {
		t.Error("sigma 0.05 A: no current step between S05 and S06")
	}
	// Stations whose current is not used keep any sigma: a failed fit and
	// a magnetised object.
	skip := fallStations(0.05)
	skip[2].OK, skip[2].CurrentSigma = false, 0
	skip[7].Dipole, skip[7].CurrentSigma = true, 0
	if _, err := Build(skip, nil); err != nil {
		t.Errorf("failed and dipole stations with zero sigma: %v", err)
	}
	// Steady exact currents, rounded as a fit of exact readings rounds.
	steady := fallStations(0)
	for i := range steady {
		steady[i].Current = 10 * (1 + 1e-12*float64(i%3-1))
	}
	r, err := Build(steady, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep || f.Kind == KindCurrentAnomaly {
			t.Errorf("steady exact currents: %s", f.Message)
		}
	}
	if steady[0].CurrentSigma != 0 {
		t.Error("Build modified the caller's stations")
	}
}
