package report

import (
	"fmt"
	"testing"

	"undercurrent/inverse/route"
)

// teeRoute is the route locate builds, before the object search, for
// testdata/scenarios/open/tee-service.toml on seed 3 (invented: a 5 A
// service teeing off a 20 A DC main at chainage 7 m, between T04 and T05;
// simulated, the values as locate gave them): the traverses beside the tee
// overshoot the change (22.14 and 13.71 A against 19.98 and 14.90 A at
// the nearest sound traverses, T01 and T07), T02-T06 are poor fits, the
// route's between-station scatter is 0 and it sizes one step across
// T03-T05. red gives the stations' reduced chi-squares.
func teeRoute(red []float64) *route.Route {
	cur := []float64{19.980, 20.096, 20.521, 22.137, 13.706, 14.488, 14.899, 15.013, 15.040}
	sig := []float64{0.0169, 0.0133, 0.0375, 0.1708, 0.1441, 0.0373, 0.0527, 0.0165, 0.0100}
	r := &route.Route{}
	for i := range cur {
		key := fmt.Sprintf("T%02d", i+1)
		p := route.Placed{Chainage: 2 * float64(i), Index: i}
		p.Key, p.OK, p.Current, p.CurrentSigma = key, true, cur[i], sig[i]
		p.DOF = 360
		p.Chi2 = red[i] * float64(p.DOF)
		r.Stations = append(r.Stations, p)
		if red[i] > 4 {
			r.Findings = append(r.Findings, route.Finding{Kind: route.KindPoorFit, Keys: []string{key}, From: p.Chainage, To: p.Chainage})
		}
	}
	r.Findings = append(r.Findings, route.Finding{Kind: route.KindCurrentStep, Keys: []string{"T03", "T04", "T05"}, From: 4, To: 8})
	return r
}

// TestCandidatesNotBesideStep: where the route sizes a step between a poor
// fit's nearest sound neighbours, its departure from their two levels is
// not taken for an object's (dipoleCandidates): on teeRoute no traverse is
// searched. Before, with the route's scatter 0, all five poor fits
// departed from both neighbours alike by over dipoleAgreeK sigmas and were
// searched, and T05's "object" 2.6 m down was accepted
// (TestLocateTeeServiceStepNoObject). A localised misfit (T05's reduced
// chi-square ten times both neighbours' and more) is still searched there,
// and without the step the departures are still measured.
func TestCandidatesNotBesideStep(t *testing.T) {
	red := []float64{0.91, 4.05, 27.6, 647, 420, 23.5, 3.23, 1.0, 0.70}
	if c := dipoleCandidates(teeRoute(red)); len(c) != 0 {
		t.Errorf("searched beside the tee's step: %v, want none", c)
	}
	local := append([]float64(nil), red...)
	local[4] = 6500 // over localFactor times T04's 647
	if c := dipoleCandidates(teeRoute(local)); len(c) != 1 || !c["T05"] {
		t.Errorf("with T05's misfit localised, searched %v, want T05 alone", c)
	}
	r := teeRoute(red)
	r.Findings = r.Findings[:len(r.Findings)-1]
	if c := dipoleCandidates(r); !c["T05"] {
		t.Errorf("without the step, searched %v, want T05 among them", c)
	}
}
