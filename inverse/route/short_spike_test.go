package route

import (
	"math"
	"testing"
)

// shortBumpStations are the four stations of a street-lighting cable
// (2 A throughout, invented street) where it crosses a bundle of five
// cables and mains, as the route receives them: each traverse's fit holds
// four lines, too few for the bundle and the crossing cable together, and
// T07's fit, the nearest to the bundle's strongest pair, gives the
// crossing cable 5.08 A. The sigmas are the fits' own; T09 misses its
// readings by several times the noise (a poor fit).
func shortBumpStations() []Station {
	x := []float64{0, 4.98, 9.78, 14.73}
	cur := []float64{2.128, 5.082, 2.423, 2.055}
	sig := []float64{0.061, 0.280, 0.046, 0.049}
	chi := []float64{291.8, 383.7, 192.6, 2148.9}
	st := make([]Station, len(x))
	for i := range st {
		st[i] = Station{Key: key(i + 6), Point: [3]float64{x[i], 0, -0.55}, Dir: [3]float64{1, 0, 0},
			Current: cur[i], CurrentSigma: sig[i], Depth: 0.55, DepthSigma: 0.05, Chi2: chi[i], DOF: 460, OK: true}
	}
	return st
}

// TestShortRouteBumpIsDisturbance: on a route of four stations (too few
// to estimate the scatter between stations) one station 2.8 A above both
// neighbours, which agree with each other to a tenth of that, is a local
// disturbance, not current joining and then leaving the cable. Before,
// the neighbours' 0.29 A difference (four of their fits' sigmas) failed
// the disturbance test and two warning steps were reported, a rise of
// 2.95 A and a fall of 2.66 A.
func TestShortRouteBumpIsDisturbance(t *testing.T) {
	r, err := Build(shortBumpStations(), nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range findings(r, KindCurrentStep) {
		if f.Severity == SeverityWarning {
			t.Errorf("warning step: %s", f.Message)
		}
		if s, ok := valueNamed(f, "step"); ok && math.Abs(s.Value) > 1 {
			t.Errorf("step of %.2f A across the bump: %s", s.Value, f.Message)
		}
	}
	found := false
	for _, f := range findings(r, KindCurrentAnomaly) {
		if len(f.Keys) == 3 && f.Keys[1] == key(7) {
			found = true
		}
	}
	if !found {
		t.Errorf("no local disturbance at %s: %+v", key(7), r.Findings)
	}
}
