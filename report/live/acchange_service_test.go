package live

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// acChangeSite is harrow-fen's Fenwick Lane feeder (five sensors, a go and
// return pair 0.8 m down, 50 Hz, 1 s windows, 2 nT of noise, the geometry
// held) with the step alarm at 15 A and no other alarm.
const acChangeSite = `
[service]
http = "127.0.0.1:0"
lease_ttl = "1s"
idle = "400ms"
[[asset]]
name = "fenwick-lane"
mode = "ac"
frequency = 50.0
window = "1s"
model = "fixed"
noise = 2.0
  [[asset.sensor]]
  name = "fl-w2"
  position = [-1.5, 0.0, 0.3]
  [[asset.sensor]]
  name = "fl-w1"
  position = [-0.5, 0.0, 0.3]
  [[asset.sensor]]
  name = "fl-e1"
  position = [0.5, 0.0, 0.3]
  [[asset.sensor]]
  name = "fl-e2"
  position = [1.5, 0.0, 0.3]
  [[asset.sensor]]
  name = "fl-n1"
  position = [0.0, 4.0, 0.3]
  orientation = [90.0, 0.0, 0.0]
  [[asset.conductor]]
  name = "go"
  point = [-0.15, 0.0, -0.8]
  direction = [0.0, 1.0, 0.0]
  [[asset.conductor]]
  name = "return"
  point = [0.15, 0.0, -0.8]
  direction = [0.0, 1.0, 0.0]
  [asset.alarms]
  step = 15.0
`

// Through the service (the site file above, simulated readings published
// to the broker in 0.1 s batches as a gateway sends them): the feeder's RMS
// current falls from 120 A to 100 A (go and return) 1.5 s into 4 s of
// readings. Simulated truth (synthACWindowVarying, Biot-Savart line fields
// at 1000 readings a second): the window from 1 s to 2 s holds a change at
// 1.5 s (within 2 ms) from 120 A to 100 A on each conductor (within 4
// sigma), its mean reads 110 A, and the step is alarmed once on each
// conductor, of its whole size (within 0.5 A): before, the two windows
// read 10 A apart each, under the 15 A threshold, and nothing was raised.
func TestServiceACStepInsideWindow(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, acChangeSite)
	_, stop := h.runService(t, site, "fenwick")
	defer stop()
	a := site.Assets[0]
	const at = 1.5
	cur := func(t float64) []complex128 {
		if t < t0+at {
			return pair(120, 0.3)
		}
		return pair(100, 0.3)
	}
	rng := rand.New(rand.NewPCG(53, 59))
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	for k := range 4 {
		w := synthACWindowVarying(&a, cur, a.Frequency, 0, 0, t0+float64(k), 1000, 1000, a.Noise, rng)
		for b := range 10 {
			for si, s := range a.Sensors {
				sr := w.Sensors[si]
				lo, hi := 100*b, 100*(b+1)
				bt := &broker.Batch{Asset: a.Name, Sensor: s.Name, Time: sr.T[lo:hi], Bx: sr.Bx[lo:hi], By: sr.By[lo:hi], Bz: sr.Bz[lo:hi]}
				if _, err := broker.PublishBatch(ctx, h.js, bt, broker.ContentJSON); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
	var ests []Estimate
	waitFor(t, 30*time.Second, "4 estimates", func() bool { ests = readEstimates(h, a.Name); return len(ests) >= 4 })
	// The window from 1 s to 2 s holds the step.
	stepWindow := func(start float64) bool { return math.Abs(start-(t0+1)) < 1e-3 }
	held := 0
	for _, e := range ests {
		if e.Change != nil && !stepWindow(e.Start) {
			t.Errorf("window from %.3f s: change %+v; the step is in the window from 1 s", e.Start-t0, e.Change)
		}
		if !stepWindow(e.Start) {
			continue
		}
		held++
		for _, c := range e.Conductors {
			if d := math.Abs(c.Current - 110); !(d <= 4*c.CurrentSigma) {
				t.Errorf("window from 1 s: %s %.5g ± %.3g A, the mean 110 A", c.Name, c.Current, c.CurrentSigma)
			}
		}
		if e.Change == nil {
			t.Fatalf("window from 1 s: no change reported: %+v", e)
		}
		if d := math.Abs(e.Change.At - (t0 + at)); d > 0.002 {
			t.Errorf("change at %.4f s, truth %.4f s", e.Change.At-t0, at)
		}
		for _, c := range e.Change.Conductors {
			if d := math.Abs(c.Before - 120); !(d <= 4*c.BeforeSigma) {
				t.Errorf("%s before %.5g ± %.3g A, truth 120 A", c.Name, c.Before, c.BeforeSigma)
			}
			if d := math.Abs(c.After - 100); !(d <= 4*c.AfterSigma) {
				t.Errorf("%s after %.5g ± %.3g A, truth 100 A", c.Name, c.After, c.AfterSigma)
			}
		}
	}
	if held != 1 {
		t.Fatalf("%d estimates of the window from 1 s, want 1", held)
	}
	steps := h.allAlarms(broker.AlarmSubject(a.Name, AlarmStep), func(Alarm) bool { return true })
	seen := map[string]int{}
	for _, al := range steps {
		seen[al.Subject]++
		if !stepWindow(al.Start) {
			t.Errorf("step alarm in the window from %.3f s: %s", al.Start-t0, al.Message)
		}
		if d := math.Abs(al.Value - -20); d > 0.5 {
			t.Errorf("step of %.4g A, truth -20 A: %s", al.Value, al.Message)
		}
		t.Logf("%s", al.Message)
	}
	if seen["go"] != 1 || seen["return"] != 1 {
		t.Errorf("step alarms per conductor %v, want one each", seen)
	}
}
