package inverse

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestHeldBenchFitAtFloor checks that the benchmark's single-traverse fit, which
// holds the azimuth and dip at their simulated values (north, level), explains its
// readings to their noise floor, so FitLines skips the check against a fit with the
// angles free (heldAtFloor) and the benchmark's work is what it was; and that the
// same readings held 30 degrees off the simulated azimuth miss the floor, so that
// check runs and rejects them (simulated truth: the benchmark's line runs north).
func TestHeldBenchFitAtFloor(t *testing.T) {
	c := benchCases[0]
	p, err := readBenchSurvey(filepath.Join("testdata", c.file))
	if err != nil {
		t.Fatal(err)
	}
	set := mirrorSettings(c)
	var floor float64
	res, err := fitLinesFloor(p, set, true, &floor)
	if err != nil {
		t.Fatal(err)
	}
	if !heldAtFloor(res, floor) {
		t.Errorf("held at the true angles: residual %.3g nT per degree of freedom, floor %.3g nT; want within 1.2 times",
			res.Sigma, floor)
	}
	off := *set
	az := 30.0
	off.Azimuth = &az
	res, err = fitLinesFloor(p, &off, true, &floor)
	if err != nil {
		t.Fatal(err)
	}
	if heldAtFloor(res, floor) {
		t.Errorf("held 30 deg off: residual %.3g nT at a floor of %.3g nT taken as at the floor", res.Sigma, floor)
	}
	res, err = FitLines(p, &off)
	if err != nil {
		t.Fatal(err)
	}
	rejected := false
	for _, n := range res.Notes {
		rejected = rejected || strings.HasPrefix(n, HeldAnglesRejectedNote)
	}
	if !rejected {
		t.Errorf("held 30 deg off: notes %q, want %s", res.Notes, HeldAnglesRejectedNote)
	}
}
