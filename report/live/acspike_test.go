package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// A spike in one sensor's raw waveform moved an AC window's phasors: a
// sine fit over n readings takes a reading of size s in as sqrt(2) s/n of
// RMS phasor (1.1 A of a conductor's current for 1e5 nT in a review), so
// that one glitch raised imbalance alarms, and a spike of 1e3 nT moved the
// currents by many sigmas while the window stayed "good". Simulated truth
// (synthWindow: Biot-Savart line fields of fenwick-lane's go and return,
// 120 A each way, sqrt(2) Re(B exp(i 2 pi f t)) waveforms, the site's 2 nT
// noise; 1000 readings a second for 1 s), sensor 1 spiked: the spiked
// readings are left out (counted in Spikes, Samples without them), the
// window stays "good", each conductor's phasor is within three of its
// noise sigmas of the truth (its magnitude only when the grid is off the
// site's frequency: the phase is then referred to the window's own
// frequency), and no alarm is raised (max_imbalance 1 A).
func TestACWindowSpikeLeftOut(t *testing.T) {
	for _, tc := range []struct {
		name  string
		freq  float64 // of the simulated grid, Hz (the site's: 50)
		spike float64
		at    int
		run   int // readings spiked from at on
		axis  int
	}{
		{"1e5 nT", 50, 1e5, 300, 1, 0},
		{"1e3 nT", 50, 1e3, 517, 1, 2},
		{"-5e4 nT burst of 8", 50, -5e4, 640, 8, 2},
		{"2e3 nT burst of 15", 50, 2e3, 100, 15, 0},
		{"1e5 nT at 50.3 Hz", 50.3, 1e5, 300, 1, 0},
		{"1e4 nT at 49.6 Hz", 49.6, 1e4, 811, 1, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a := harrowFen(t).Asset("fenwick-lane")
			a.Alarms.MaxImbalance, a.Alarms.MaxCurrent, a.Alarms.Step = 1, 0, 0
			p := solvingProcessor(t, a, []string{"go", "return"})
			rng := rand.New(rand.NewPCG(4, 17))
			truth := []complex128{cmplx.Rect(120, 0.3), cmplx.Rect(120, 0.3+math.Pi)}
			site := a.Frequency
			a.Frequency = tc.freq
			w := synthWindow(a, truth, [3]float64{}, 1764650000, 1000, 1000, a.Noise, rng)
			a.Frequency = site
			col := [][]float64{w.Sensors[1].Bx, w.Sensors[1].By, w.Sensors[1].Bz}[tc.axis]
			for i := tc.at; i < tc.at+tc.run; i++ {
				col[i] += tc.spike
			}
			e, alarms := p.solve(w, p.reduce(w))
			if got := e.Spikes[a.Sensors[1].Name]; got != tc.run || len(e.Spikes) != 1 {
				t.Errorf("spikes %v, want %d on sensor %s", e.Spikes, tc.run, a.Sensors[1].Name)
			}
			if want := 1000*len(a.Sensors) - tc.run; e.Samples != want {
				t.Errorf("%d samples used, want %d", e.Samples, want)
			}
			if e.Quality != "good" {
				t.Errorf("quality %q (chi2 %.3g on %d)", e.Quality, e.Chi2, e.DOF)
			}
			for i, c := range e.Conductors {
				got := cmplx.Rect(c.Current, *c.Phase*math.Pi/180)
				d := cmplx.Abs(got - truth[i])
				if tc.freq != site {
					d = math.Abs(c.Current - cmplx.Abs(truth[i]))
				}
				// The window's noise sigma, not widened by a misfit.
				sig := c.CurrentSigma
				if e.SigmaScale > 1 {
					sig /= e.SigmaScale
				}
				if !(d <= 3*sig) || sig <= 0 {
					t.Errorf("%s: %.5f A at %.4f deg, truth %.5f A at %.4f deg: %.3g A off, sigma %.3g A", c.Name, c.Current, *c.Phase,
						cmplx.Abs(truth[i]), cmplx.Phase(truth[i])*180/math.Pi, d, sig)
				}
			}
			for _, al := range alarms {
				t.Errorf("%s alarm: %s", al.Kind, al.Message)
			}
		})
	}
}

