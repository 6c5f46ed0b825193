package main

import (
	"fmt"
	"math"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// A second tone beside the signal. The frequency check fits each window's
// frequency with the signal's columns, its harmonics and the mains lines
// beside it (demodulateAC); a tone that is none of these (a second
// tracer, another circuit's transmitter, a drive's switching line) lies
// in no column, and within about 1/window of the signal it leaks into the
// frequency's column and pulls every window's fitted frequency the same
// way, which the estimate's sigma (from the windows' scatter) does not
// see. A 512 Hz tracer beside 2.4 A at 516 Hz on a cable 3 m away (30% of
// the tracer's 8 A) read 512.094 ± 0.002 Hz, and 8 A there 512.434 ±
// 0.002 Hz, with no word; the run was demodulated at the estimate and
// every traverse read nonsense (found in review: lineNear knows mains
// lines only). secondTone looks for such a line in the residual of the
// readings about the strongest window once the signal and the mains are
// fitted (lineProbe); when one is there the frequency check is fitted
// again in windows long enough to fit the tone apart, with the tone
// fitted beside the signal at its own frequency (two frequencies in the
// fit: the tone's from the probe, the signal's from the windows), and a
// warning names the tone.

const (
	// secondToneSpan is the span of readings, s, about the strongest
	// window in which a second tone is looked for: its spectrum resolves
	// lines 1/span apart.
	secondToneSpan = 2.0
	// secondToneGuard is the least distance, Hz, from the signal at which
	// a line is looked for, in units of 1/secondToneSpan: nearer, the
	// signal's own change as the sensor walks (the envelope's spread,
	// which the probe's quadratic takes up only in part) is not told from
	// a line.
	secondToneGuard = 3.0
	// secondToneMainsHz is the distance, Hz, from a harmonic of 50 or
	// 60 Hz inside which a line is left to the mains' own checks (pull,
	// clash, unfitted).
	secondToneMainsHz = 1.0
)

// secondTone is a line found beside the signal.
type secondTone struct {
	freq  float64 // Hz, as the log shows it
	share float64 // its amplitude over the signal's in the probe
	nT    float64 // its amplitude over the axes, nT (peak)
}

// findSecondTone looks for the strongest line in the readings of s about
// res's strongest window between secondToneGuard/secondToneSpan and
// NuisanceSeparation(win) Hz either side of the signal at freq Hz (where
// it would pull the windows' frequency fits), other than the mains'
// harmonics, and returns it when the probe takes it as present
// (lineProbe.test: lineShare of the signal and lineSNR of its own sigma).
func (pl demodPlan) findSecondTone(s *ingest.Samples, res *calibrate.DemodResult, freq, win float64) (secondTone, bool) {
	guard := secondToneGuard / secondToneSpan
	reach := calibrate.NuisanceSeparation(win)
	if pl.fs > 0 {
		reach = math.Min(reach, 0.45*pl.fs-freq)
	}
	if reach <= guard {
		return secondTone{}, false
	}
	// The mains harmonics within reach, too near the signal for the
	// windows (MainsNuisance leaves them out), are fitted in the probe's
	// base: a strong one's spread would otherwise be taken for a tone
	// beside it (a 650 Hz line 5 Hz from a 645 Hz tracer was, at
	// 651.24 Hz).
	lp := pl.newLineProbe(s, res, freq, secondToneSpan, -1, pl.mainsWithin(freq, guard, reach+1)...)
	if lp == nil {
		return secondTone{}, false
	}
	// A coarse scan of the residual's amplitude (the projection onto a
	// cosine and sine, two points per 1/span), then the peak refined by
	// golden-section search within a step either side.
	step := 1 / (2 * secondToneSpan)
	best, bestAmp := 0.0, 0.0
	for d := guard; d <= reach; d += step {
		for _, f := range []float64{freq - d, freq + d} {
			if pl.nearMainsHarmonic(f) {
				continue
			}
			if a := lp.residualAmplitude(f); a > bestAmp {
				best, bestAmp = f, a
			}
		}
	}
	if bestAmp == 0 {
		return secondTone{}, false
	}
	lo, hi := best-step, best+step
	g := (math.Sqrt(5) - 1) / 2
	for i := 0; i < 20; i++ {
		a, b := hi-g*(hi-lo), lo+g*(hi-lo)
		if lp.residualAmplitude(a) > lp.residualAmplitude(b) {
			hi = b
		} else {
			lo = a
		}
	}
	f := (lo + hi) / 2
	if math.Abs(f-freq) < guard || pl.nearMainsHarmonic(f) {
		return secondTone{}, false
	}
	share, ok := lp.test(f)
	if !ok {
		return secondTone{}, false
	}
	return secondTone{freq: f, share: share, nT: share * lp.sig}, true
}

// mainsWithin returns the harmonics of 50 and 60 Hz and of pl.mains
// between lo and hi Hz from freq (either side), below 0.45 of the sample
// rate.
func (pl demodPlan) mainsWithin(freq, lo, hi float64) []float64 {
	var out []float64
	for _, m := range append([]float64{50, 60}, pl.mains...) {
		if !(m > 0) {
			continue
		}
		for h := math.Ceil((freq - hi) / m); h*m <= freq+hi; h++ {
			if d := math.Abs(h*m - freq); h >= 1 && d >= lo && (pl.fs == 0 || h*m < 0.45*pl.fs) {
				out = append(out, h*m)
			}
		}
	}
	return out
}

// nearMainsHarmonic reports whether f lies within secondToneMainsHz of a
// harmonic of 50 or 60 Hz or of a mains frequency fitted (pl.mains):
// those lines are the mains checks' (pull, clash, unfitted).
func (pl demodPlan) nearMainsHarmonic(f float64) bool {
	for _, m := range append([]float64{50, 60}, pl.mains...) {
		if m > 0 {
			if h := math.Round(f / m); h >= 1 && math.Abs(f-h*m) < secondToneMainsHz {
				return true
			}
		}
	}
	return false
}

// residualAmplitude is the amplitude over the axes, nT, of a tone at f Hz
// in the probe's residuals: each axis's projection onto cos and sin at f
// (not made orthogonal to the base; for the scan, away from the base's
// frequencies).
func (lp *lineProbe) residualAmplitude(f float64) float64 {
	var c, sn [3]float64
	for r, tau := range lp.tau {
		si, co := math.Sincos(2 * math.Pi * f * tau)
		for k := range lp.resid {
			c[k] += co * lp.resid[k][r]
			sn[k] += si * lp.resid[k][r]
		}
	}
	n := float64(len(lp.tau))
	var amp float64
	for k := range c {
		amp = math.Hypot(amp, 2*math.Hypot(c[k], sn[k])/n)
	}
	return amp
}

// toneWindow is the shortest window, s, in whole multiples of
// mainsWindowStep and no shorter than win, that fits a tone d Hz from the
// signal apart from it (calibrate.NuisanceSeparation).
func toneWindow(d, win float64) float64 {
	n := math.Ceil(2/(d*mainsWindowStep) - 1e-9)
	return math.Max(win, math.Round(n*mainsWindowStep*1e9)/1e9)
}

// withTone returns the plan with the tone at f Hz fitted beside the
// signal in every window (demodPlan.extra).
func (pl demodPlan) withTone(f float64) demodPlan {
	pl.extra = append(append([]float64(nil), pl.extra...), f)
	return pl
}

// secondToneWarning names the tone t beside the signal at freq Hz: what
// the frequency check did with it (checked is the window, s, in which it
// was fitted beside the signal; 0 when that check could not be made) and
// whether the demodulation in windows of win seconds fits it (fitted).
func secondToneWarning(t secondTone, freq, win, checked float64, fitted bool) string {
	d := math.Abs(t.freq - freq)
	share := fmt.Sprintf("%.0f%% of", 100*t.share)
	if t.share >= 1 {
		share = fmt.Sprintf("%.2g times", t.share)
	}
	w := fmt.Sprintf("a second tone at %.2f Hz, %.3g Hz from the %g Hz signal and not a mains line, is in the log (about %.3g nT, %s the signal's field where it was measured)", t.freq, d, freq, t.nT, share)
	switch {
	case checked > 0:
		w += fmt.Sprintf("; it would pull the windows' fitted frequencies towards it, so the frequency was checked in %.3g s windows with the tone fitted beside the signal", checked)
	default:
		w += "; it pulls the windows' fitted frequencies towards it, and no window of the log's runs fits it apart: the frequency is not checked, and the results assume the frequency given"
	}
	if fitted {
		w += fmt.Sprintf("; it is fitted beside the signal in the %.3g s windows", win)
	} else {
		w += fmt.Sprintf("; in %.3g s windows it is not fitted and leaks into the signal's phasors as noise (wider sigmas): use --window %.1f or longer to fit it apart", win, toneWindow(d, win))
	}
	return w
}
