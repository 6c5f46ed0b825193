package live

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// roundWindow rounds every reading of w to a multiple of q nT (a logger
// writing its readings at resolution q).
func roundWindow(w *window, q float64) {
	for si := range w.Sensors {
		s := &w.Sensors[si]
		for _, col := range [][]float64{s.Bx, s.By, s.Bz} {
			for i := range col {
				col[i] = q * math.Round(col[i]/q)
			}
		}
	}
}

// Reviewer's case (rg12b finding 1): a DC asset with noise = 0 whose
// sensors have less noise than their logging resolution (0.02 nT of
// noise written at 0.1 nT) got degraded windows blaming the conductor
// model, though the readings were exactly those of the held line
// (simulated truth: synthWindow, the Biot-Savart field of a 2 A line where
// the site file puts it, 500 readings at 50 Hz): the scatter of readings
// most of which are one value understates the error of their mean, which
// the rounding biases by up to half a step. Each sensor's sigma is now
// floored by the rounding, so no window is degraded; a sensor whose
// offset moved by 1 nT (ten steps) is still caught.
func TestQuantisedReadingsNotDegraded(t *testing.T) {
	// The reviewer's geometry: the pipe 0.3 m east, 1.4 m down.
	a := testSite(t, strings.Replace(strings.Replace(kestrelSite, "NOISE", "0", 1), "point = [0.2, 0, -1.5]", "point = [0.3, 0, -1.4]", 1)).Asset("kestrel-moor")
	p, err := newProcessor(a, "test")
	if err != nil {
		t.Fatal(err)
	}
	if p.est, err = NewInverseEstimator(a.Mode, a.Conductors); err != nil {
		t.Fatal(err)
	}
	p.names = []string{"pipe"}
	rng := rand.New(rand.NewPCG(12, 2))
	for k := range 30 {
		w := synthWindow(a, []complex128{2}, [3]float64{-150, 19200, -45100}, 1796104800+10*float64(k), 50, 500, 0.02, rng)
		roundWindow(w, 0.1)
		e, al := p.solve(w, p.reduce(w))
		if e.Quality != "good" || len(e.Missing) > 0 {
			t.Errorf("window %d: %s, missing %v, alarms %+v; want good", k, e.Quality, e.Missing, al)
		}
		if c := e.Conductors[0]; math.Abs(c.Current-2) > 4*c.CurrentSigma+1e-3 {
			t.Errorf("window %d: %.5f +- %.5f A, want 2", k, c.Current, c.CurrentSigma)
		}
	}
	w := synthWindow(a, []complex128{2}, [3]float64{-150, 19200, -45100}, 1796104920, 50, 500, 0.02, rng)
	for i := range w.Sensors[1].Bx {
		w.Sensors[1].Bx[i] += 1
	}
	roundWindow(w, 0.1)
	e, _ := p.solve(w, p.reduce(w))
	if e.Quality == "good" && len(e.Missing) == 0 {
		t.Errorf("a 1 nT offset on km-b: good with every sensor; want it caught")
	}
}
