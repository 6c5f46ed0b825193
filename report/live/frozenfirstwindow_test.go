package live

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// freezeSensor sets every reading of sensor si in w to v (its output
// frozen at v on every axis).
func freezeSensor(w *window, si int, v [3]float64) {
	s := &w.Sensors[si]
	for i := range s.T {
		s.Bx[i], s.By[i], s.Bz[i] = v[0], v[1], v[2]
	}
}

// twoSensorSite is kestrelSite with two sensors only, 2 m apart across
// the pipe.
const twoSensorSite = `
[[asset]]
name = "two"
window = "10s"
model = "fixed"
noise = 0.5
  [[asset.sensor]]
  name = "s1"
  position = [-1, 0, 0.5]
  [[asset.sensor]]
  name = "s2"
  position = [1, 0, 0.5]
  [[asset.conductor]]
  name = "pipe"
  point = [0.3, 0, -1.4]
  direction = [0, 1, 0]
`

// Reviewer's case (rg12b finding 2): a sensor whose output freezes (every
// axis holding its last reading from a window edge) is called stuck only
// from its second frozen window. In the first, with six sensors it was
// left out as inconsistent, "turned or moved on its mount", and with two
// the window was degraded blaming the conductor model or the geometry.
// Simulated truth (synthWindow, Biot-Savart, 2 A, 0.5 nT noise, 500
// readings): the first frozen window's messages now name the sensor as
// frozen, and not its mount or the model.
func TestFrozenSensorFirstWindowNamed(t *testing.T) {
	earth := [3]float64{-150, 19200, -45100}
	a, p := kestrelProcessor(t, "0.5")
	rng := rand.New(rand.NewPCG(20, 1))
	w0 := synthWindow(a, []complex128{2}, earth, 1796104800, 50, 500, 0.5, rng)
	p.solve(w0, p.reduce(w0))
	last := w0.Sensors[2]
	w1 := synthWindow(a, []complex128{2}, earth, 1796104810, 50, 500, 0.5, rng)
	freezeSensor(w1, 2, [3]float64{last.Bx[len(last.Bx)-1], last.By[len(last.By)-1], last.Bz[len(last.Bz)-1]})
	e, alarms := p.solve(w1, p.reduce(w1))
	why, left := e.Missing["km-c"]
	if !left || !strings.Contains(why, "frozen") {
		t.Errorf("six sensors: km-c missing %q (%v), want it left out as frozen", why, left)
	}
	for _, al := range alarms {
		if al.Subject == "km-c" && (strings.Contains(al.Message, "turned or moved") || !strings.Contains(al.Message, "frozen")) {
			t.Errorf("six sensors: alarm %q blames the mount, or does not say frozen", al.Message)
		}
	}

	site := testSite(t, twoSensorSite)
	a2 := site.Asset("two")
	p2, err := newProcessor(a2, "test")
	if err != nil {
		t.Fatal(err)
	}
	if p2.est, err = NewInverseEstimator(a2.Mode, a2.Conductors); err != nil {
		t.Fatal(err)
	}
	p2.names = []string{"pipe"}
	w0 = synthWindow(a2, []complex128{2}, earth, 1796104800, 50, 500, 0.5, rng)
	p2.solve(w0, p2.reduce(w0))
	last = w0.Sensors[1]
	w1 = synthWindow(a2, []complex128{2}, earth, 1796104810, 50, 500, 0.5, rng)
	freezeSensor(w1, 1, [3]float64{last.Bx[len(last.Bx)-1], last.By[len(last.By)-1], last.Bz[len(last.Bz)-1]})
	e, alarms = p2.solve(w1, p2.reduce(w1))
	found := false
	for _, al := range alarms {
		if al.Kind == AlarmDegraded || al.Kind == AlarmStuck {
			found = found || strings.Contains(al.Message, "s2")
			if al.Kind == AlarmDegraded && (!strings.Contains(al.Message, "sensor s2 repeated one reading") || strings.Contains(al.Message, "thin-line model")) {
				t.Errorf("two sensors: degraded alarm %q; want s2 named as frozen, not the model", al.Message)
			}
		}
	}
	if !found {
		t.Errorf("two sensors: %s, alarms %+v; want s2 named", e.Quality, alarms)
	}
}