// Clean AC windows lose no reading to the spike filter: simulated truth
// (synthWindow, the site's 2 nT Gaussian noise, fenwick-lane's five
// sensors, 1000 readings a second) in 200 windows of 1 s at the site's
// 50 Hz (a million readings), 30 with the grid at 50.4 Hz, 30 with third
// and fifth harmonics of 15 % and 6 % of the fundamental added to every
// axis, and 30 in which the current falls from 120 A to 60 A 0.9 s into
// the window (a load switched off): none is cut at 10 robust standard
// deviations (erfc(10/sqrt 2) = 1.5e-23 per reading for Gaussian noise).
func TestACWindowCleanKeepsEveryReading(t *testing.T) {
	a := harrowFen(t).Asset("fenwick-lane")
	p, _ := newProcessor(a, "test")
	rng := rand.New(rand.NewPCG(9, 4))
	cur := []complex128{cmplx.Rect(120, 0.3), cmplx.Rect(120, 0.3+math.Pi)}
	check := func(name string, k int, w *window) {
		t.Helper()
		if r := p.reduce(w); r.spikes != nil || r.samples != 1000*len(a.Sensors) {
			t.Fatalf("%s window %d: spikes %v, %d samples used of %d", name, k, r.spikes, r.samples, 1000*len(a.Sensors))
		}
	}
	for k := range 200 {
		check("50 Hz", k, synthWindow(a, cur, [3]float64{}, 1764650000+float64(k), 1000, 1000, a.Noise, rng))
	}
	for k := range 30 {
		a.Frequency = 50.4
		w := synthWindow(a, cur, [3]float64{}, 1764650000+float64(k), 1000, 1000, a.Noise, rng)
		a.Frequency = 50
		check("50.4 Hz", k, w)
	}
	for k := range 30 {
		w := synthWindow(a, cur, [3]float64{}, 1764650000+float64(k), 1000, 1000, a.Noise, rng)
		clean := synthWindow(a, cur, [3]float64{}, 1764650000+float64(k), 1000, 1000, 0, rng)
		for s := range w.Sensors {
			for _, c := range []struct{ noisy, fund []float64 }{{w.Sensors[s].Bx, clean.Sensors[s].Bx}, {w.Sensors[s].By, clean.Sensors[s].By}, {w.Sensors[s].Bz, clean.Sensors[s].Bz}} {
				// The fundamental's amplitude and phase on this axis, from
				// the noise-free waveform (exactly 50 cycles).
				var re, im float64
				for i, v := range c.fund {
					ph := 2 * math.Pi * 50 * float64(i) / 1000
					re += v * math.Cos(ph)
					im += v * math.Sin(ph)
				}
				amp, ph0 := 2*math.Hypot(re, im)/1000, math.Atan2(-im, re)
				for i := range c.noisy {
					ph := 2*math.Pi*50*float64(i)/1000 + ph0
					c.noisy[i] += amp * (0.15*math.Cos(3*ph+0.4) + 0.06*math.Cos(5*ph-1.1))
				}
			}
		}
		check("harmonics", k, w)
	}
	for k := range 30 {
		t0 := 1764650000 + float64(k)
		w := synthWindow(a, cur, [3]float64{}, t0, 1000, 1000, a.Noise, rng)
		after := synthWindow(a, []complex128{cur[0] / 2, cur[1] / 2}, [3]float64{}, t0, 1000, 1000, a.Noise, rng)
		for s := range w.Sensors {
			copy(w.Sensors[s].Bx[900:], after.Sensors[s].Bx[900:])
			copy(w.Sensors[s].By[900:], after.Sensors[s].By[900:])
			copy(w.Sensors[s].Bz[900:], after.Sensors[s].Bz[900:])
		}
		check("current step", k, w)
	}
}
