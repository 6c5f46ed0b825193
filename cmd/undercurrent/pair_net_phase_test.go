package main

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/report"
)

// TestPairNoNetCurrentNoPhase: a balanced 50 Hz go-and-return pair (10 A out
// and back) beside a 6 A cable (testdata/scenarios/open/pair-beside-cable.toml,
// simulated, seed 1). By Ampère's law its net current is 0 at every traverse,
// and a phasor of no size has no phase. The group's pair already lists "net
// current phase" as unidentifiable where the net current is within its noise
// (3.44 sigma, the Rayleigh tail of 3 sigma), but conductor 2's route
// stations gave the phase the fit put on the noise, and the summary quoted it
// ("net current ... 0.023 ± 0.027 A ∠42 ± 13° at T01", then ∠-148° at the
// next traverse of the same zero current). Now a pair station whose net
// current is within its noise has no phase, and the summary says "(phase not
// determined)".
func TestPairNoNetCurrentNoPhase(t *testing.T) {
	log := filepath.Join(t.TempDir(), "pair.arrows")
	mustCLI(t, "simulate", "--seed", "1", filepath.Join("..", "..", "testdata", "scenarios", "open", "pair-beside-cable.toml"), "-o", log)
	doc, _ := locateBaseDoc(t, "--freq", "50", log)
	k := math.Sqrt(-2 * math.Log(math.Erfc(3/math.Sqrt2))) // Rayleigh k of 3 sigma's tail
	within := 0
	var pair *report.Track
	for i := range doc.Conductors {
		if doc.Conductors[i].Route.PairNet {
			pair = &doc.Conductors[i]
		}
	}
	if pair == nil {
		t.Fatalf("no further conductor is a go-and-return pair")
	}
	for _, s := range pair.Route.Stations {
		if !s.Used {
			continue
		}
		if math.Abs(s.Current) > k*s.CurrentSigma {
			if s.Phase == nil {
				t.Errorf("%s: net current %s A, beyond %.3g sigma, has no phase", s.Key, report.PlusMinus(s.Current, s.CurrentSigma), k)
			}
			continue
		}
		within++
		if s.Phase != nil {
			t.Errorf("%s: net current %s A, within %.3g sigma of zero (truth 0), has a phase of %.4g°", s.Key, report.PlusMinus(s.Current, s.CurrentSigma), k, *s.Phase)
		}
	}
	if within == 0 {
		t.Fatalf("no station's net current is within its noise: the case this test is for did not arise")
	}
	sum := report.ConductorSummary(doc, pair)
	if !strings.Contains(sum, "(phase not determined)") || strings.Contains(sum, "∠") {
		t.Errorf("summary %q: want the net current's phase not determined, and no angle", sum)
	}
}
