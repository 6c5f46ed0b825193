package live

import (
	"math/rand/v2"
	"testing"
)

// Reviewer's case (rg12b finding 3): a current ramping evenly (a
// rectifier turned up slowly) has no step, but every window's readings
// were split at a time the noise picked and published as a `change` with
// levels tens of sigma apart. Simulated truth (synthDCWindowVarying, the
// Biot-Savart field of harrow-fen's Fenwick Lane pair): 100 A rising by
// 0.5 A/s, 1 A a 2 s window against the pair's 2 nT noise. No window may
// hold a change; the same windows with a step of 1 A at mid-window (the
// same change of level) still do.
func TestDCRampHoldsNoChange(t *testing.T) {
	const rate, n = 50.0, 100
	t0 := 1764650000.0
	a, p := fenwickDC(t, 50)
	rng := rand.New(rand.NewPCG(7, 13))
	ramp := func(t float64) []float64 { v := 100 + 0.5*(t-t0); return []float64{v, -v} }
	for k := range 10 {
		w, _ := synthDCWindowVarying(a, ramp, steadyEarth, t0+2*float64(k), rate, n, a.Noise, rng)
		e, _ := p.solve(w, p.reduce(w))
		if e.Change != nil {
			t.Errorf("ramp window %d: change at %.2f s into the window, %.3g sigma; want none", k, e.Change.At-w.Start, e.Change.Sigmas)
		}
	}
	for k := range 10 {
		ws := t0 + 2*float64(k+20)
		step := func(t float64) []float64 {
			v := 100.0
			if t >= ws+1 {
				v = 101
			}
			return []float64{v, -v}
		}
		w, _ := synthDCWindowVarying(a, step, steadyEarth, ws, rate, n, a.Noise, rng)
		e, _ := p.solve(w, p.reduce(w))
		if e.Change == nil {
			t.Errorf("step window %d: no change; want one at 1 s", k)
		}
	}
}
