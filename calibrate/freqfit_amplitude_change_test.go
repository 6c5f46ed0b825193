package calibrate

import (
	"fmt"
	"math"
	"testing"
)

// rampedTone is a noise-free log of three axes sampled at fs Hz for dur s
// from t = 0: on each axis a tone of f Hz whose amplitude changes with
// time as a parabola of its own, a phase of its own, and a steady field
// with a slow drift (simulated; the numbers are invented). Its model, a
// linear and quadratic change of the fundamental's amplitude at one
// steady frequency, is the one the slope model of the frequency-estimating
// fit takes, so that fit must return f itself in every window.
func rampedTone(fs, dur, f float64) *Columns {
	amp0 := [3]float64{400, 900, 250}      // nT peak at t = 0
	rate := [3]float64{60, -45, 110}       // nT/s
	curve := [3]float64{8, 5, -10}         // nT/s²
	phase := [3]float64{0.3, 1.4, -2}      // rad
	earth := [3]float64{150, 19200, -45e3} // nT
	var c Columns
	for i := range int(dur * fs) {
		t := float64(i) / fs
		c.Time = append(c.Time, t)
		for k := range 3 {
			amp := amp0[k] + (rate[k]+curve[k]*t)*t
			c.B[k] = append(c.B[k], earth[k]+0.4*t+amp*math.Cos(2*math.Pi*f*t+phase[k]))
		}
	}
	return &c
}

// TestEstimateFreqAmplitudeChangeNearNyquist: sampled just above twice the
// frequency, the sine and cosine of the tone over a window are an envelope
// alternating in sign from sample to sample, and the columns of a change
// of the tone's amplitude, τ(A cos + B sin), are then far from orthogonal
// to the frequency's column τ(-A sin + B cos) once the basis is projected
// out, and so are those of its quadratic change, τ²(A cos + B sin).
// Before, the frequency-estimating fit did not take the amplitude's
// change, and a tone of steady frequency whose amplitude changed (a walked
// sensor's) read 1e-3 to 1e-2 Hz off in each window at 102-128 Hz
// sampling (found in review), so that locate could not act on offsets
// below 0.01 Hz there. With the fundamental's change of amplitude, linear
// and quadratic, eliminated from each step, every window of a tone whose
// amplitude changes so must return the tone's frequency (simulated truth)
// to rounding, 1e-7 Hz, at the rates named and in the windows
// ConditionedWindow lengthens them to; also with the tone 0.004 Hz off the
// frequency given, so that the amplitude's column does not take a true
// offset.
func TestEstimateFreqAmplitudeChangeNearNyquist(t *testing.T) {
	const tol = 1e-7 // Hz; rounding, and the sigma-tied stop of a noise-free fit
	for _, fs := range []float64{102, 103, 107, 110, 115, 122, 128} {
		for _, f := range []float64{50, 50.004} {
			t.Run(fmt.Sprintf("%g Hz at %g Hz", f, fs), func(t *testing.T) {
				set := DemodSettings{Freq: 50, Window: 0.2, Drift: true}
				win, _, err := ConditionedWindow(fs, &set, WarnWindowInflation)
				if err != nil {
					t.Fatal(err)
				}
				set.Window, set.EstimateFreq = win, true
				res, err := DemodulateColumns(rampedTone(fs, 6, f), &set)
				if err != nil {
					t.Fatal(err)
				}
				if len(res.Windows) < 5 {
					t.Fatalf("%d windows of %g s", len(res.Windows), win)
				}
				for _, w := range res.Windows {
					if d := w.Freq - f; !(math.Abs(d) <= tol) {
						t.Errorf("%.4g s window at %.2f s: %.9f Hz, the tone is %g Hz (off %.3g Hz)", win, w.Time, w.Freq, f, d)
					}
				}
			})
		}
	}
}
