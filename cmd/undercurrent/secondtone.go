package main

import (
	"fmt"
	"math"
	"strings"

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
	// secondTonePairRatio is the most by which the amplitudes of a line
	// and its mirror about the signal (2f - f_tone) may differ for the two
	// to be named the signal's own sidebands (its modulation: a
	// transmitter that keys, pulses or sweeps its output). A mirror is
	// fitted with the line whatever its amplitude: 0.6 A at 514 Hz and
	// 0.2 A at 510 Hz beside an 8 A, 512 Hz tracer, the 514 Hz line
	// fitted alone, read 512.0042 ± 0.0002 Hz.
	secondTonePairRatio = 2.0
)

// secondTone is a line found beside the signal.
type secondTone struct {
	freq  float64 // Hz, as the log shows it
	share float64 // its amplitude over the signal's in the probe
	nT    float64 // its amplitude over the axes, nT (peak)
	// mirror is the line at about 2f - freq, the other side of the
	// signal at f, when it is there too (fitted with the line, whatever
	// its amplitude); 0 when there is none. mirrorShare and mirrorNT are
	// its share and amplitude.
	mirror, mirrorShare, mirrorNT float64
	// evenMains names the even mains harmonic the line lies within
	// secondToneMainsHz of ("" for none): the mains checks know the odd
	// harmonics only.
	evenMains string
}

// sidebands reports whether t and its mirror are at like amplitudes
// (within secondTonePairRatio): the signal's own sidebands.
func (t secondTone) sidebands() bool {
	return t.mirror > 0 && t.mirrorShare*secondTonePairRatio >= t.share && t.share*secondTonePairRatio >= t.mirrorShare
}

// tones are the frequencies, Hz, of the line and of its mirror when
// there is one.
func (t secondTone) tones() []float64 {
	if t.mirror > 0 {
		return []float64{t.freq, t.mirror}
	}
	return []float64{t.freq}
}

// nearest is the least distance, Hz, of t's lines from freq.
func (t secondTone) nearest(freq float64) float64 {
	d := math.Abs(t.freq - freq)
	if t.mirror > 0 {
		d = math.Min(d, math.Abs(t.mirror-freq))
	}
	return d
}

// findSecondTone looks for the strongest line in the readings of s about
// res's strongest window between secondToneGuard/secondToneSpan and
// NuisanceSeparation(win) Hz either side of the signal at freq Hz (where
// it would pull the windows' frequency fits), other than the mains'
// harmonics, and returns it when the probe takes it as present
// (lineProbe.test: lineShare of the signal and lineSNR of its own sigma).
//
// The line's mirror about the signal (2·freq - its frequency) is then
// looked for with the line fitted in the probe's base: a tracer whose
// current is modulated shows a sideband either side of its carrier at
// like amplitudes, and fitting one alone left the other to pull the
// check's windows (8 A at 512 Hz with 0.6 A at 510 and 514 Hz on the same
// cable read 512.0189 ± 0.0003 Hz with the 514 Hz line fitted, and the
// run was demodulated there, its phases turning from traverse to
// traverse; found in review). A mirror seen (lineProbe.test) is returned
// with the line, and the two are fitted together; within
// secondTonePairRatio of each other's amplitude they are named sidebands.
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
	f := lp.peak(best, step)
	if math.Abs(f-freq) < guard || pl.nearMainsHarmonic(f) {
		return secondTone{}, false
	}
	share, ok := lp.test(f)
	if !ok {
		return secondTone{}, false
	}
	t := secondTone{freq: f, share: share, nT: share * lp.sig, evenMains: pl.evenMainsHarmonic(f)}
	m := 2*freq - f
	if m <= 0 || (pl.fs > 0 && m >= 0.45*pl.fs) || pl.nearMainsHarmonic(m) {
		return t, true
	}
	mp := pl.newLineProbe(s, res, freq, secondToneSpan, -1, append(pl.mainsWithin(freq, guard, reach+1), f)...)
	if mp == nil {
		return t, true
	}
	m = mp.peak(m, step)
	if math.Abs(m-freq) < guard || pl.nearMainsHarmonic(m) {
		return t, true
	}
	if ms, ok := mp.test(m); ok {
		t.mirror, t.mirrorShare, t.mirrorNT = m, ms, ms*mp.sig
	}
	return t, true
}

// peak is the frequency, Hz, of the largest residual amplitude within
// step Hz of f (golden-section search).
func (lp *lineProbe) peak(f, step float64) float64 {
	lo, hi := f-step, f+step
	g := (math.Sqrt(5) - 1) / 2
	for i := 0; i < 20; i++ {
		a, b := hi-g*(hi-lo), lo+g*(hi-lo)
		if lp.residualAmplitude(a) > lp.residualAmplitude(b) {
			hi = b
		} else {
			lo = a
		}
	}
	return (lo + hi) / 2
}

// mainsWithin returns the odd harmonics of 50 and 60 Hz and of pl.mains
// between lo and hi Hz from freq (either side), below 0.45 of the sample
// rate: the lines the mains checks hold (nearMainsHarmonic).
func (pl demodPlan) mainsWithin(freq, lo, hi float64) []float64 {
	var out []float64
	for _, m := range append([]float64{50, 60}, pl.mains...) {
		if !(m > 0) {
			continue
		}
		for h := math.Ceil((freq - hi) / m); h*m <= freq+hi; h++ {
			if d := math.Abs(h*m - freq); h >= 1 && math.Mod(h, 2) == 1 && d >= lo && (pl.fs == 0 || h*m < 0.45*pl.fs) {
				out = append(out, h*m)
			}
		}
	}
	return out
}

