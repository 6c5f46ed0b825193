package calibrate

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// walkedNearNyquist is a log of a sensor walked at 1 m/s over a straight
// 50 Hz cable 2 m below its path, sampled at fs Hz: the field on bz is the
// cable's 1/r law along the walk (an amplitude of 2000 nT peak at the
// crossing, phase 30°) on a 45000 nT Earth's field, with noise of
// nearNyquistNoise nT on every axis (simulated; the numbers are invented).
// The cable is deep enough for the path-mean model of a window's phasor
// (Window.Travel) to hold to well under the noise over the 0.8 m walked in
// a window; nearer, that model's own limit shows (a locate warning). It returns the log and the true
// RMS phasor of bz at sample time t.
const nearNyquistNoise = 5.0

func walkedNearNyquist(fs float64) (*Columns, func(t float64) complex128) {
	const f, h, peak, noise = 50.0, 2.0, 2000.0, nearNyquistNoise
	ph := 30 * math.Pi / 180
	amp := func(t float64) float64 { x := t - 5; return peak * h / math.Hypot(x, h) }
	rng := rand.New(rand.NewPCG(102, 50))
	var c Columns
	for i := range int(10 * fs) {
		t := float64(i) / fs
		c.Time = append(c.Time, 1.8e9+t)
		c.B[0] = append(c.B[0], 150+rng.NormFloat64()*noise)
		c.B[1] = append(c.B[1], 19200+rng.NormFloat64()*noise)
		c.B[2] = append(c.B[2], -45000+amp(t)*math.Cos(2*math.Pi*f*(1.8e9+t)+ph)+rng.NormFloat64()*noise)
	}
	return &c, func(t float64) complex128 { return complex(amp(t)/math.Sqrt2, 0) * cmplx.Rect(1, ph) }
}

// TestDemodulateNearNyquistRefused: 50 Hz sampled at 102 Hz, just above
// twice the frequency (a legal rate: below it the signal aliases). Within
// a window the sine and cosine of 50 Hz are then an envelope turning at
// 1 Hz times a sign alternating from sample to sample, and over the 0.2 s
// of ten cycles that envelope is nearly the columns of the amplitude's
// change: before, the fit went ahead with the phasors' variance inflated
// 4e7 times (sigmas of thousands of nT; a 40 A cable read "no current
// found" with window residuals of 9600 nT; found in review). The default
// window must now be refused with the reason and a window that does
// (IllConditionedError), and in the windows demodulated, each window's
// phasor on bz must come within 5 of its own sigmas of the true field
// averaged over the window's samples (simulated truth), with a sigma
// within 2.5 times the noise floor of a well-spread window: the noise
// over the square root of the window's samples (the least-squares
// variance of a sine fit's coefficients, 2σ²/N, IEEE Std 1057, on the RMS
// scale).
func TestDemodulateNearNyquistRefused(t *testing.T) {
	const fs = 102.0
	c, truth := walkedNearNyquist(fs)
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Drift: true})
	var ill *IllConditionedError
	if errors.As(err, &ill) {
		// The suggestion must span at least about one beat 1/(fs - 2f) = 0.5 s.
		if !(ill.Suggest >= 0.5) || ill.Inflation <= MaxWindowInflation {
			t.Fatalf("refusal names window %g s (inflation %.3g); want one of 0.5 s or more and an inflation over %d: %v", ill.Suggest, ill.Inflation, MaxWindowInflation, err)
		}
		res, err = DemodulateColumns(c, &DemodSettings{Freq: 50, Drift: true, Window: ill.Suggest})
	}
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Windows) < 8 {
		t.Fatalf("%d windows of %g s, want 8 or more", len(res.Windows), res.Window)
	}
	for _, w := range res.Windows {
		lo := int(math.Round((w.Time-1.8e9)*fs - float64(w.N-1)/2))
		var want complex128
		for i := range w.N {
			want += truth(float64(lo+i) / fs)
		}
		want /= complex(float64(w.N), 0)
		if d := cmplx.Abs(w.B[2] - want); !(d <= 5*w.Sigma[2]) {
			t.Errorf("%g s window at %.2f s: bz %.5g nT RMS ∠%.3f°, true mean %.5g ∠%.3f° (off %.3g nT, sigma %.3g)",
				res.Window, w.Time-1.8e9, cmplx.Abs(w.B[2]), cmplx.Phase(w.B[2])*180/math.Pi, cmplx.Abs(want), cmplx.Phase(want)*180/math.Pi, d, w.Sigma[2])
		}
		if floor := nearNyquistNoise / math.Sqrt(float64(w.N)); !(w.Sigma[2] <= 2.5*floor) {
			t.Errorf("%g s window at %.2f s: sigma %.3g nT, over 2.5 times the %.3g nT of a well-spread window", res.Window, w.Time-1.8e9, w.Sigma[2], floor)
		}
	}
}

// TestConditionedWindow: the shortest whole multiple of the window that is
// well conditioned (MaxWindowInflation's figures, from the fit's own
// normal matrix): 50 Hz in 0.2 s windows at 2 kHz, 115 Hz and 110 Hz stay;
// at 107 Hz (1.4 beats of 1/(fs - 2f) in 0.2 s) the window doubles, at
// 102 Hz it grows to about two beats of 0.5 s.
func TestConditionedWindow(t *testing.T) {
	for _, c := range []struct {
		fs       float64
		min, max float64 // the window wanted, s
	}{
		{2000, 0.2, 0.2},
		{115, 0.19, 0.21},
		{110, 0.19, 0.21},
		{107, 0.39, 0.41},
		{102, 0.6, 1.01},
	} {
		w, inf, err := ConditionedWindow(c.fs, &DemodSettings{Freq: 50, Window: 0.2, Drift: true}, WarnWindowInflation)
		if err != nil || w < c.min || w > c.max || inf > WarnWindowInflation {
			t.Errorf("at %g Hz: window %g s (inflation %.3g, %v), want %g to %g s", c.fs, w, inf, err, c.min, c.max)
		}
	}
}
