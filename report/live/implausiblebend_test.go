package live

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// bendSiteText is a plant room's DC bar (invented fixture, after rv22a's
// dc-segs4 and dc-lines): it rises, runs 2 m north, turns east for
// 1.5 m and drops again, under six sensors. "bend-truth" holds it as its
// four segments, "bend-lines" as two infinite lines along the runs;
// bendSensorsText are the six sensors both assets share.
const bendSensorsText = `  [[asset.sensor]]
  name = "s1"
  position = [-0.4, -0.8, -0.4]
  [[asset.sensor]]
  name = "s2"
  position = [0.4, -0.6, -0.5]
  [[asset.sensor]]
  name = "s3"
  position = [-0.3, 0.9, -0.45]
  [[asset.sensor]]
  name = "s4"
  position = [0.8, 1.0, -0.4]
  [[asset.sensor]]
  name = "s5"
  position = [0.9, 0.0, -0.5]
  [[asset.sensor]]
  name = "s6"
  position = [2.0, 0.9, -0.6]
`

const bendSiteText = `
[[asset]]
name = "bend-truth"
window = "4s"
noise = 1.0
` + bendSensorsText + `  [[asset.conductor]]
  name = "riser1"
  kind = "segment"
  from = [0.0, -1.5, -2.5]
  to = [0.0, -1.5, -0.8]
  [[asset.conductor]]
  name = "north"
  kind = "segment"
  from = [0.0, -1.5, -0.8]
  to = [0.0, 0.5, -0.8]
  [[asset.conductor]]
  name = "east"
  kind = "segment"
  from = [0.0, 0.5, -0.8]
  to = [1.5, 0.5, -0.8]
  [[asset.conductor]]
  name = "riser2"
  kind = "segment"
  from = [1.5, 0.5, -0.8]
  to = [1.5, 0.5, -2.5]
[[asset]]
name = "bend-lines"
window = "4s"
noise = 1.0
` + bendSensorsText + `  [[asset.conductor]]
  name = "north"
  point = [0.0, -0.5, -0.8]
  direction = [0.0, 1.0, 0.0]
  [[asset.conductor]]
  name = "east"
  point = [0.75, 0.5, -0.8]
  direction = [1.0, 0.0, 0.0]
`

// A bend held as two infinite lines misses its readings (Biot-Savart
// fields of the four true segments, a mid-latitude Earth's field of
// 49,000 nT) by hundreds of times the noise, and the uniform background
// fitted with the currents soaks up part of that misfit, landing outside
// earth_field. That is the model's misfit, not a unit error: before, the
// window was "implausible" with "fields in the wrong unit (sent as nT)?"
// and the degraded fit only in the alarms. Now the window is "degraded"
// (listed before the earth-field note, whose alarm follows the degraded
// one) and the note says the background absorbs the misfit, without the
// unit hint.
func TestImplausibleEarthFieldOfADegradedWindowIsTheMisfit(t *testing.T) {
	site, err := ParseSite("bend.toml", []byte(bendSiteText))
	if err != nil {
		t.Fatal(err)
	}
	truth, held := site.Asset("bend-truth"), site.Asset("bend-lines")
	earth := [3]float64{1520, 17850, -45760} // a mid-latitude field, nT (as TestImplausibleDCWindowInWrongUnit)
	w := synthWindow(truth, []complex128{1200, 1200, 1200, 1200}, earth, 1764650000, 50, 200, truth.Noise, rand.New(rand.NewPCG(3, 9)))
	p, _ := newProcessor(held, "test")
	if err := p.hold(NewInverseEstimator, held.Conductors); err != nil {
		t.Fatal(err)
	}
	e, alarms := p.solve(w, p.reduce(w))
	if e.Quality != "degraded" || !(e.SigmaScale > 10) {
		t.Errorf("quality %q, sigma scale %.3g; want degraded, widened more than 10 times", e.Quality, e.SigmaScale)
	}
	if e.Background == nil || len(e.Implausible) != 1 {
		t.Fatalf("background %v, implausible %q; want a background and one earth-field note", e.Background, e.Implausible)
	}
	msg := e.Implausible[0]
	if strings.Contains(msg, "unit") || !strings.Contains(msg, "absorbs the model's misfit") || !strings.Contains(msg, "degraded") {
		t.Errorf("earth-field note %q: want the background absorbing the misfit of a degraded window, no unit hint", msg)
	}
	order := []string{}
	for _, al := range alarms {
		if al.Kind == AlarmDegraded || al.Kind == AlarmImplausible {
			order = append(order, al.Kind)
		}
	}
	if strings.Join(order, ",") != AlarmDegraded+","+AlarmImplausible {
		t.Errorf("alarms %v; want the degraded fit, then the earth-field note", order)
	}

	// The same readings in picotesla sent as nanotesla: still degraded,
	// but the background a thousand times off is a unit error first.
	w = synthWindow(truth, []complex128{1200, 1200, 1200, 1200}, earth, 1764650004, 50, 200, truth.Noise, rand.New(rand.NewPCG(3, 9)))
	scaleWindow(w, 1e-3)
	p, _ = newProcessor(held, "test")
	if err := p.hold(NewInverseEstimator, held.Conductors); err != nil {
		t.Fatal(err)
	}
	e, _ = p.solve(w, p.reduce(w))
	if e.Quality != "implausible" || len(e.Implausible) != 1 || !strings.Contains(e.Implausible[0], "wrong unit") || !(e.SigmaScale > 10) {
		t.Errorf("picotesla as nanotesla: quality %q, sigma scale %.3g, implausible %q; want implausible with the unit hint, degraded", e.Quality, e.SigmaScale, e.Implausible)
	}
}
