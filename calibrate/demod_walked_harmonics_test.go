package calibrate

import (
	"math"
	"math/cmplx"
	"testing"
)

// walkedHarmonicLog is a noise-free log of a sensor walked at a steady
// pace past a conductor whose 50 Hz current carries a 20% 3rd and an 8%
// 5th harmonic, beside a steady (DC) field: the AC field's amplitude and
// the DC field change linearly with time across the log (a walk through
// the gradient, to first order), so that within any window each
// harmonic's amplitude is its value at the window's mean time plus a
// linear change, and the DC field is a constant plus a linear term. The
// model of DemodulateColumns with Drift (and the harmonics' slope
// columns) then fits each window exactly; the truth is the construction.
// It returns the log and the fundamental's complex RMS phasor per axis at
// time t. Without harmonics the log holds the same fundamental and DC
// field alone.
func walkedHarmonicLog(fs float64, n int, harmonics bool) (*Columns, func(t float64) [3]complex128) {
	const f = 50.0
	// Per axis: the fundamental's peak amplitude (nT) at t = 0 and its
	// change (nT/s), its phase; then each harmonic's relative amplitude
	// and phase (a load's current, the same on every axis of one
	// conductor's field).
	// The amplitude changes by half its value a second: 1 m/s over a
	// cable about 1 m off, whose field falls as 1/r.
	amp := [3]float64{180, -95, 40}
	rate := [3]float64{90, -48, 20}
	phase := 0.7
	harm := []struct {
		h        float64
		rel, phi float64
	}{{3, 0.2, 1.31}, {5, 0.08, -0.35}}
	// The DC field: the Earth's plus a conductor's, changing at 900 nT/s
	// (1 m/s through the gradient of a 30 A DC line 1.4 m off, about
	// 2I/(10 r²) nT/m for I in A and r in m: 3 nT/cm).
	dc := [3]float64{-150, 19200, -45100}
	dcRate := [3]float64{900, -420, 310}
	c := &Columns{Time: make([]float64, n)}
	for k := range c.B {
		c.B[k] = make([]float64, n)
	}
	w := 2 * math.Pi * f
	for i := range n {
		t := float64(i) / fs
		c.Time[i] = t
		for k := range 3 {
			a := amp[k] + rate[k]*t
			y := dc[k] + dcRate[k]*t + a*math.Cos(w*t+phase)
			for _, hh := range harm {
				if harmonics {
					y += hh.rel * a * math.Cos(hh.h*w*t+hh.phi)
				}
			}
			c.B[k][i] = y
		}
	}
	truth := func(t float64) [3]complex128 {
		var b [3]complex128
		for k := range b {
			b[k] = cmplx.Rect((amp[k]+rate[k]*t)/math.Sqrt2, phase)
		}
		return b
	}
	return c, truth
}

// TestDemodulateWalkedHarmonics: a walked sensor sees the harmonics of a
// conductor's own current change within each window like the
// fundamental. Over whole cycles a harmonic's linear change, (τ-τ̄) cos
// 3ωτ, is not orthogonal to sin ωτ (½∫(τ-τ̄)(sin 4ωτ - sin 2ωτ) =
// T/(8ω), integrating by parts) nor to the frequency's column τ sin ωτ,
// so without the harmonics' slope columns it leaked into the fundamental's
// phasor and pulled the estimated frequency (a 20% 3rd harmonic set a
// walked 50 Hz log's check 0.013 Hz off; found in review). With them, the
// noise-free log of walkedHarmonicLog is fitted exactly at a fixed
// frequency: the phasors are the construction's at each window's mean
// time. With the frequency estimated (where the fundamental takes no
// slope columns, the frequency being the slope of its phase, and its own
// change of amplitude moves the estimate by a few parts in 1e6, the walk's
// share that estimateWindowFreq in cmd cancels between walking
// directions), the harmonics must move no window's frequency: it must be
// that of the same log without them. The DC field's slope is taken by
// Drift.
func TestDemodulateWalkedHarmonics(t *testing.T) {
	const fs = 2000.0
	c, truth := walkedHarmonicLog(fs, 4000, true)
	plain, _ := walkedHarmonicLog(fs, 4000, false)
	set := DemodSettings{Freq: 50, Window: 0.2, Harmonics: []int{3, 5}, Drift: true}
	res, err := DemodulateColumns(c, &set)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Windows) != 10 {
		t.Fatalf("%d windows, want 10", len(res.Windows))
	}
	for i, w := range res.Windows {
		want := truth(w.Time)
		for k := range 3 {
			if d := cmplx.Abs(w.B[k] - want[k]); d > 1e-8*cmplx.Abs(want[k]) {
				t.Errorf("window %d axis %d: B %.9g, want %.9g (off by %.3g nT)", i, k, w.B[k], want[k], d)
			}
		}
	}
	set.EstimateFreq = true
	est, err := DemodulateColumns(c, &set)
	if err != nil {
		t.Fatal(err)
	}
	ref, err := DemodulateColumns(plain, &set)
	if err != nil {
		t.Fatal(err)
	}
	if len(est.Windows) != len(ref.Windows) {
		t.Fatalf("%d and %d windows", len(est.Windows), len(ref.Windows))
	}
	for i, w := range est.Windows {
		// Within 1e-6 Hz: at a window's estimate, off the tone by the
		// walk's share, the harmonics' columns are off their frequency by
		// as many times that share, which their slope columns take to first
		// order; what is left is second order (1e-7 Hz here, against
		// 1.6e-5 Hz without the slope columns).
		if d := math.Abs(w.Freq - ref.Windows[i].Freq); d > 1e-6 {
			t.Errorf("window %d: %.12f Hz with the harmonics, %.12f Hz without", i, w.Freq, ref.Windows[i].Freq)
		}
	}
}

