package main

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateDiveAnomalyNotBlamedOnNeighbour: wrenbeck-dive.toml has one
// cable (the scenario's single conductor, the simulated truth), which
// dives from 1 m to 6 m under a culvert. On seed 1 the traverse at the
// dive's start, T05, splits it into two same-way lines whose sum the route
// takes, and the current there is a caution below both neighbours. T06,
// over the cable 6 m down, keeps one line (its second line's current is
// within 3 sigma of zero). Before, the caution said it rested on fits
// "fitted with fewer lines than the readings ask for (conductors closer
// together than the fit can part may lie there ...)": T06, pointing the
// crew at the wrong traverse for a cause that is not there. An anomaly is
// set against both neighbours; one such fit beside a sound one that agrees
// with it does not explain it, and no finding may now say so.
func TestLocateDiveAnomalyNotBlamedOnNeighbour(t *testing.T) {
	sc, path := scenario(t, "wrenbeck-dive.toml")
	if len(sc.Conductors) != 1 {
		t.Fatalf("the scenario has %d conductors; the test relies on one", len(sc.Conductors))
	}
	for seed := 1; seed <= 3; seed++ {
		dir := t.TempDir()
		log := filepath.Join(dir, "log.csv")
		mustCLI(t, "simulate", "--seed", fmt.Sprint(seed), path, "-o", log)
		out := mustCLI(t, "locate", "--group-by", "group", "--reference-z", "0", "-o", filepath.Join(dir, "res"), log)
		for _, l := range strings.Split(out, "\n") {
			if strings.Contains(l, "fitted with fewer lines than the readings ask for") {
				t.Errorf("seed %d: a finding blames conductors close together where there is one cable: %q", seed, l)
			}
		}
	}
}
