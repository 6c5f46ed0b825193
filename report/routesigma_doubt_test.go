package report

import (
	"strings"
	"testing"
)

// TestCoverDoubtTakesRouteSigma: testdata/scenarios/open/bend.toml
// (invented) at seed 5. T14, a poor fit beside the bend, reads 20.43 A;
// its fit widened its sigma to 0.16 A for residuals correlated along the
// readings, which the route takes back to 0.027 A for its steps and
// neighbour tests (route.Placed.RouteSigma). T15, the least cover, reads
// 19.97 A against 20.43 A and 20.07 A: over 3 sigma from both as the
// route weighs them, 2.9 sigma from T14 with the widened sigma, by which
// routeCoverDoubt judged it and so gave the least cover with no caveat
// (found in review). The headline now judges neighbours as the route
// does: the caveat is given, and T14 carries its route sigma.
func TestCoverDoubtTakesRouteSigma(t *testing.T) {
	if testing.Short() {
		t.Skip("fits the bend's traverses")
	}
	d := scenarioDoc(t, "open/bend.toml", 5)
	r := d.Route
	lo, _, _, ok := leastCoverOf(d, r)
	if !ok || lo.Key != "T15" {
		t.Fatalf("least cover at %s (ok %v), want T15; the scenario no longer tests this", lo.Key, ok)
	}
	var t14 *Station
	for i := range r.Stations {
		if r.Stations[i].Key == "T14" {
			t14 = &r.Stations[i]
		}
	}
	if t14 == nil || t14.RouteCurrentSigma == nil || !(*t14.RouteCurrentSigma < t14.CurrentSigma/2) {
		t.Fatalf("T14 %+v: want a route sigma well under its fit's", t14)
	}
	why := routeCoverDoubt(d, r, lo)
	if why == "" {
		t.Errorf("least cover at T15 (%.4f ± %.4f A) given without its caveat; T14 %.4f ± %.4f A (route %.4f A)",
			lo.Current, lo.CurrentSigma, t14.Current, t14.CurrentSigma, *t14.RouteCurrentSigma)
	}
	// The caveat quotes T14 with the route's narrower sigma; it must say
	// so, or it reads against T14's row in the table of fits.
	if why != "" && !strings.Contains(why, "taking T14's uncertainty as the route weighs it") {
		t.Errorf("caveat %q quotes T14's route sigma without saying it is not the table's", why)
	}
}