// TestFitSineHarmonicSlopes: FitSine with Slope takes each harmonic's
// slope columns as well as the fundamental's, and on the noise-free
// walked log of walkedHarmonicLog (one axis, one window, with Drift)
// returns the construction: the fundamental's phasor at the mean time and
// a residual at rounding level.
func TestFitSineHarmonicSlopes(t *testing.T) {
	const fs = 2000.0
	c, truth := walkedHarmonicLog(fs, 400, true)
	fit, err := FitSine(c.Time, c.B[0], 50, &SineSettings{Harmonics: []int{3, 5}, Drift: true, Slope: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(fit.HarmonicSlopes) != 2 {
		t.Fatalf("%d harmonic slopes, want 2", len(fit.HarmonicSlopes))
	}
	want := truth(0.5 * (c.Time[0] + c.Time[len(c.Time)-1]))[0]
	if d := cmplx.Abs(fit.Phasor() - want); d > 1e-8*cmplx.Abs(want) {
		t.Errorf("phasor %.9g, want %.9g", fit.Phasor(), want)
	}
	if fit.RMS > 1e-7 {
		t.Errorf("residual %.3g nT RMS, want rounding", fit.RMS)
	}
}

// TestDemodulatePathMean: a sensor walked over a cable sees the
// amplitude curve within the window (near the peak, about travel²/(12 h²)
// of the field), and the inverse models each window's phasor as the mean
// of the field over the window's samples (Window.Travel). A fit with the
// constant, cos, sin and the slope columns returns that mean over whole
// cycles only to order 1/(ωT)², and each further column correlated both
// with the curvature and with sin ωτ (the linear term, the harmonics'
// slope columns) moved it further: with both, a walked 20 A cable under
// 0.5 nT of noise read its current 3.2 sigma low and its depth 5.8 sigma
// shallow on average (found while adding them). The curvature columns
// ((τ-τ̄)² - m2) cos ωτ and sin ωτ take the curvature about the mean, so
// that on a noise-free log whose amplitude is quadratic in time the
// phasor is the construction's mean over each window's samples exactly,
// whatever else is fitted.
func TestDemodulatePathMean(t *testing.T) {
	const (
		fs, f = 2000.0, 50.0
		n     = 2000
	)
	c := &Columns{Time: make([]float64, n)}
	for k := range c.B {
		c.B[k] = make([]float64, n)
	}
	ph := [3]complex128{complex(120, -35), complex(-40, 60), complex(15, 5)}
	// The amplitude's relative change about t = 0.5 s: a peak passed at
	// 1 m/s, 1.1 m below (a(t) = 1 - 0.4 (t-0.5) - 0.8 (t-0.5)²).
	amp := func(tt float64) float64 { d := tt - 0.5; return 1 - 0.4*d - 0.8*d*d }
	w := 2 * math.Pi * f
	for i := range n {
		tt := float64(i) / fs
		c.Time[i] = tt
		e := cmplx.Rect(math.Sqrt2*amp(tt), w*tt)
		for k := range 3 {
			c.B[k][i] = 20000*float64(k-1) + real(ph[k]*e)
		}
	}
	for _, set := range []DemodSettings{
		{Freq: f, Window: 0.2},
		{Freq: f, Window: 0.2, Drift: true},
		{Freq: f, Window: 0.2, Drift: true, Harmonics: []int{3, 5}},
	} {
		res, err := DemodulateColumns(c, &set)
		if err != nil {
			t.Fatal(err)
		}
		for i, win := range res.Windows {
			var mean float64
			for j := range 400 {
				mean += amp(c.Time[i*400+j])
			}
			mean /= 400
			for k := range 3 {
				want := ph[k] * complex(mean, 0)
				if d := cmplx.Abs(win.B[k] - want); d > 1e-9*cmplx.Abs(want) {
					t.Errorf("drift %v, harmonics %v, window %d axis %d: B %.9g, want the mean over the window %.9g (off by %.3g nT)", set.Drift, set.Harmonics, i, k, win.B[k], want, d)
				}
			}
		}
	}
}
