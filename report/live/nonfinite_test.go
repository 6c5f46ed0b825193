package live

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// One batch of huge finite readings (a corrupt float, 1e200 nT) that
// reached a window made the fit overflow: the estimate held +Inf, JSON
// could not encode it, and the worker stopped on it and took it again
// forever. Intake now refuses such readings (broker.Decode), and solve
// makes a window whose fit or estimate is non-finite a failed one, with a
// degraded alarm and nothing non-finite in it, leaving the step alarm's
// previous current as it was. Simulated truth (synthWindow: Biot-Savart
// line fields, a mid-latitude Earth's field, the site's noise), DC and
// AC, with one sensor's bx replaced by N(0,1) 1e200 (the reviewer's
// case) in every sample, so that no spike filter takes them out, passed
// to solve directly.
func TestNonFiniteWindowFailsAndEncodes(t *testing.T) {
	earth := [3]float64{1520, 17850, -45760} // a mid-latitude field, nT (as TestDCWindowWithEarthField)
	for _, mode := range []string{"dc", "ac"} {
		t.Run(mode, func(t *testing.T) {
			a := harrowFen(t).Asset("fenwick-lane")
			bg := [3]float64{}
			if mode == "dc" {
				a.Mode, a.Frequency = "dc", 0
				a.fieldLo, a.fieldHi = defaultEarthField[0], defaultEarthField[1]
				bg = earth
			}
			a.Alarms.Step = 1
			p := solvingProcessor(t, a, []string{"go", "return"})
			rng := rand.New(rand.NewPCG(12, 1))
			good := synthWindow(a, []complex128{200, -180}, bg, 1764650000, 1000, 1000, a.Noise, rng)
			e, _ := p.solve(good, p.reduce(good))
			if e.Quality == "failed" {
				t.Fatalf("clean window failed")
			}
			before := map[string]float64{}
			for k, v := range p.prev {
				before[k] = v
			}
			w := synthWindow(a, []complex128{200, -180}, bg, 1764650001, 1000, 1000, a.Noise, rng)
			s := &w.Sensors[1]
			for i := range s.Bx {
				s.Bx[i] = rng.NormFloat64() * 1e200
			}
			e, alarms := p.solve(w, p.reduce(w))
			data, err := json.Marshal(e)
			if err != nil {
				t.Fatalf("estimate not encodable: %v (quality %q)", err, e.Quality)
			}
			if e.Quality != "failed" || len(e.Conductors) != 0 {
				t.Errorf("quality %q with %d conductors, want failed with none: %s", e.Quality, len(e.Conductors), data)
			}
			al, ok := alarmFor(alarms, AlarmDegraded, "")
			if !ok || !strings.Contains(al.Message, "non-finite") {
				t.Errorf("degraded alarm %q (found %v), want one saying the fit was non-finite", al.Message, ok)
			}
			for _, al := range alarms {
				if _, err := json.Marshal(al); err != nil {
					t.Errorf("%s alarm not encodable: %v", al.Kind, err)
				}
				if al.Kind == AlarmStep || al.Kind == AlarmOverCurrent {
					t.Errorf("%s alarm from a failed window: %s", al.Kind, al.Message)
				}
			}
			for k, v := range before {
				if p.prev[k] != v || math.IsInf(p.prev[k], 0) {
					t.Errorf("previous current of %s %v after the failed window, want %v kept", k, p.prev[k], v)
				}
			}
		})
	}
}
