package calibrate

import (
	"math"
	"math/cmplx"
	"testing"
)

// TestDemodulateCubicBackground: a window of k cycles of a 4 Hz tone,
// A cos(ωt + φ) with A = 50 nT and φ = 30°, over a background that changes
// within the window (a steady field walked through near its source: the
// Earth's field, a ramp of 40 nT/s, and the curvature and cubic of a DC
// conductor passed close by), sampled at 256 Hz, noise-free. With Drift
// the background lies in the window's columns, so the least-squares phasor
// is the tone's exactly: the closed form B = A/√2 exp(iφ) for the RMS
// phasor referenced to absolute time (t0 = 1000 s is a whole number of
// cycles), to rounding. A ramp at k = 1, 2 and 4 cycles (with the plain
// sine fit, [1, τ, cos, sin], and at 2 and 4 also with the signal's change
// across the window, which over one cycle is refused as ill-conditioned);
// a cubic in windows of 4 and 8 cycles (MinBackgroundCycles). Before, Drift
// took the ramp alone, and the cubic background's quadratic and cubic
// leaked into the phasor (a cubic projects onto sin ωτ like a ramp, at
// order 1/cycles²): a DC field walked through read as a phantom tone
// (found in review).
func TestDemodulateCubicBackground(t *testing.T) {
	const (
		f, fs, amp = 4.0, 256.0, 50.0
		t0         = 1000.0
	)
	phi := 30 * math.Pi / 180
	want := complex(amp/math.Sqrt2, 0) * cmplx.Exp(complex(0, phi))
	type bg struct {
		name       string
		c1, c2, c3 float64 // nT/s, nT/s², nT/s³ about the window's middle
	}
	ramp, cubic := bg{"ramp", 40, 0, 0}, bg{"cubic", 40, -300, 250}
	for _, c := range []struct {
		k        int
		bg       bg
		constant bool // DemodSettings.ConstantAmplitude
	}{
		{1, ramp, true}, {2, ramp, true}, {4, ramp, true}, {2, ramp, false}, {4, ramp, false},
		{4, cubic, true}, {8, cubic, true}, {4, cubic, false}, {8, cubic, false},
	} {
		n := c.k * int(fs/f)
		T := float64(n) / fs
		tt := make([]float64, n)
		y := make([]float64, n)
		for i := range n {
			ti := float64(i) / fs
			u := ti - T/2
			tt[i] = t0 + ti
			y[i] = 48000 + c.bg.c1*u + c.bg.c2*u*u + c.bg.c3*u*u*u + amp*math.Cos(2*math.Pi*f*ti+phi)
		}
		cols := &Columns{Time: tt, B: [3][]float64{y, y, y}}
		set := &DemodSettings{Freq: f, Window: T, Drift: true, ConstantAmplitude: c.constant, MinCycles: 1}
		res, err := DemodulateColumns(cols, set)
		if err != nil {
			t.Fatalf("%d cycles, %s, constant amplitude %v: %v", c.k, c.bg.name, c.constant, err)
		}
		if len(res.Windows) != 1 {
			t.Fatalf("%d cycles, %s: %d windows, want 1", c.k, c.bg.name, len(res.Windows))
		}
		got := res.Windows[0].B[0]
		if d := cmplx.Abs(got - want); !(d < 1e-9*amp) {
			t.Errorf("%d cycles, %s background, constant amplitude %v: phasor %.12g ∠%.12g°, want %.12g ∠30° (off by %.3g nT)",
				c.k, c.bg.name, c.constant, cmplx.Abs(got), cmplx.Phase(got)*180/math.Pi, cmplx.Abs(want), d)
		}
	}
}
