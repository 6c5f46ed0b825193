package live

import (
	"math"
	"math/rand/v2"
	"testing"
)

// quantise rounds every reading of w to a multiple of res, nT, as a
// logger writing a fixed number of decimals does.
func quantise(w *window, res float64) {
	for i := range w.Sensors {
		for _, col := range [][]float64{w.Sensors[i].Bx, w.Sensors[i].By, w.Sensors[i].Bz} {
			for j := range col {
				col[j] = math.Round(col[j]/res) * res
			}
		}
	}
}

// Reviewer's case (rv13a finding 9): healthy sensors with 0.03 nT of noise
// (a good fluxgate's ~10 pT/sqrt(Hz) over 10 Hz, from memory) written at
// 0.1 nT resolution were called stuck whenever an axis with a steady
// field repeated one value through a 2 s window. Simulated truth
// (synthWindow): fenwick-lane as DC, 2 A go and return, the Earth's
// field, 20 readings a window at 10 Hz, rounded to 0.1 nT: the axis along
// the conductors sees no field change and repeats its value. No window
// may leave a sensor out or raise a stuck alarm, and every window reads
// the truth within 4 sigma.
func TestQuantisedQuietSensorNotStuck(t *testing.T) {
	a, p := fenwickDC(t, 0)
	a.Noise = 0.05 // the rounding's 0.1/sqrt(12) = 0.029 nT with the sensor's 0.03 nT
	rng := rand.New(rand.NewPCG(9, 1))
	flatSeen := 0
	for k := range 60 {
		w := synthWindow(a, []complex128{2, -2}, earthMid, 1764650000+2*float64(k), 10, 20, 0.03, rng)
		quantise(w, 0.1)
		for i := range w.Sensors {
			if ax, _ := stuckAxisOld(&w.Sensors[i]); ax != "" {
				flatSeen++
			}
		}
		e, alarms := p.solve(w, p.reduce(w))
		for _, al := range alarms {
			t.Errorf("window %d: %s alarm: %s", k, al.Kind, al.Message)
		}
		if len(e.Missing) > 0 || e.Sensors != len(a.Sensors) {
			t.Errorf("window %d: %d sensors, missing %v", k, e.Sensors, e.Missing)
		}
		for i, c := range e.Conductors {
			want := []float64{2, -2}[i]
			if d := math.Abs(c.Current - want); !(d <= 4*c.CurrentSigma) {
				t.Errorf("window %d: %s %.5g ± %.3g A, truth %g A", k, c.Name, c.Current, c.CurrentSigma, want)
			}
		}
	}
	if flatSeen == 0 {
		t.Fatal("no sensor window repeated one value on an axis: the case is not reproduced")
	}
}

// stuckAxisOld is the test the service used to make: any axis repeating
// one value through the window.
func stuckAxisOld(s *series) (string, float64) {
	for k, col := range [][]float64{s.Bx, s.By, s.Bz} {
		same := true
		for _, v := range col[1:] {
			if v != col[0] {
				same = false
				break
			}
		}
		if same {
			return [3]string{"x", "y", "z"}[k], col[0]
		}
	}
	return "", 0
}

// The stuck cases stay caught with the readings' resolution counted: an
// axis pinned at a rail (100000 nT, a fluxgate's range) on a sensor whose
// other axes show 0.5 nT of noise at 0.1 nT resolution is stuck in its
// first window; a sensor repeating one reading on every axis (a frozen
// logger) is stuck from its second window on, and not in its first.
func TestStuckStillCaughtAtResolution(t *testing.T) {
	a, p := fenwickDC(t, 0)
	rng := rand.New(rand.NewPCG(4, 12))
	for k := range 3 {
		w := synthWindow(a, []complex128{2, -2}, earthMid, 1764650000+2*float64(k), 10, 20, 0.5, rng)
		quantise(w, 0.1)
		for i := range w.Sensors[1].Bz {
			w.Sensors[1].Bz[i] = 100000
		}
		for i := range w.Sensors[3].Bx {
			w.Sensors[3].Bx[i], w.Sensors[3].By[i], w.Sensors[3].Bz[i] = 1520.3, 17850.1, -45760.4
		}
		r := p.reduce(w)
		if r.missing[a.Sensors[1].Name] != "stuck" {
			t.Errorf("window %d: sensor %s pinned on z not left out as stuck: missing %v", k, a.Sensors[1].Name, r.missing)
		}
		if got, want := r.missing[a.Sensors[3].Name] == "stuck", k > 0; got != want {
			t.Errorf("window %d: frozen sensor %s stuck %v, want %v (missing %v)", k, a.Sensors[3].Name, got, want, r.missing)
		}
		if len(r.missing) != 1+min(k, 1) {
			t.Errorf("window %d: missing %v", k, r.missing)
		}
	}
}