// nearMainsHarmonic reports whether f lies within secondToneMainsHz of an
// odd harmonic of 50 or 60 Hz or of a mains frequency fitted (pl.mains):
// those lines are the mains checks' (pull, clash, unfitted, all of which
// know the odd harmonics only, as calibrate.MainsNuisance fits them). An
// even harmonic is the second-tone check's: left to the mains checks, a
// 3 A 10th harmonic (500 Hz) 12 Hz from a 512 Hz tracer pulled the check
// to 511.953 Hz, and every traverse demodulated there read a pair 25
// times the noise off (found in review).
func (pl demodPlan) nearMainsHarmonic(f float64) bool {
	for _, m := range append([]float64{50, 60}, pl.mains...) {
		if m > 0 {
			if h := math.Round(f / m); h >= 1 && math.Mod(h, 2) == 1 && math.Abs(f-h*m) < secondToneMainsHz {
				return true
			}
		}
	}
	return false
}

// evenMainsHarmonic names the even harmonic of 50 or 60 Hz or of
// pl.mains within secondToneMainsHz of f ("the 10th harmonic of the
// 50 Hz mains"); "" when there is none.
func (pl demodPlan) evenMainsHarmonic(f float64) string {
	for _, m := range append([]float64{50, 60}, pl.mains...) {
		if m > 0 {
			if h := math.Round(f / m); h >= 2 && math.Mod(h, 2) == 0 && math.Abs(f-h*m) < secondToneMainsHz {
				return fmt.Sprintf("the %s of the %g Hz mains", harmonicName(h), m)
			}
		}
	}
	return ""
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

// withTone returns the plan with the tones at f Hz fitted beside the
// signal in every window (demodPlan.extra).
func (pl demodPlan) withTone(f ...float64) demodPlan {
	pl.extra = append(append([]float64(nil), pl.extra...), f...)
	return pl
}

// secondToneWarning names the tone t beside the signal at freq Hz: what
// the frequency check did with it (checked is the window, s, in which it
// was fitted beside the signal; 0 when that check could not be made) and
// whether the demodulation in windows of win seconds fits it (fitted).
func secondToneWarning(t secondTone, freq, win, checked float64, fitted bool) string {
	d := t.nearest(freq)
	shareOf := func(sh float64) string {
		if sh >= 1 {
			return fmt.Sprintf("%.2g times", sh)
		}
		return fmt.Sprintf("%.0f%% of", 100*sh)
	}
	pairShare := func(a, b float64) string {
		if a < 1 && b < 1 {
			return fmt.Sprintf("%.0f%% and %.0f%% of", 100*a, 100*b)
		}
		return fmt.Sprintf("%s and %s", strings.TrimSuffix(shareOf(a), " of"), shareOf(b))
	}
	pair := t.mirror > 0
	// it, pulls, is, leaks, them: the words for one line or for the pair.
	it, pulls, is, leaks, them := "it", "pulls", "it is", "leaks", "it"
	var w string
	if pair {
		it, pulls, is, leaks, them = "they", "pull", "they are", "leak", "them"
		// Lowest first.
		lo, hi, loNT, hiNT, loSh, hiSh := t.freq, t.mirror, t.nT, t.mirrorNT, t.share, t.mirrorShare
		if lo > hi {
			lo, hi, loNT, hiNT, loSh, hiSh = hi, lo, hiNT, loNT, hiSh, loSh
		}
		what := "a tone and a line of unlike amplitude at its mirror about the signal (unequal sidebands of the signal's modulation, or another source's line)"
		if t.sidebands() {
			what = "sidebands of the signal's own modulation (a transmitter that keys, pulses or sweeps its output)"
		}
		w = fmt.Sprintf("a pair of lines at %.2f and %.2f Hz, either side of the %g Hz signal (about %.3g and %.3g nT, %s the signal's field where it was measured), is in the log: %s, not a mains line, so the two are fitted together or not at all", lo, hi, freq, loNT, hiNT, pairShare(loSh, hiSh), what)
	} else {
		w = fmt.Sprintf("a second tone at %.2f Hz, %.3g Hz from the %g Hz signal and not a mains line, is in the log (about %.3g nT, %s the signal's field where it was measured)", t.freq, d, freq, t.nT, shareOf(t.share))
		if t.evenMains != "" {
			w = fmt.Sprintf("a line at %.2f Hz, %.3g Hz from the %g Hz signal, is in the log (about %.3g nT, %s the signal's field where it was measured): %s, an even harmonic, which the mains' fit beside the signal (odd harmonics only) does not take, so it is fitted as a second tone", t.freq, d, freq, t.nT, shareOf(t.share), t.evenMains)
		}
	}
	switch {
	case checked > 0:
		w += fmt.Sprintf("; %s would pull the windows' fitted frequencies towards %s, so the frequency was checked in %.3g s windows with %s fitted beside the signal", it, them, checked, them)
	default:
		w += fmt.Sprintf("; %s %s the windows' fitted frequencies towards %s, and no window of the log's runs fits %s apart: the frequency is not checked, and the results assume the frequency given", it, pulls, them, them)
	}
	if fitted {
		w += fmt.Sprintf("; %s fitted beside the signal in the %.3g s windows", is, win)
	} else {
		w += fmt.Sprintf("; in %.3g s windows %s not fitted and %s into the signal's phasors as noise (wider sigmas): use --window %.1f or longer to fit %s apart", win, is, leaks, toneWindow(d, win), them)
	}
	return w
}
