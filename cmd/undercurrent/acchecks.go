package main

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/report"
)

// AC demodulation for locate: the default window, and the check that the
// field's frequency is the one given.
//
// The default window. At the mains frequency (50 or 60 Hz) it is ten cycles,
// 0.2 s or 1/6 s, as calibrate's own default. At any other frequency (an
// injected tracer, a harmonic, a railway's 16.7 Hz) the mains field is
// usually far stronger than the signal, and a window that holds no whole
// number of mains cycles lets it leak into the signal's phasor: a 512 Hz
// fit over ten cycles (19.5 ms, about one mains cycle) read a 20 A cable's
// 50 Hz field as milliampere conductors a few centimetres under the
// sensors. So the default there is ten cycles of the signal or 0.1 s,
// whichever is longer, rounded up to a whole multiple of 0.1 s: whole
// cycles of 50 and 60 Hz and all their harmonics. Over whole cycles a mains
// tone is orthogonal to the fit's constant, and its overlap with the
// signal's sine and cosine is of order 1/(2π Δf T) (0.3% at 512 Hz in
// 0.1 s, which the fit sees as noise), against order one over a fraction
// of a cycle.
//
// The frequency check. Demodulating at --freq while the field runs at
// another frequency turns every window's phasor by 360° × Δf × t: a grid
// 0.1 Hz off nominal turns it 36° a second, so a traverse of a few seconds
// averages the cable's field away (half the current, a wrong depth, a large
// residual) while each window alone looks clean. After demodulating at
// --freq, locate demodulates the same windows again with the frequency
// fitted in each (calibrate's joint four-parameter fit of the three axes,
// with the signal's own harmonics fitted alongside) and combines the windows
// with a clear signal (estimateWindowFreq). When the estimate differs from
// --freq by more than freqCheckSigmas of its sigma and by enough to turn the
// phase more than freqCheckDegrees across the longest group, it
// demodulates at the estimate instead (in windows of the same whole number
// of cycles) and says so in a warning; from a log walked one way only it
// does so only beyond freqCheckUntrustedHz, and below that warns (see
// freqEstimate.trusted). Beyond a quarter of 1/window it refuses. An
// estimate that a line within the windows' separation may have pulled (a
// mains harmonic, or one folded from above Nyquist, seen
// in the log: lineProbe) is not acted on: the run stays at --freq and
// says why. An estimate not clearly off but too uncertain for one phase
// across a group (freqLooseDegrees) has every group's phase ramp searched
// for (freqHints), and is warned about when some group's fit cannot bound
// the turn (looseFreqWarning). Each group's own frequency is then
// checked against the one used (groupWander).
// Exact-frequency logs are demodulated exactly as before (the demo's
// results do not change).

const (
	// mainsWindowStep is the step of the default window away from the
	// mains frequency, s: whole cycles of 50 and 60 Hz.
	mainsWindowStep = 0.1
	// freqCheckSNR is the least |B|/sigma on a window's strongest axis for
	// its frequency estimate to count.
	freqCheckSNR = calibrate.WindowFreqSNR
	// freqCheckMinWindows is the fewest such windows for a check.
	freqCheckMinWindows = calibrate.WindowFreqMinWindows
	// freqCheckSigmas is how many of its sigmas the estimate must be off
	// --freq before locate acts on it.
	freqCheckSigmas = 5
	// freqCheckDegrees is the phase turn across the longest group that an
	// error in the frequency may cause before locate acts on it.
	freqCheckDegrees = 2
	// freqFailedShare is the share of the windows whose frequency fits may
	// fail (and are left out: calibrate.DemodSettings.SkipFailedFreq)
	// before locate says so.
	freqFailedShare = 0.1
	// freqLooseDegrees is the phase turn across the longest group that the
	// estimate's offset from --freq plus freqLooseSigmas of its sigma may
	// allow, when the offset itself is not significant, before locate says
	// the frequency is not known well enough for one phase per group and
	// searches every group for a phase ramp (freqHints.loose). An 8 kHz
	// tone 0.05 Hz off --freq at 200 nT reading noise read 8000.079 ±
	// 0.032 Hz from its windows, 2.5 sigmas off and so taken as 8000 Hz
	// with no word, while 0.05 Hz turned the phase 180° across each 10 s
	// traverse: every traverse became a phantom go-and-return pair, "sound"
	// (found in review).
	freqLooseDegrees = 15
	// freqLooseSigmas is how many of its sigmas the estimate may be off
	// for freqLooseDegrees, and how far beyond the offset the ramp search
	// may go then.
	freqLooseSigmas = 2
	// freqCheckUntrustedHz is the offset, Hz, beyond which an estimate
	// from windows all walked one way is taken as the grid's, not the
	// walk's (freqEstimate.trusted): over twice the largest the walk leaves
	// on a demo traverse (0.0055 Hz, a 20 A cable beside a 15 A one 135°
	// apart in phase).
	freqCheckUntrustedHz = 0.01
	// freqWalkSpreads is how many of the windows' spreads beyond their
	// noise (freqEstimate.spread) an estimate from windows all walked one
	// way must be off --freq before locate warns of it (below
	// freqCheckUntrustedHz). The walk's share left in the mean was 0.6 of
	// the spread (0.0012 of 0.0021 Hz) on a three-core circuit at exactly
	// 50 Hz walked one way (seed 1; TestOneWayThreeCoreExactFreq runs seeds
	// 1-3); a grid's offset is the same in every
	// window and adds no spread, so one cable walked one way keeps the
	// check at its sigma.
	freqWalkSpreads = 2
)

// defaultWindow is the demodulation window locate uses at freq Hz when
// --window is not given (see above).
func defaultWindow(freq float64) float64 {
	if isMains(freq) {
		return 10 / freq
	}
	w := math.Max(10/freq, mainsWindowStep)
	// Round up to the step, forgiving the rounding of 10/freq. The window
	// then holds a fraction of a cycle of the signal beyond whole ones
	// (10.02 cycles at 16.7 Hz), which the walking sensor's path-average
	// model does not cover: a small bias and at times a weak phantom line
	// (DEVELOPERS.md, known limits); whole signal cycles instead let the
	// mains leak in as worse phantoms beside a tracer.
	n := math.Ceil(w/mainsWindowStep - 1e-9)
	return math.Round(n*mainsWindowStep*1e9) / 1e9 // 0.6, not 0.6000000000000001
}

// freqEstimate is the field's frequency estimated from the windows.
type freqEstimate struct {
	freq, sigma float64
	windows     int // windows used
	// trusted is false when every window used was walked the same way: a
	// window's phase also turns as the sensor walks where conductors of
	// different phase overlap (by thousandths of a hertz in the demo's
	// traverses), the same way on every traverse walked the same way and
	// the opposite way on those walked back, so only a log walked both ways
	// (or standing still) cancels it.
	trusted bool
	// spread is the windows' scatter about the mean beyond their noise,
	// Hz (calibrate.WindowFreq.Spread). A grid's frequency is the same in every window, so on
	// a log walked one way the spread is the walk's share changing along
	// the traverses, and the share that is left in the mean is of its
	// order (see freqWalkSpreads).
	spread float64
}

// estimateWindowFreq combines the per-window frequencies of a
// demodulation with EstimateFreq in windows of window seconds
// (calibrate.CombineWindowFreqs), each way's cut of windows far off
// centred on that way's own median. Where conductors of different phase
// overlap, the phase of the field changes along a traverse, and a walking
// sensor's windows seem to run off the frequency by hundredths to tenths
// of a hertz, hundreds of their own sigmas, with the sign of the walking
// direction, so that the cut may keep a biased few (9 of 160 windows of a
// three-phase circuit at 50.05 Hz, 0.004 Hz off; 46 to 52, 0.003 Hz off,
// since the frequency-estimating fit takes the change of amplitude apart
// from the phase); the groups demodulated at such an estimate then search
// for a phase ramp with one line fewer as well (fitRamp), which takes up
// the rest. The estimate is trusted when it is the mean of windows walked
// both ways (cancelling the walking's share) or of windows standing still.
// ok is false when too few windows qualify.
func estimateWindowFreq(ws []calibrate.Window, window float64) (est freqEstimate, ok bool) {
	e, ok := calibrate.CombineWindowFreqs(ws, calibrate.CutAtOwnMedian)
	return freqEstimate{freq: e.Freq, sigma: e.Sigma, windows: e.Windows, trusted: e.BothWays || e.Still, spread: e.Spread}, ok
}

// windowSNR is a window's clearest signal: the largest |B|/sigma over its
// axes (0 when no axis has a sigma).
func windowSNR(w calibrate.Window) float64 {
	snr := 0.0
	for k := 0; k < 3; k++ {
		if w.Sigma[k] > 0 {
			snr = math.Max(snr, abs(w.B[k])/w.Sigma[k])
		}
	}
	return snr
}

// uncheckedWarning says why estimateWindowFreq found no frequency in the
// windows ws (fitted with the frequency) and that the results assume
// freq: fewer than freqCheckMinWindows windows with a clear signal
// (freqCheckSNR), or enough of them whose frequencies disagree, so that
// fewer than freqCheckMinWindows lie near their median (the cut in calibrate.CombineWindowFreqs). Before, the first reason was given for both: a
// three-phase circuit whose 160 windows all had a signal hundreds of
// times their noise was said to have too few clear windows (found in
// review).
func uncheckedWarning(ws []calibrate.Window, freq float64) string {
	clear := 0
	for _, w := range ws {
		if w.FreqSigma > 0 && !math.IsNaN(w.Freq) && windowSNR(w) >= freqCheckSNR {
			clear++
		}
	}
	if clear < freqCheckMinWindows {
		return fmt.Sprintf("the AC frequency could not be checked: fewer than %d windows have a clear signal (the field %d times its noise on some axis), for example with a stronger field at another frequency nearby; the results assume the field runs at exactly %g Hz", freqCheckMinWindows, freqCheckSNR, freq)
	}
	return fmt.Sprintf("the AC frequency could not be checked: %d of %d windows have a clear signal, but their fitted frequencies disagree far beyond their own uncertainties, and fewer than %d lie within 10 times their uncertainties of the median (as where conductors of different phase overlap and the phase turns as the sensor walks, or where the frequency hops); the results assume the field runs at exactly %g Hz", clear, len(ws), freqCheckMinWindows, freq)
}

func abs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// longestGroupSpan is the longest time, s, from the start of the first
// window of a group to the end of its last (the stretch over which one
// phase is fitted).
func longestGroupSpan(ws []calibrate.Window, window float64) float64 {
	lo, hi := map[string]float64{}, map[string]float64{}
	for _, w := range ws {
		if t, ok := lo[w.Group]; !ok || w.Time < t {
			lo[w.Group] = w.Time
		}
		if t, ok := hi[w.Group]; !ok || w.Time > t {
			hi[w.Group] = w.Time
		}
	}
	var span float64
	for g, t := range lo {
		span = math.Max(span, hi[g]-t+window)
	}
	return span
}

// freqDecimals is the number of decimals that shows sigma to one or two
// significant digits (at least two, at most six).
func freqDecimals(sigma float64) int {
	if !(sigma > 0) {
		return 2
	}
	d := int(math.Ceil(-math.Log10(sigma)))
	return min(6, max(2, d))
}

// isMains reports whether freq is a mains frequency, 50 or 60 Hz, or
// within the grid's tolerance of one (calibrate.NearMains: a cable
// surveyed at 50.05 Hz carries the mains).
func isMains(freq float64) bool {
	return calibrate.NearMains(freq, 50) || calibrate.NearMains(freq, 60)
}

// demodPlan holds what every demodulation of a log shares: the mains
// frequencies fitted as nuisance beside a signal that is not the mains
// (--mains), and the log's sample rate, Hz.
type demodPlan struct {
	mains []float64
	fs    float64
	// dec is the decimals the signal's frequency is shown with in the
	// mains warnings (clash, foldClash) when it is an estimate (those of
	// its sigma, freqDecimals); 0 for a frequency given, shown as given.
	dec int
	// leftOut holds the times of the readings that follow rows left out
	// as clipped (demodulateACLeftOut); nil for none.
	leftOut []float64
	// extra holds the frequencies, Hz, of tones found beside the signal
	// that are not the mains (secondTone), fitted beside it in every
	// window that can tell them apart from it.
	extra []float64
}

// signalHz shows the signal's frequency freq as pl's warnings do: as
// given, or, for an estimate, to its decimals (an estimate printed in
// full read "640.0554281726679 Hz"; found in review).
func (pl demodPlan) signalHz(freq float64) string {
	if pl.dec > 0 {
		return strconv.FormatFloat(freq, 'f', pl.dec, 64)
	}
	return strconv.FormatFloat(freq, 'g', -1, 64)
}

// settings returns the demodulation settings at freq in windows of win
// seconds, with harmonics h of freq fitted too (signalHarmonics): the
// mains and their odd harmonics are fitted alongside
// (calibrate.MainsNuisance) unless freq is a mains frequency, and every
// window takes a linear term (calibrate.DemodSettings.Drift): a sensor
// walked through a steady field's gradient (a DC conductor, a cathodic
// protection current, a magnetised pipe) sees it change linearly within
// the window, and with the constant alone the slope leaked into the
// phasors as an AC field proportional to the gradient, a go-and-return
// pair at the DC conductor (a 30 A DC line walked at 1 m/s read as a
// 50 Hz pair of 0.13 A·m on every traverse; found in review). Over ten
// cycles the term costs about 0.3% of the phasors' sigma.
func (pl demodPlan) settings(freq, win float64, h []int) *calibrate.DemodSettings {
	// PhaseChecked: locate checks the frequency and fits phase ramps
	// itself (checkFrequency, phaseramp.go), with warnings of its own.
	set := &calibrate.DemodSettings{Freq: freq, Window: win, Harmonics: h, Drift: true, PhaseChecked: true}
	if len(pl.leftOut) > 0 {
		set.LeftOut, set.LeftOutWhy, set.LeftOutFix = pl.leftOut, clippedGapWhy, clippedGapFix
	}
	if pl.fs > 0 && len(pl.mains) > 0 {
		set.Nuisance = calibrate.MainsNuisance(freq, win, pl.fs, pl.mains, h)
	}
	for _, f := range pl.extra {
		// Only where the window fits it apart from the signal and its
		// harmonics (calibrate.NuisanceSeparation) and from the mains
		// lines taken (1/win, as MainsNuisance).
		ok := math.Abs(f-freq) >= calibrate.NuisanceSeparation(win) && (pl.fs == 0 || f < 0.45*pl.fs)
		for _, k := range h {
			ok = ok && math.Abs(f-float64(k)*freq) >= calibrate.NuisanceSeparation(win)
		}
		for _, n := range set.Nuisance {
			ok = ok && math.Abs(f-n) >= 1/win
		}
		if ok {
			set.Nuisance = append(set.Nuisance, f)
		}
	}
	return set
}

// ownHarmonics are the harmonics of the signal fitted in every window
// (where demodPlan.signalHarmonics allows): a cable's current is rarely
// a pure sine (the 3rd and 5th harmonics of the loads' currents run to
// tens of percent of the fundamental on a low-voltage feeder), and a
// walked sensor sees a harmonic's field change within the window, which
// over whole cycles is not orthogonal to the fundamental's columns nor to
// the frequency's. Left out of the demodulation at --freq, a 20% 3rd
// harmonic set the frequency check off by 0.013 Hz (a false "frequency
// off or wandered" warning and phases turning 63° from group to group),
// and beside a second cable 120° apart it made the currents' sigmas 1.6
// to 2.7 times too small (found in review).
// The 2nd and 7th are fitted too: with only the 3rd and 5th, a 10% 2nd
// harmonic (a rectifier's, a saturating transformer's) read a 40 A
// cable's current 10 sigma low and put the frequency check 0.011 Hz off
// (a false "currents would read low" warning), and a 10% 7th its phase
// 5.5 sigma off (found in review); the 9th and above were clean.
var ownHarmonics = []int{2, 3, 5, 7}

// harmonicInflation is the most by which the signal's own harmonics,
// fitted beside it, may inflate the variance of its phasor over the fit
// without them (calibrate.ConditionedHarmonics) before signalHarmonics
// leaves them out. Over ten cycles they cost a percent or two; over two
// cycles or fewer the 2nd harmonic is nearly the fundamental's change
// across the window, and --window 0.03 at 50 Hz (1.5 cycles) with the
// 2nd, 3rd, 5th and 7th fitted read a walked 20 A cable ± 0.11 A with
// window residuals of 88 nT, where the 3rd and 5th alone (an inflation of
// 1.45) gave ± 0.0037 A and 2.9 nT, and nothing said so (found in review).
const harmonicInflation = 1.5

// signalHarmonics returns the harmonics of ownHarmonics fitted at freq
// in windows of win seconds: those below 0.45 of the sample rate (a
// harmonic at or above the Nyquist frequency cannot be fitted), apart
// from the mains lines fitted beside the signal (apart), and, taken in
// increasing order, each that with those kept before it inflates the
// variance of the fundamental's phasor by at most harmonicInflation over
// the fit without them. With a note saying which were left out and why
// ("" when none was).
func (pl demodPlan) signalHarmonics(freq, win float64) ([]int, string) {
	var cand []int
	for _, h := range pl.apart(freq, win, ownHarmonics) {
		if float64(h)*freq < 0.45*pl.fs {
			cand = append(cand, h)
		}
	}
	if len(cand) == 0 {
		return nil, ""
	}
	fit, err := calibrate.ConditionedHarmonics(pl.fs, pl.settings(freq, win, cand), harmonicInflation)
	if err != nil || len(fit.Keep) == len(cand) {
		// A basis singular without harmonics: the demodulation says why.
		return cand, ""
	}
	var out []int
	for _, h := range cand {
		if !slices.Contains(fit.Keep, h) {
			out = append(out, h)
		}
	}
	are, it, add := "is", "it", "adds"
	if len(out) > 1 {
		are, it, add = "are", "them", "add"
	}
	kept := "none is fitted"
	if len(fit.Keep) == 1 {
		kept = fmt.Sprintf("the %s is fitted (%.3g times)", harmonicsPhrase(fit.Keep), fit.Inflation)
	} else if len(fit.Keep) > 1 {
		kept = fmt.Sprintf("the %s are fitted (%.3g times)", harmonicsPhrase(fit.Keep), fit.Inflation)
	}
	longer := ""
	if w := pl.harmonicsWindow(freq, win, cand); w > 0 {
		all := "them all"
		if len(cand) == 1 {
			all = "it"
		}
		longer = fmt.Sprintf("; windows of %.3g s or longer fit %s", w, all)
	}
	// The cycles the window's samples hold, as the demodulation's own
	// warning counts them (0.045 s at 250 Hz holds 11 samples, 2.20
	// cycles of 50 Hz, not 2.25; the two warnings disagreed).
	cycles := win * freq
	if pl.fs > 0 {
		cycles = math.Round(win*pl.fs) / pl.fs * freq
	}
	all := fmt.Sprintf("the variance of the signal's phasor would be %.3g times that without harmonics", fit.All)
	if math.IsInf(fit.All, 0) || math.IsNaN(fit.All) {
		all = "the fit's columns would be singular"
	}
	return fit.Keep, fmt.Sprintf("in %.4g s windows (%.2f cycles of %g Hz) the signal's %s %s not fitted: over so few cycles the fit can hardly tell %s from the signal's own change across the window, and with the %s fitted %s; %s. A distorted current's %s then %s to the signal's noise%s",
		win, cycles, freq, harmonicsPhrase(out), are, it, harmonicsPhrase(cand), all, kept, harmonicsPhrase(out), add, longer)
}

// harmonicsPhrase names the harmonics h: "2nd harmonic", "3rd and 5th
// harmonics", "2nd, 3rd, 5th and 7th harmonics".
func harmonicsPhrase(h []int) string {
	names := make([]string, len(h))
	for i, k := range h {
		names[i] = strings.TrimSuffix(harmonicName(float64(k)), " harmonic")
	}
	switch len(names) {
	case 0:
		return "no harmonics"
	case 1:
		return names[0] + " harmonic"
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1] + " harmonics"
}

// harmonicsWindow is the shortest window, s, longer than win by whole
// quarter cycles of freq (up to ten cycles more), in which every harmonic
// of h is fitted: signalHarmonics' rule, and enough samples for the
// parameters each window then fits (windowFits). Advised on conditioning
// alone, 0.05 s windows at 250 Hz sampling were named for the 2nd
// harmonic of 50 Hz and then held 13 samples for its 12 parameters, too
// few, so the run left it out after all (found in review). 0 when no
// window fits them.
func (pl demodPlan) harmonicsWindow(freq, win float64, h []int) float64 {
	for j := 1; j <= 40; j++ {
		w := win + float64(j)*0.25/freq
		set := pl.settings(freq, w, h)
		if n, p := pl.windowFits(set); n < p+2 {
			continue
		}
		fit, err := calibrate.ConditionedHarmonics(pl.fs, set, harmonicInflation)
		if err == nil && len(fit.Keep) == len(h) {
			return w
		}
	}
	return 0
}

// windowFits returns the samples a window of set.Window holds at the
// plan's sample rate and the parameters calibrate.Demodulate fits in each
// window with set (its own count: the signal's cosine and sine and a
// constant, the background's change with Drift (calibrate.DriftColumns),
// the signal's change across the window unless ConstantAmplitude, and each
// harmonic and mains line with its change); Demodulate needs at least two samples more than
// parameters, to leave residuals to judge the fit by.
func (pl demodPlan) windowFits(set *calibrate.DemodSettings) (samples, params int) {
	h := len(set.Harmonics)
	samples = int(math.Round(set.Window * pl.fs))
	params = 3 + 2*h + calibrate.DriftColumns(set, samples, 1/pl.fs)
	perLine := 2
	if !set.ConstantAmplitude {
		params += 4 + 2*h
		perLine = 4
	}
	params += perLine * len(set.Nuisance)
	return samples, params
}

// demodulate demodulates s at freq in windows of win seconds with the
// signal's harmonics h fitted (settings), or, should that fail (a basis
// too large for the window's samples), without them, with a warning
// saying so (before, nothing was said) and, where the window holds too
// few samples for them, how long a window fits them (harmonicsWindow).
func (pl demodPlan) demodulate(s *ingest.Samples, freq, win float64, h []int) (*calibrate.DemodResult, error) {
	res, err := calibrate.Demodulate(s, pl.settings(freq, win, h))
	if err != nil && len(h) > 0 {
		if r2, err2 := calibrate.Demodulate(s, pl.settings(freq, win, nil)); err2 == nil {
			are, it, add := "is", "it", "adds"
			if len(h) > 1 {
				are, it, add = "are", "them", "add"
			}
			why := "the fit failed with " + it
			if n, p := pl.windowFits(pl.settings(freq, win, h)); pl.fs > 0 && n < p+2 {
				why = fmt.Sprintf("the %d samples a window holds at %.4g Hz sampling are too few for the %d parameters fitted with %s (%d at least)", n, pl.fs, p, it, p+2)
			}
			longer := ""
			if w := pl.harmonicsWindow(freq, win, h); w > 0 {
				longer = fmt.Sprintf("; windows of %.3g s or longer fit %s", w, it)
			}
			r2.Warnings = append(r2.Warnings, fmt.Sprintf("in %.4g s windows the signal's %s %s not fitted: %s. A distorted current's %s then %s to the signal's noise%s",
				win, harmonicsPhrase(h), are, why, harmonicsPhrase(h), add, longer))
			return r2, nil
		}
	}
	return res, err
}

// defaultInflation is the most by which the default window lets the
// variance of the signal's phasor exceed that of a well-spread window
// (calibrate.ConditionedWindow) before conditioned lengthens it; the
// demodulation itself refuses only beyond calibrate.MaxWindowInflation.
// At sample rates just above twice the frequency a window of ten cycles
// spans less than a beat 1/(fs - 2f), and its fit, though not refused,
// still read a 60 Hz field sampled at 128 Hz (an inflation of 61) 7 sigma
// off in frequency, and 50 Hz at 107 Hz (24) the same (found in review).
const defaultInflation = 1.5

// conditioned returns the default window win at freq, lengthened to the
// shortest whole multiple of it in which the signal's phasor is well
// conditioned at the log's sample rate (defaultInflation), with a warning
// saying so ("" when win stays), where the window spans fewer than
// nyquistCheckBeats beats 1/|fs - 2f|. The window counts as lengthened
// only when it becomes a larger multiple: calibrate.ConditionedWindow
// returns the window as the log's sampling rounds it, and a 0.1 s window
// at 4999.2 Hz (a 5 kHz logger's rate read from its stamps), 0.100016 s,
// had been warned about as "lengthened to 0.1 s" (found in review).
func (pl demodPlan) conditioned(freq, win float64) (float64, string) {
	beat := math.Abs(pl.fs - 2*freq)
	if !(pl.fs > 0) || beat*win >= nyquistCheckBeats {
		// Far from twice the frequency: the window spans several beats
		// and is well spread (50 Hz in 0.2 s has an inflation of 1.07 at
		// 115 Hz, 3 beats, and 1.03 at 120 Hz, 4; at 110 Hz, 2 beats,
		// 1.87). Before, the check ran whenever the 7th harmonic reached
		// 0.45 of the sample rate, and said "close to twice" at 512 Hz
		// sampled at 5 kHz (found in review).
		return win, ""
	}
	h, _ := pl.signalHarmonics(freq, win)
	w, inf, err := calibrate.ConditionedWindow(pl.fs, pl.settings(freq, win, h), defaultInflation)
	if err != nil || !longerMultiple(w, win) {
		return win, ""
	}
	// The harmonics fitted may change with the window (they must lie apart
	// from the mains lines fitted beside a tracer): check the window found
	// with its own.
	h, _ = pl.signalHarmonics(freq, w)
	if w2, inf2, err := calibrate.ConditionedWindow(pl.fs, pl.settings(freq, w, h), defaultInflation); err == nil && longerMultiple(w2, w) {
		w, inf = w2, inf2
	}
	return w, fmt.Sprintf("the %.5g Hz sampling is close to twice the %g Hz signal: in the default %.4g s windows the signal's sine and cosine, alternating in sign from sample to sample under an envelope that turns once every %.3g s, could hardly be told from their change across the window, so the windows are lengthened to %.4g s (the signal's variance %.2g times that of a well-spread window); give --window to choose another",
		pl.fs, freq, win, 1/beat, w, inf)
}

// longerMultiple reports whether the window w (as the sampling rounds it)
// is a whole multiple of win of two or more, not win itself rounded.
func longerMultiple(w, win float64) bool {
	return w > 1.5*win
}

// nyquistCheckBeats is the number of beats 1/|fs - 2f| below which the
// default window is checked for its conditioning (conditioned). The
// frequency check itself acts near twice the frequency as anywhere else:
// the frequency-estimating fit takes the linear and quadratic change of
// the fundamental's amplitude (calibrate's slope model), which sampled
// there had leaked a walked sensor's change of amplitude into each
// window's frequency (single 50 Hz cables at exact frequency, walked at
// 1 m/s, read 50.0067 ± 0.0001 Hz at 102 Hz in 1 s windows, 0.001-0.005 Hz
// off at 103-128 Hz), and the check had acted there only beyond
// freqCheckUntrustedHz (found in review).
const nyquistCheckBeats = 4

// maxMainsHarmonic is the highest harmonic of the mains that a --freq on
// it is worded as (mainsHarmonic): harmonic limits and measurements of
// supply currents run to the 40th or the 50th (the IEC 61000 series, from
// memory); a tracer at 8 kHz, the 160th of 50 Hz, is no mains harmonic.
const maxMainsHarmonic = 50

// mainsHarmonic reports whether freq is the k-th harmonic (2 <= k <=
// maxMainsHarmonic) of a mains frequency m of pl.mains, to 1e-9 of freq
// (as clash takes a signal on a mains line): an AC run there reads the
// supply's harmonic currents, not a tracer's. Where freq is a harmonic of
// both 50 and 60 Hz (300 Hz: the 6th of 50, the 5th of 60) an odd harmonic
// is preferred (odd harmonics are the ones a supply carries; even ones
// cancel in a current of half-wave symmetry), then the first of pl.mains.
func (pl demodPlan) mainsHarmonic(freq float64) (k int, m float64, ok bool) {
	for _, mm := range pl.mains {
		if !(mm > 0) {
			continue
		}
		kk := math.Round(freq / mm)
		if kk < 2 || kk > maxMainsHarmonic || math.Abs(freq-kk*mm) >= 1e-9*freq {
			continue
		}
		if !ok || k%2 == 0 && int(kk)%2 == 1 {
			k, m, ok = int(kk), mm, true
		}
	}
	return k, m, ok
}

// nearestMains returns the odd harmonic h of the mains frequency m (of
// pl.mains, below 0.45 of the sample rate) nearest f; false with no mains.
func (pl demodPlan) nearestMains(f float64) (h, m float64, ok bool) {
	best := math.Inf(1)
	for _, mm := range pl.mains {
		for hh := 1.0; hh*mm < 0.45*pl.fs || hh == 1; hh += 2 {
			if d := math.Abs(f - hh*mm); d < best {
				best, h, m, ok = d, hh, mm, true
			}
		}
	}
	return h, m, ok
}

// clash warns when the signal at freq lies on a mains line, or closer to
// one than windows of win seconds can fit apart
// (calibrate.NuisanceSeparation): that line is not fitted and leaks into
// the signal. "" when it does not, freq is itself a mains frequency or no
// mains are fitted. (A harmonic folded from above the Nyquist frequency:
// foldClash.) The window it advises also fits the line apart without
// leaking should it be strong in the log s beside the windows res
// (advisedWindow; s and res may be nil).
func (pl demodPlan) clash(s *ingest.Samples, res *calibrate.DemodResult, freq, win float64) string {
	if calibrate.MainsNuisance(freq, win, pl.fs, pl.mains, nil) == nil {
		return ""
	}
	if k, m, ok := pl.mainsHarmonic(freq); ok {
		return pl.harmonicWords(freq, k, m)
	}
	sep := calibrate.NuisanceSeparation(win)
	if h, m, ok := pl.nearestMains(freq); ok {
		d := math.Abs(freq - h*m)
		switch {
		case d < 1e-9*freq:
			return fmt.Sprintf("the signal's %s Hz is the %s of the %g Hz mains: a mains field there and the signal cannot be told apart, and its current will be read as the signal's; choose another frequency for the tracer if a mains field is near", pl.signalHz(freq), harmonicName(h), m)
		case d < sep:
			var share float64
			if s != nil {
				if sh, seen := pl.lineNear(s, res, h*m, freq); seen {
					share = sh
				}
			}
			return fmt.Sprintf("the signal's %s Hz lies %.3g Hz from the %s of the %g Hz mains (%g Hz), closer than %.3g s windows can fit apart (%.3g Hz): a mains field there is not fitted and leaks into the signal as noise or phantom conductors; use --window %.1f or longer",
				pl.signalHz(freq), d, harmonicName(h), m, h*m, win, sep, advisedWindow(freq, d, share))
		}
	}
	return ""
}

// harmonicWords says what an AC run at freq, the k-th harmonic of the
// mains at m Hz (mainsHarmonic), reads: the supply's harmonic currents in
// the conductors, which a tracer at freq could not be told from. Before,
// it was worded for a tracer only ("choose another frequency for the
// tracer"), on a run whose 150 Hz was the neutral's triplen current (found
// in review). How a harmonic's currents sum over three phases follows from
// its order: the k-th harmonic of a phase at angle a runs at k·a, so with
// phases 120° apart the triplens (k a multiple of 3) are in phase on all
// three and add in the neutral, k = 3n+1 keep the supply's phase sequence
// and k = 3n+2 reverse it, both cancelling in the neutral as far as the
// phases balance (the symmetrical components of harmonics: common
// power-quality practice).
func (pl demodPlan) harmonicWords(freq float64, k int, m float64) string {
	name := harmonicName(float64(k))
	var seq string
	switch k % 3 {
	case 0:
		seq = fmt.Sprintf("the %s is a triplen (a multiple of the 3rd): the three phases' currents at it are in phase, so they add in the neutral (three times a phase's where the phases carry alike) instead of cancelling", name)
	case 1:
		seq = fmt.Sprintf("the %s's currents on the three phases keep the supply's phase sequence, and cancel in the neutral as far as the phases balance", name)
	default:
		seq = fmt.Sprintf("the %s's currents on the three phases run in the reverse phase sequence, and cancel in the neutral as far as the phases balance", name)
	}
	return fmt.Sprintf("the signal's %s Hz is the %s of the %g Hz mains: the currents read are the supply's %s currents in the conductors (RMS, their phases against each other), not a tracer's, and a tracer at this frequency could not be told from them; in a three-phase circuit %s",
		pl.signalHz(freq), name, m, name, seq)
}

// foldClash warns when a mains odd harmonic above the Nyquist frequency
// folds (foldedMains) to within the separation of windows of win seconds
// of the signal at freq, and a line is seen there in the log s
// (lineNear, beside the windows res): not fitted, it leaks into the
// signal and pulls its frequency check. At 1160 Hz sampling the 650 Hz
// 13th harmonic of 50 Hz folds to 510 Hz, 2 Hz from a 512 Hz tracer; it
// pulled the check to 511.974 Hz with nothing said (found in review).
// Unlike a harmonic below Nyquist (clash), a folded one is named only
// when seen: at the common rates many fold near any tone (at 2 kHz the
// 25th harmonic of 60 Hz folds to 500 Hz), and most loggers filter them
// out before sampling. "" when none is, or no mains are fitted.
func (pl demodPlan) foldClash(s *ingest.Samples, res *calibrate.DemodResult, freq, win float64) string {
	if calibrate.MainsNuisance(freq, win, pl.fs, pl.mains, nil) == nil {
		return ""
	}
	sep := calibrate.NuisanceSeparation(win)
	h, m, a, ok := pl.foldedMains(freq, sep)
	if !ok {
		return ""
	}
	share, seen := pl.lineNear(s, res, a, freq)
	if !seen {
		return ""
	}
	d := math.Abs(freq - a)
	how := fmt.Sprintf("; log at another rate, or through an anti-alias filter, or use --window %.1f or longer", advisedWindow(freq, d, share))
	if d < 1e-9*freq {
		how = "; log at another rate, or through an anti-alias filter"
	}
	return fmt.Sprintf("at the log's %.5g Hz sampling the %s of the %g Hz mains (%g Hz), above the Nyquist frequency, folds to %.4g Hz, %.3g Hz from the signal's %s Hz, closer than %.3g s windows can fit apart (%.3g Hz), and a line is there (%.2g times the signal where it is strongest): it is not fitted, leaks into the signal as noise or phantom conductors, and pulls the frequency check%s",
		pl.fs, harmonicName(h), m, h*m, a, d, pl.signalHz(freq), win, sep, share, how)
}

// advisedWindow is the window, s, rounded up to 0.1 s, in which a mains
// line d Hz from the signal and share times as strong (lineNear; 0 when
// not measured) is fitted apart from it (calibrate.NuisanceSeparation)
// without leaking into it (strongSeparation): the one window every mains
// warning advises. Before, the clash at the default window advised 1.0 s
// for a 150 Hz line 2 Hz from a 152 Hz tracer, where that line, 8.9 times
// the signal, biased every group; and the frequency check's warning
// advised 16.9 s from the distance to the estimate it had pulled (found
// in review). Of the windows up to 5 s longer, the first that also holds
// whole cycles of the signal at freq Hz is taken (the walked sensor's path
// average is modelled over whole cycles: 1.8 s at 152 Hz, 273.6 cycles,
// left a misfit of 10 times the noise that 2.0 s did not); when none does,
// the shortest.
func advisedWindow(freq, d, share float64) float64 {
	n := math.Ceil(10*strongSeparation(share)/d - 1e-9)
	for k := n; k <= n+50; k++ {
		if c := k / 10 * freq; math.Abs(c-math.Round(c)) < 1e-6*c {
			return k / 10
		}
	}
	return n / 10
}

// strongSeparation is the distance times the window, d·T, at which a
// mains line share times as strong as the signal is fitted beside it
// without leaking into it: calibrate.NuisanceSeparation's 2 for a line no
// stronger than the signal, 2·√share for a stronger one. A fitted line's
// field changes as the sensor walks, and what its columns (the line and
// its linear change) leave of that change overlaps the signal's by an
// amount that falls as the windows grow and the two part (as 1/(d·T)² for
// the curvature a window leaves), and grows with the line's strength, so a
// line share times stronger needs √share the separation for the same
// leak. A 152 Hz tracer (2 A) beside a fitted 150 Hz line 8.9 times as
// strong (a 12 A 3rd harmonic of a feeder 2.5 m away), walked at 0.25 m/s
// at 1000 Hz: in 1.0 and 1.5 s windows (d·T 2 and 3) the currents and
// depths read 3 to 5 sigma off and a 5 mA phantom conductor lay on the
// feeder in every group, all sound; in 2.0, 2.5 and 3.0 s windows the
// pulls stayed within ±1.4 and no phantom was fitted (seed 1); 3.0 s is
// what the rule asks (d·T ≥ 6.0).
func strongSeparation(share float64) float64 {
	return calibrate.NuisanceSeparation(1) * math.Sqrt(math.Max(1, share))
}

// strongReach is the most separations (calibrate.NuisanceSeparation) a
// fitted mains line may lie from the signal for strongLine to measure
// it: within that a strong line may leak (strongSeparation asks 3 for a
// line 9 times the signal); farther, the check is not made, so that a
// strong 50 Hz field 78 Hz from a 128 Hz tracer in 0.1 s windows (d·T 7.8)
// is not measured at every run.
const strongReach = 3

// strongLine checks the mains lines fitted beside the signal in the
// windows res of the log s (res.Nuisance, at res.Freq in res.Window s
// windows) for one too strong for its distance (strongSeparation): it
// returns a warning naming the line, its strength and the window that
// fits it apart (or, when the longest group is shorter than that window,
// that no window fits), and the problem that keeps the log's groups from
// counting as sound; "" for both when every line is far enough apart for
// its strength.
func (pl demodPlan) strongLine(s *ingest.Samples, res *calibrate.DemodResult) (warning, problem string) {
	if res == nil || len(res.Windows) == 0 || !(pl.fs > 0) {
		return "", ""
	}
	win, freq := res.Window, res.Freq
	var at, dist, share, need float64
	for _, f := range res.Nuisance {
		d := math.Abs(f - freq)
		if d*win >= strongReach*calibrate.NuisanceSeparation(1) {
			continue
		}
		sh, seen := pl.lineNear(s, res, f, freq)
		if !seen || d*win >= strongSeparation(sh) {
			continue
		}
		if w := advisedWindow(freq, d, sh); w > need {
			at, dist, share, need = f, d, sh, w
		}
	}
	if need == 0 {
		return "", ""
	}
	h, m, _ := pl.nearestMains(at)
	name := fmt.Sprintf("the %s of the %g Hz mains (%g Hz)", harmonicName(h), m, at)
	span := longestGroupSpan(res.Windows, win)
	advice := fmt.Sprintf("use --window %.1f or longer", need)
	if need > span {
		advice = fmt.Sprintf("no window fits: that needs windows of %.1f s, and the longest group spans %.3g s; walk the traverses more slowly or log longer ones, or move the tracer farther from the mains harmonics", need, span)
	}
	hz := pl.signalHz(freq)
	if pl.dec == 0 {
		hz = strconv.FormatFloat(freq, 'g', 7, 64) // an estimate, in full, read 152.01139378898887
	}
	warning = fmt.Sprintf("%s, fitted beside the signal, lies %.3g Hz from the signal's %s Hz and is %.2g times as strong where the signal is strongest: in %.4g s windows (%.2g times 1/window apart) what its columns leave of its field's change as the sensor walks leaks into the signal (currents and depths off by several sigma, and a phantom conductor where the mains cable lies, in groups that look sound); a line that strong is fitted apart at %.2g times 1/window or more; %s",
		name, dist, hz, share, win, dist*win, strongSeparation(share), advice)
	problem = fmt.Sprintf("a mains line %.2g times the signal lies %.3g Hz from it, too near for %.4g s windows (see the warnings)", share, dist, win)
	return warning, problem
}

// foldedMainsOrder is the highest order of the mains' odd harmonics that
// foldedMains folds: the 50th order is as far as the harmonic limits of
// IEC 61000-3-2 and the measurements of IEC 61000-4-7 reach (from
// memory).
const foldedMainsOrder = 49

// foldedMains returns the odd harmonic h of a mains frequency m (of
// pl.mains), at or above 0.45 of the sample rate (those below are fitted
// or named as they are) and up to foldedMainsOrder, whose alias a in the
// log, |h·m - k·fs| folded into [0, fs/2], lies nearest f, when within sep
// Hz of it; false when none does.
func (pl demodPlan) foldedMains(f, sep float64) (h, m, a float64, ok bool) {
	if !(pl.fs > 0) {
		return 0, 0, 0, false
	}
	best := sep
	for _, mm := range pl.mains {
		for hh := 1.0; hh <= foldedMainsOrder; hh += 2 {
			if hh*mm < 0.45*pl.fs {
				continue
			}
			al := math.Mod(hh*mm, pl.fs)
			if al > pl.fs/2 {
				al = pl.fs - al
			}
			if pl.onMainsLine(al, sep) {
				// A line seen there is (most likely) the mains harmonic
				// below the Nyquist frequency: clash names it, or it is
				// fitted.
				continue
			}
			if d := math.Abs(f - al); d < best {
				best, h, m, a, ok = d, hh, mm, al, true
			}
		}
	}
	return h, m, a, ok
}

// onMainsLine reports whether f lies within sep Hz of an odd harmonic of
// a mains frequency of pl below 0.45 of the sample rate. A harmonic
// folded there from above the Nyquist frequency cannot be told in the log
// from that line: at exactly 1000 Hz sampling the 37th harmonic of 50 Hz
// folds onto the 3rd, and a line seen there had been blamed on the 37th,
// with advice to re-log through an anti-alias filter, beside a strong
// 150 Hz field (found in review).
func (pl demodPlan) onMainsLine(f, sep float64) bool {
	h, m, ok := pl.nearestMains(f)
	return ok && h*m < 0.45*pl.fs && math.Abs(f-h*m) < sep
}

// pull returns the mains line (a harmonic, or one folded from above the
// Nyquist frequency) that lies within the separation of windows of win
// seconds of freq, and is seen in the log s beside the signal at signal
// Hz (lineNear, near res's strongest window), and so pulls a window's
// fitted frequency towards it: its frequency in the log, Hz, and its
// name; ok false when none does (or no mains are fitted).
func (pl demodPlan) pull(s *ingest.Samples, res *calibrate.DemodResult, freq, signal, win float64) (at float64, name string, ok bool) {
	if calibrate.MainsNuisance(freq, win, pl.fs, pl.mains, nil) == nil {
		return 0, "", false
	}
	sep := calibrate.NuisanceSeparation(win)
	// A line fitted beside the signal but too strong for its distance
	// (strongSeparation) pulls as well: at 1.5 s windows a 150 Hz line 3.3
	// times a 152 Hz tracer, 2 Hz off and so fitted, put the estimate at
	// 152.011 ± 0.002 Hz, and the run was demodulated there (found in
	// review).
	if h, m, ok := pl.nearestMains(freq); ok && math.Abs(freq-h*m) < strongReach*sep {
		if share, seen := pl.lineNear(s, res, h*m, signal); seen && math.Abs(freq-h*m)*win < strongSeparation(share) {
			return h * m, fmt.Sprintf("the %s of the %g Hz mains (%g Hz)", harmonicName(h), m, h*m), true
		}
	}
	if h, m, a, ok := pl.foldedMains(freq, sep); ok {
		if _, seen := pl.lineNear(s, res, a, signal); seen {
			return a, fmt.Sprintf("the %s of the %g Hz mains (%g Hz, folded to %.4g Hz at the log's %.5g Hz sampling)", harmonicName(h), m, h*m, a, pl.fs), true
		}
	}
	return 0, "", false
}

// apart returns the harmonics of h whose frequencies (times freq) lie at
// least calibrate.NuisanceSeparation from every odd mains harmonic; all
// of h when no mains are fitted beside freq (freq is itself a mains
// frequency, whose harmonics are the mains' own).
func (pl demodPlan) apart(freq, win float64, h []int) []int {
	if calibrate.MainsNuisance(freq, win, pl.fs, pl.mains, nil) == nil {
		return h
	}
	var out []int
	for _, k := range h {
		hh, m, ok := pl.nearestMains(float64(k) * freq)
		if !ok || math.Abs(float64(k)*freq-hh*m) >= calibrate.NuisanceSeparation(win) {
			out = append(out, k)
		}
	}
	return out
}

// unfitted warns when a mains frequency (50 or 60 Hz) that --mains leaves
// out is strong in the log beside a signal at freq: a sine fit over the
// log's first second at it, against one at freq, finds it stronger than
// the signal and well above the fit's residual. Beside a tracer an
// unfitted mains field leaks in: --mains 60 on a 50 Hz site left the
// windows' residual at 13 times the reading noise with every fit "sound"
// (found in review). "" when none is, or freq is itself a mains frequency.
func (pl demodPlan) unfitted(s *ingest.Samples, freq float64) string {
	if isMains(freq) || !(pl.fs > 0) {
		return ""
	}
	n := min(s.Len(), int(pl.fs)+1)
	if n < 64 {
		return ""
	}
	t := s.Time[:n]
	amp := func(f float64) (a, noise float64) {
		if f >= 0.45*pl.fs {
			return 0, 0
		}
		for _, col := range [][]float64{s.Bx[:n], s.By[:n], s.Bz[:n]} {
			fit, err := calibrate.FitSine(t, col, f, &calibrate.SineSettings{Drift: true})
			if err != nil {
				return 0, 0
			}
			a = math.Hypot(a, fit.Amplitude())
			noise = math.Hypot(noise, fit.Sigma)
		}
		return a, noise
	}
	sig, _ := amp(freq)
	for _, m := range []float64{50, 60} {
		if slices.Contains(pl.mains, m) || math.Abs(m-freq) < 2 {
			continue
		}
		a, noise := amp(m)
		if a > sig && a > 20*noise/math.Sqrt(float64(n)) {
			have := "none"
			if len(pl.mains) > 0 {
				parts := make([]string, len(pl.mains))
				for i, v := range pl.mains {
					parts[i] = strconv.FormatFloat(v, 'g', -1, 64)
				}
				have = strings.Join(parts, ",")
			}
			return fmt.Sprintf("a %g Hz field of %.3g nT peak is in the log, stronger than the %.7g Hz signal, but --mains %s does not fit it: it leaks into the signal as noise; give --mains %g (or 50,60)", m, a, freq, have, m)
		}
	}
	return ""
}

// freqCheckWindows is about the most windows the frequency check fits: on
// a longer log it takes every k-th window (checkStep). The check's sigma
// grows as 1/sqrt of the windows taken, from a fraction of a millihertz,
// while its cost (a frequency fit per window, the slow part of an AC run
// beside the mains) stays bounded.
const freqCheckWindows = 1500

// checkStep is the hop, s, between the windows the frequency check fits
// when the log holds n windows of win seconds: win (every window) up to
// freqCheckWindows, then the multiple of win that takes about that many.
func checkStep(n int, win float64) float64 {
	k := (n + freqCheckWindows - 1) / freqCheckWindows
	return float64(max(k, 1)) * win
}

// harmonicName names harmonic h: "fundamental", "3rd harmonic", ...
func harmonicName(h float64) string {
	switch h {
	case 1:
		return "fundamental"
	case 2:
		return "2nd harmonic"
	case 3:
		return "3rd harmonic"
	}
	return fmt.Sprintf("%gth harmonic", h)
}

// logRate is the sample rate of s, Hz: the steps of the longest steady
// run of readings (each within rateRunTolerance of the median positive
// time step among the first 4096) over the run's span; 0 when there is
// no step. The median step alone is one interval as the stamps write it:
// whole-microsecond stamps at exactly 1000 Hz, held as seconds since the
// epoch (a float's spacing there is 0.24 µs), stepped 999.92 or 1000.17
// µs, and the median read 1000.08 Hz (1300.2 Hz for a 1300 Hz log), which
// put a folded mains harmonic's alias 1.86 Hz from a 152 Hz tracer instead
// of on the fitted 150 Hz line and blamed a 37th harmonic that was not
// there (found in review). Over a run of n steps the span's own rounding
// is shared by all n.
func logRate(s *ingest.Samples) float64 {
	var d []float64
	for i := 1; i < len(s.Time) && len(d) < 4096; i++ {
		if st := s.Time[i] - s.Time[i-1]; st > 0 {
			d = append(d, st)
		}
	}
	if len(d) == 0 {
		return 0
	}
	sort.Float64s(d)
	med := d[len(d)/2]
	best, span, start := 0, 0.0, 0
	for i := 1; i <= len(s.Time); i++ {
		if i < len(s.Time) && math.Abs(s.Time[i]-s.Time[i-1]-med) <= rateRunTolerance*med {
			continue
		}
		if n := i - 1 - start; n > best && s.Time[i-1] > s.Time[start] {
			best, span = n, s.Time[i-1]-s.Time[start]
		}
		start = i
	}
	if best < 2 {
		return 1 / med
	}
	return float64(best) / span
}

// rateRunTolerance is how far, as a share of the median step, a step may
// be from it and still continue a steady run (logRate): the stamps'
// rounding and a clock's jitter stay well within it, a pause or a
// repeated stamp does not.
const rateRunTolerance = 0.25

// demodulateAC demodulates s at o.freq with o.window (or defaultWindow),
// checks the field's frequency against o.freq and, when it is off (see
// above), demodulates at the estimate. It returns the result, the window
// used, the warnings to report (without the log's name) and the offsets of
// the groups whose own frequency differs (wanderHints).
func demodulateAC(o *locateOptions, s *ingest.Samples) (*calibrate.DemodResult, float64, []string, freqHints, error) {
	return demodulateACLeftOut(o, s, nil)
}

// demodulateACLeftOut is demodulateAC for a log some of whose rows were
// left out as clipped at the sensor's range (clipped.go): leftOut holds
// the times of the rows that follow them, whose gaps the warning of
// windows lost names as such (calibrate.DemodSettings.LeftOut).
func demodulateACLeftOut(o *locateOptions, s *ingest.Samples, leftOut []float64) (*calibrate.DemodResult, float64, []string, freqHints, error) {
	win := o.window
	pl := demodPlan{mains: o.mains, fs: logRate(s), leftOut: leftOut}
	var lengthened string
	if win == 0 {
		win = defaultWindow(o.freq)
		win, lengthened = pl.conditioned(o.freq, win)
	}
	harm, dropped := pl.signalHarmonics(o.freq, win)
	res, err := pl.demodulate(s, o.freq, win, harm)
	if err != nil {
		var ill *calibrate.IllConditionedError
		if errors.As(err, &ill) && ill.Suggest > 0 {
			err = fmt.Errorf("%w (--window %g)", err, math.Ceil(ill.Suggest*1000-1e-6)/1000)
		}
		return nil, 0, nil, freqHints{}, err
	}
	// A second tone beside the signal, not the mains (secondtone.go),
	// looked for before the frequency check, which fits it (below).
	tone, hasTone := pl.findSecondTone(s, res, o.freq, win)
	if dropped != "" {
		res.Warnings = append([]string{dropped}, res.Warnings...)
	}
	if lengthened != "" {
		res.Warnings = append([]string{lengthened}, res.Warnings...)
	}
	if w := pl.clash(s, res, o.freq, win); w != "" {
		res.Warnings = append([]string{w}, res.Warnings...)
	}
	if w := pl.foldClash(s, res, o.freq, win); w != "" {
		res.Warnings = append([]string{w}, res.Warnings...)
	}
	if w := pl.unfitted(s, o.freq); w != "" {
		res.Warnings = append([]string{w}, res.Warnings...)
	}
	if len(res.Windows) == 0 {
		return res, win, res.Warnings, freqHints{}, nil
	}
	// The signal's odd harmonics, locked to the fundamental, would pull
	// every window's frequency the same way (the frequency column τ sin ωτ
	// is not orthogonal to them even over whole cycles, nor to their change
	// as the sensor walks); fitted alongside with their slope columns, as
	// in the demodulation at --freq (signalHarmonics), they do not enter
	// the frequency step.
	check := func(p demodPlan, cw float64) (*calibrate.DemodResult, error) {
		return p.freqCheck(s, o.freq, cw, int(math.Round(float64(len(res.Windows))*win/cw)), harm)
	}
	var fit *calibrate.DemodResult
	var toneWarn string
	if hasTone {
		// The check with the tone fitted beside the signal at its own
		// frequency, in windows long enough to fit the two apart: the two
		// frequencies are then fitted apart, the signal's in the windows,
		// the tone's in the probe.
		// A pair of sidebands (tone.mirror) is fitted together, in windows
		// that fit the nearer apart.
		cw := toneWindow(tone.nearest(o.freq), win)
		pt := pl.withTone(tone.tones()...)
		fit, err = check(pt, cw)
		_, seen := estimateWindowFreq(fitWindows(fit), cw)
		switch {
		case (err != nil || !seen) && tone.share >= 1:
			// Nothing clear at --freq once the line is fitted, and the
			// line is the stronger: it may be the signal itself, off
			// --freq, which the check without it finds (as before).
			hasTone = false
		case err != nil || len(fit.Windows) == 0:
			// No window of the log's runs fits the tone apart: the pulled
			// estimate is not to be acted on.
			return res, win, append(res.Warnings, secondToneWarning(tone, o.freq, win, 0, false)), freqHints{}, nil
		default:
			fitted := false
			if cw == win {
				// The demodulation's windows fit it apart too.
				if r2, err2 := pt.demodulate(s, o.freq, win, harm); err2 == nil && len(r2.Windows) == len(res.Windows) {
					r2.Warnings = res.Warnings
					res, pl, fitted = r2, pt, true
				}
			}
			toneWarn = secondToneWarning(tone, o.freq, win, cw, fitted)
			res.Warnings = append(res.Warnings, toneWarn)
		}
	}
	if !hasTone {
		fit, err = check(pl, win)
	}
	if err != nil {
		// The fixed-frequency demodulation went through; a failed check is
		// worth a warning, not the run.
		return res, win, append(res.Warnings, fmt.Sprintf("the AC frequency could not be checked (%v): the results assume the field runs at exactly %g Hz", err, o.freq)), uncheckedHints(s, o), nil
	}
	est, ok := estimateWindowFreq(fit.Windows, win)
	if !ok {
		w := uncheckedWarning(fit.Windows, o.freq)
		if fit.FreqFailed > 0 {
			w += fmt.Sprintf(" (the frequency fits of %d more windows failed, as where the field runs far from %g Hz: check --freq)", fit.FreqFailed, o.freq)
		}
		return res, win, append(res.Warnings, w), uncheckedHints(s, o), nil
	}
	var failedShare string
	if n := len(fit.Windows) + fit.FreqFailed; fit.FreqFailed > 0 && freqFailedShare*float64(n) < float64(fit.FreqFailed) {
		// A few failed fits are the noisiest windows (a traverse's weak
		// ends); many say the check rests on what is left.
		failedShare = fmt.Sprintf("the frequency fits of %d of %d windows failed (windows dominated by noise, or fits drawn onto a mains line, or a field far from %g Hz) and were left out of the frequency check, which rests on the rest", fit.FreqFailed, n, o.freq)
		res.Warnings = append(res.Warnings, failedShare)
	}
	off := est.freq - o.freq
	span := longestGroupSpan(res.Windows, win)
	turn := 360 * math.Abs(off) * span
	held := func(e freqEstimate) bool {
		return math.Abs(e.freq-o.freq) <= freqCheckSigmas*e.sigma || 360*math.Abs(e.freq-o.freq)*span <= freqCheckDegrees
	}
	if hasTone && !held(est) {
		// The tone is fitted to take its pull off the estimate. Where the
		// check without it holds the field at --freq, fitting it has not
		// made the check better, only moved it: the line is then part of
		// the signal, or of something the tone's model misses (a
		// sideband whose mirror went unseen, one of several lines), and
		// the pull the fit leaves is its own. The estimate is not acted
		// on. A 512 Hz tracer with sidebands at 510 and 514 Hz, one of
		// them fitted, read 512.0189 ± 0.0003 Hz, where the check
		// without it read 512 Hz (found in review).
		if f0, err0 := check(pl, win); err0 == nil {
			if e0, ok0 := estimateWindowFreq(f0.Windows, win); ok0 && held(e0) {
				d0, d1 := freqDecimals(e0.sigma), freqDecimals(est.sigma)
				what := "tone"
				if tone.mirror > 0 {
					what = "pair of lines"
				}
				return res, win, append(res.Warnings, fmt.Sprintf("with the %s fitted beside the signal the windows' fitted frequencies put the AC field at %.*f ± %.*f Hz, and without it at %.*f ± %.*f Hz, at the %g Hz given: fitting it does not make the check better, only moves it (the %s may be part of the signal, or more lines than are fitted lie beside it), so that estimate is not acted on, and the results assume the %g Hz given",
					what, d1, est.freq, d1, est.sigma, d0, e0.freq, d0, e0.sigma, o.freq, what, o.freq)), freqHints{groups: wanderHints(f0.Windows, o.freq, win)}, nil
			}
		}
	}
	if held(est) {
		hints := freqHints{groups: wanderHints(fit.Windows, o.freq, win)}
		// Not told from --freq, but perhaps not known well enough either:
		// the offset plus its uncertainty may still turn the phase across
		// a group by more than one phase per line can follow.
		// Every group's ramp is then searched for; the warning waits for
		// the groups' fits (looseFreqWarning), whose ramp searches bound the
		// turn far more tightly than the windows do (an exact 128 Hz tone
		// at 5 nT read 128.001 ± 0.003 Hz, "up to 21°" across 8 s, while
		// each group's ramp pins it to about 1°; found in review).
		if allowed := 360 * (math.Abs(off) + freqLooseSigmas*est.sigma) * span; allowed > freqLooseDegrees {
			hints.loose, hints.off = true, off
			hints.bound = math.Abs(off) + freqLooseSigmas*est.sigma
			hints.est, hints.freq, hints.span, hints.allowed = est, o.freq, span, allowed
		}
		return res, win, res.Warnings, hints, nil
	}
	dec := freqDecimals(est.sigma)
	untrusted := freqCheckUntrustedHz
	if k, _, ok := pl.mainsHarmonic(o.freq); ok {
		// At the k-th harmonic of the mains the grid's own offset is k
		// times the fundamental's, while the walk's is not: the cores of a
		// circuit carry a harmonic at phases as different as the
		// fundamental's (the 5th in reversed sequence), and walked one way
		// over a four-wire circuit with a 5th harmonic of 15 % (0.3 m
		// apart at 0.8 m, testdata/scenarios/open/lv-harmonics.toml) the
		// 250 Hz windows read 250.0138 ± 0.0003 Hz, spread 0.0083 Hz, with
		// no 50 Hz field in the log at all; taken as the grid's, the log
		// was demodulated there, every group turned 80° and fitted with
		// phantom lines and false steps. The limit is the same grid
		// offset as at the fundamental.
		untrusted *= float64(k)
	}
	if !est.trusted && math.Abs(off) <= untrusted {
		// Walked one way only: the offset may be the walk's, not the grid's.
		// Its share left in the mean is of the order of the windows' spread
		// beyond their noise (freqEstimate.spread), which the sigma above
		// does not count: within freqWalkSpreads of it the offset is not
		// told (a three-core circuit at exactly 50 Hz, walked one way, read
		// 49.9988 ± 0.0001 Hz, its windows spread by 0.002 Hz: a false
		// "as if ... 49.9988 Hz"; found in review), and the warning's sigma
		// counts it.
		if math.Abs(off) <= freqWalkSpreads*est.spread {
			return res, win, res.Warnings, freqHints{groups: wanderHints(fit.Windows, o.freq, win)}, nil
		}
		sg := math.Hypot(est.sigma, est.spread)
		d := freqDecimals(sg)
		return res, win, append(res.Warnings, fmt.Sprintf(oneWayLead+" the AC field ran at %.*f ± %.*f Hz, not the %g Hz given (a turn of %.0f° across the longest group, %.1f s): the grid slightly off its frequency, or the phase changing along traverses all walked the same way where conductors of different phase overlap, which a log walked one way cannot tell apart; the results assume the %g Hz given (walk back and forth, or log a while standing still, to tell)",
			d, est.freq, d, sg, o.freq, turn, span, o.freq)), freqHints{groups: wanderHints(fit.Windows, o.freq, win)}, nil
	}
	// Beyond about a quarter of 1/window from --freq the windows' fits no
	// longer converge reliably; an estimate out there is not to be trusted.
	if math.Abs(off) > 0.25/win {
		hint := ""
		if h, m, ok := pl.nearestMains(est.freq); ok && math.Abs(est.freq-h*m) < 0.25/win {
			hint = fmt.Sprintf("; that is the mains (the %s of %g Hz): a field at %g Hz too weak beside it", harmonicName(h), m, o.freq)
			if d := math.Abs(o.freq - h*m); d > 1e-9*o.freq {
				hint += fmt.Sprintf(", or a window too short to tell them apart (try --window %.1f or longer)", math.Ceil(10*calibrate.NuisanceSeparation(1)/d)/10)
			}
		}
		return nil, 0, nil, freqHints{}, fmt.Errorf("%s: the AC field does not run at the %g Hz given: the windows' fitted frequencies average %.3f Hz, too far off for a %.3g s window to follow; give the field's frequency with --freq (about %.2f Hz)%s", s.Source, o.freq, est.freq, win, est.freq, hint)
	}
	// A mains line within the windows' separation of --freq (or of the
	// estimate) is not fitted, and pulls every window's frequency the same
	// way, which the estimate's sigma (from the windows' scatter) does not
	// see: a 645 Hz tone beside a 650 Hz 13th harmonic read 645.185 ±
	// 0.003 Hz, and demodulated there every traverse was nonsense, with
	// the warning naming the harmonic dropped (found in review). Such an
	// estimate is not acted on: the run stays at --freq and says why, and
	// which window fits the two apart. A signal given on a mains line
	// itself (--freq 150 for the 3rd harmonic) is that line, and follows
	// the grid off its nominal as before.
	for _, f := range []float64{o.freq, est.freq} {
		if h, m, ok := pl.nearestMains(o.freq); ok && math.Abs(o.freq-h*m) < 1e-9*o.freq {
			break
		}
		at, name, ok := pl.pull(s, res, f, o.freq, win)
		if !ok {
			continue
		}
		// The window is advised from the line's distance to the signal
		// given: the estimate is the one pulled towards the line.
		d := math.Abs(o.freq - at)
		var share float64
		if sh, seen := pl.lineNear(s, res, at, o.freq); seen {
			share = sh
		}
		return res, win, append(res.Warnings, fmt.Sprintf("the windows' fitted frequencies put the AC field at %.*f ± %.*f Hz, not the %g Hz given, but %s lies too near for %.3g s windows to fit it apart, and pulls every window's frequency towards it: the estimate is not trusted, and the results assume the %g Hz given; use --window %.1f or longer to fit the two apart (the frequency is then checked without the pull)",
			dec, est.freq, dec, est.sigma, o.freq, name, win, o.freq, advisedWindow(o.freq, d, share))), freqHints{}, nil
	}
	// A window of whole cycles of --freq becomes the nearest whole number
	// of cycles of the estimate: the windows' phasors are the path averages
	// the fit models only over whole cycles (calibrate.Window.Travel). Any
	// other window (a multiple of 0.1 s at a tracer's frequency, for the
	// mains' sake) stays.
	win2 := win
	if c := win * o.freq; math.Abs(c-math.Round(c)) < 1e-6*c {
		win2 = math.Round(c) / est.freq
	}
	harm2, dropped2 := pl.signalHarmonics(est.freq, win2)
	again, err := pl.demodulate(s, est.freq, win2, harm2)
	if err != nil {
		return nil, 0, nil, freqHints{}, err
	}
	if dropped2 != "" {
		again.Warnings = append([]string{dropped2}, again.Warnings...)
	}
	if lengthened != "" {
		again.Warnings = append([]string{lengthened}, again.Warnings...)
	}
	// The warnings about the mains beside the signal hold at the estimate
	// as at --freq, and are computed afresh there: before, they were
	// dropped with the first demodulation, a strong 50 Hz field left
	// unfitted by --mains 60 among them (found in review).
	pe := pl
	pe.dec = dec
	w := pe.clash(s, again, est.freq, win2)
	if k, m, ok := pl.mainsHarmonic(o.freq); ok {
		// On a grid off its nominal the k-th harmonic follows it (k times
		// the offset): still the supply's harmonic, not a line beside it.
		w = pe.harmonicWords(est.freq, k, m)
	}
	if w != "" {
		again.Warnings = append([]string{w}, again.Warnings...)
	}
	if w := pe.foldClash(s, again, est.freq, win2); w != "" {
		again.Warnings = append([]string{w}, again.Warnings...)
	}
	if w := pl.unfitted(s, est.freq); w != "" {
		again.Warnings = append([]string{w}, again.Warnings...)
	}
	again.Warnings = appendNonEmpty(again.Warnings, failedShare)
	again.Warnings = appendNonEmpty(again.Warnings, toneWarn)
	warn := fmt.Sprintf("AC frequency estimated at %.*f ± %.*f Hz from %d windows, not the %g Hz given (at %g Hz the phase would turn %.0f° across the longest group, %.1f s, and the currents would read low); demodulated at %.*f Hz in %.4g s windows; the estimate's own uncertainty turns the phase by 360·σ·t, so phases compare between the conductors of a group, not between groups",
		dec, est.freq, dec, est.sigma, est.windows, o.freq, o.freq, turn, span, dec, est.freq, win2)
	return again, win2, append([]string{warn}, again.Warnings...), freqHints{groups: wanderHints(fit.Windows, est.freq, win2), bound: rampEstimateSigmas * est.sigma, estSigma: est.sigma}, nil
}

// rampEstimateSigmas is how many of the estimate's sigmas from 0 the ramp
// search of a group demodulated at a frequency estimated from the log may
// reach (freqHints.bound), where that is beyond its other bounds
// (rampSearch): the estimate is off the field by about its sigma, and a
// weak field's windows give sigmas of hundredths of a hertz. Before, the
// search stopped at 0.02 Hz, and on 32 s traverses over a 200 nT cable at
// 90 nT of reading noise demodulated 0.027-0.035 Hz off, every group kept
// a ramp at that bound, its frequency 10-31 of its sigmas off the
// simulated truth (found in review).
const rampEstimateSigmas = 4

// freqHints is what demodulateAC tells the groups' fits about the
// frequency: where each group's phase-ramp search starts (fitRamp).
type freqHints struct {
	// groups holds, for each group whose own frequency differs from the one
	// used, that frequency's offset, Hz (wanderHints).
	groups map[string]float64
	// loose is set when the frequency used is not known well enough to hold
	// one phase across a group (freqLooseDegrees): every group then has its
	// phase ramp searched for, as one demodulated at an estimate, starting
	// from off (the log's estimate less the frequency used, Hz) unless
	// groups gives its own, and out to bound Hz. When the log was
	// demodulated at its estimate, bound is rampEstimateSigmas of the
	// estimate's sigma: the ramp search reaches that far too, and
	// estSigma is the estimate's sigma, Hz.
	loose      bool
	off, bound float64
	estSigma   float64
	// est, freq, span and allowed are what looseFreqWarning says when
	// loose: the windows' estimate, the frequency used, Hz, the longest
	// group, s, and the turn the estimate allows across it, degrees.
	est                 freqEstimate
	freq, span, allowed float64
	// unchecked is set when the frequency check could not decide; lines
	// are then the spectral lines in the log other than the mains and the
	// frequency given (otherLines), for the warning should no group find
	// a current (wrongFreqWarning).
	unchecked bool
	lines     []spectralLine
	atFreq    bool
}

// uncheckedHints are the hints of a log s whose frequency check could not
// decide (freqHints.unchecked).
func uncheckedHints(s *ingest.Samples, o *locateOptions) freqHints {
	h := freqHints{unchecked: true}
	h.lines, h.atFreq = otherLines(s, o.freq, o.mains)
	return h
}

// of returns the offset where group g's ramp search starts, Hz (0 for
// none).
func (h freqHints) of(g string) float64 {
	if f, ok := h.groups[g]; ok {
		return f
	}
	if h.loose {
		return h.off
	}
	return 0
}

// looseWarning says that the frequency the windows give, est, is too
// uncertain for one phase across a group of span seconds at freq Hz: its
// offset plus freqLooseSigmas of its sigma allows a turn of allowed
// degrees, and the ramp searches of the groups keys did not bound it
// (looseFreqWarning). It names what to do; for the mains, whose frequency
// nobody sets, no transmitter.
func looseWarning(est freqEstimate, freq, span, allowed float64, keys []string) string {
	dec := freqDecimals(est.sigma)
	need := freqLooseDegrees / 360.0 / span
	advice := fmt.Sprintf("Give the tone's frequency with --freq to within %.2g Hz if the transmitter's is known that well, or split the traverses into shorter groups, or raise the signal (a stronger tone, or a longer log) so that the windows fix the frequency", need)
	if isMains(freq) {
		advice = "The mains' frequency wanders and cannot be given exactly: split the traverses into shorter groups, or log a stronger field, so that the windows fix it"
	}
	return fmt.Sprintf("the AC frequency is not known well enough to hold the phase across a group: the windows put it at %.*f ± %.*f Hz, which does not tell it from the %g Hz given, yet allows the phase to turn up to %.0f° across the longest group (%.1f s), which one current and phase per line cannot follow (the currents then read low, or as phantom go-and-return pairs); each group was searched for a phase ramp (its notes give any found; phases then compare between the conductors of a group, not between groups), and the fits of %s could not bound the turn under %d° or found a ramp the windows' estimate does not agree with; the results assume %g Hz elsewhere. %s",
		dec, est.freq, dec, est.sigma, freq, allowed, span, keysPhrase(keys), freqLooseDegrees, freq, advice)
}

// keysPhrase lists group keys, at most eight, then "...".
func keysPhrase(keys []string) string {
	if len(keys) > 8 {
		keys = append(keys[:8:8], "...")
	}
	return strings.Join(keys, ", ")
}

// looseFreqWarning gives looseWarning once the groups are fitted, when
// the frequency was not known well enough for one phase per group
// (h.loose) and some group's own ramp search does not settle it: its
// bound on the turn (group.looseTurn) exceeds freqLooseDegrees, or the
// ramp it kept disagrees with the windows' offset by more than three of
// their combined sigmas. "" otherwise: each group then held its phase
// (or took up the turn) within the limit.
func looseFreqWarning(h freqHints, groups []*group) string {
	if !h.loose {
		return ""
	}
	var keys []string
	for _, g := range groups {
		if !g.loose {
			continue
		}
		bad := !(g.looseTurn <= freqLooseDegrees)
		if g.ramp != nil && math.Abs(g.ramp.hz-h.off) > 3*math.Hypot(g.ramp.sigma, h.est.sigma) {
			bad = true
		}
		if bad {
			keys = append(keys, g.key)
		}
	}
	if len(keys) == 0 {
		return ""
	}
	return looseWarning(h.est, h.freq, h.span, h.allowed, keys)
}

// oneWayLead starts the warning that a log walked one way seems off its
// frequency; buildDocument drops it when the groups' fits found the
// frequency off (wanderWarning then says so).
const oneWayLead = "the windows' phase advances as if"

// wanderHints returns, for each group whose own frequency differs from
// freq (groupWander), that frequency's offset from freq, Hz: where the
// phase-ramp fit of the group starts its search (phaseramp.go). A group's
// windows walked one way also seem off where conductors of different
// phase overlap along it, so the offset is only a hint, which the fit
// takes or leaves (before, such groups were demodulated at their own
// frequency: a cable and a second one 135° apart in phase read 13.7 A of
// 20 A, with phases 75° apart from group to group).
func wanderHints(fitted []calibrate.Window, freq, window float64) map[string]float64 {
	bad := groupWander(fitted, freq, window)
	for k, f := range bad {
		bad[k] = f - freq
	}
	return bad
}

// freqCheck demodulates s at freq in windows of win seconds (about n of
// them in the log) with the frequency fitted in each, the signal's
// harmonics h fitted alongside, or, should that fail, none of them.
func (pl demodPlan) freqCheck(s *ingest.Samples, freq, win float64, n int, h []int) (fit *calibrate.DemodResult, err error) {
	for _, hh := range [][]int{h, nil} {
		set := pl.settings(freq, win, hh)
		set.EstimateFreq = true
		// A window whose frequency fit fails (diverges, or its frequency
		// column is degenerate, as where the field runs far from --freq)
		// is left out and the rest judged: before, one such window gave up
		// the check for the whole log, and --freq 60 on a 50 Hz site went through unchecked with
		// the default window (found in review).
		set.SkipFailedFreq = true
		set.Step = checkStep(n, win)
		fit, err = calibrate.Demodulate(s, set)
		if err == nil {
			break
		}
	}
	return fit, err
}

// fitWindows is the windows of fit; none for a nil fit.
func fitWindows(fit *calibrate.DemodResult) []calibrate.Window {
	if fit == nil {
		return nil
	}
	return fit.Windows
}

func appendNonEmpty(list []string, s string) []string {
	if s == "" {
		return list
	}
	return append(list, s)
}

// groupWander checks each group's own frequency (its windows' estimates
// combined as in estimateWindowFreq) against the frequency used, freq: a
// grid's frequency wanders by hundredths of a hertz over minutes, so one
// frequency for a long survey can still turn the phase across some groups.
// It returns those groups with their own frequencies (none with a single
// group, which the log's own check covers).
func groupWander(ws []calibrate.Window, freq, window float64) map[string]float64 {
	by := map[string][]calibrate.Window{}
	var keys []string
	for _, w := range ws {
		if _, ok := by[w.Group]; !ok {
			keys = append(keys, w.Group)
		}
		by[w.Group] = append(by[w.Group], w)
	}
	if len(keys) < 2 {
		return nil
	}
	bad := map[string]float64{}
	for _, k := range keys {
		est, ok := estimateWindowFreq(by[k], window)
		if !ok {
			continue
		}
		off := est.freq - freq
		turn := 360 * math.Abs(off) * longestGroupSpan(by[k], window)
		if math.Abs(off) <= freqCheckSigmas*est.sigma || turn <= freqCheckDegrees || math.Abs(off) <= freqCheckUntrustedHz {
			continue
		}
		bad[k] = est.freq
	}
	return bad
}

// lineShare is the least amplitude, as a share of the signal's, at which
// a lineProbe takes a line beside the signal as present; lineSNR the
// least multiple of its own sigma. Set on the review's logs: a line in
// the log at 0.10-0.27 of the signal and 140-630 of its sigmas, none at
// 0.003 and 6.
const (
	lineShare = 0.02
	lineSNR   = 10
)

// lineProbe looks for lines beside the signal in the readings about the
// signal's strongest window. A mains line's frequencies are fixed by the
// mains and the sampling, whether or not a field there is in the log:
// the warnings that name a harmonic below the Nyquist frequency do so in
// any case, while acting on a line (holding the frequency at --freq), or
// naming one folded from above the Nyquist frequency, waits for it to be
// seen.
type lineProbe struct {
	x      *mat.Dense // the base columns at the rows taken
	qr     mat.QR
	tau    []float64    // the rows' times from the centre, s
	resid  [3][]float64 // each axis's residual after the base fit
	sig    float64      // the signal's amplitude over the axes
	others []float64    // the mains lines in the base, Hz
}

// newLineProbe fits the readings of s within span/2 s of the centre of
// res's window of the largest field (in its group) per axis with the
// base: a constant and a slope, the signal's sine and cosine at signal Hz
// with their linear and quadratic change, and the mains lines fitted
// beside it (calibrate.MainsNuisance in 0.1 s windows) with their linear
// change. Nil when there is too little to fit.
//
// extra lists further lines, Hz, fitted in the base as the mains lines
// are (findSecondTone's mains harmonics too near the signal for
// MainsNuisance).
func (pl demodPlan) newLineProbe(s *ingest.Samples, res *calibrate.DemodResult, signal, span, at float64, extra ...float64) *lineProbe {
	if res == nil || len(res.Windows) == 0 || s.Len() < 64 {
		return nil
	}
	best, bw := -1.0, res.Windows[0]
	for _, w := range res.Windows {
		if e := abs(w.B[0])*abs(w.B[0]) + abs(w.B[1])*abs(w.B[1]) + abs(w.B[2])*abs(w.B[2]); e > best {
			best, bw = e, w
		}
	}
	var rows []int
	for i, t := range s.Time {
		if math.Abs(t-bw.Time) <= span/2 && (s.Group == nil || s.Group[i] == bw.Group) {
			rows = append(rows, i)
		}
	}
	lp := &lineProbe{}
	for _, f := range calibrate.MainsNuisance(signal, mainsWindowStep, pl.fs, pl.mains, nil) {
		// The line asked about is measured, not fitted in the base.
		if math.Abs(f-at) >= 1 {
			lp.others = append(lp.others, f)
		}
	}
	for _, f := range extra {
		if !slices.ContainsFunc(lp.others, func(g float64) bool { return math.Abs(f-g) < 1/span }) {
			lp.others = append(lp.others, f)
		}
	}
	p := 8 + 4*len(lp.others)
	if len(rows) < 4*(p+2) {
		return nil
	}
	lp.x = mat.NewDense(len(rows), p, nil)
	lp.tau = make([]float64, len(rows))
	row := make([]float64, p)
	for r, i := range rows {
		tau := s.Time[i] - bw.Time
		lp.tau[r] = tau
		cs, ss := math.Cos(2*math.Pi*signal*tau), math.Sin(2*math.Pi*signal*tau)
		u := 2 * tau / span
		q := u*u - 1.0/3
		copy(row, []float64{1, u, cs, ss, u * cs, u * ss, q * cs, q * ss})
		for k, f := range lp.others {
			c, sn := math.Cos(2*math.Pi*f*tau), math.Sin(2*math.Pi*f*tau)
			row[8+4*k], row[9+4*k], row[10+4*k], row[11+4*k] = c, sn, u*c, u*sn
		}
		lp.x.SetRow(r, row)
	}
	lp.qr.Factorize(lp.x)
	for k, col := range [][]float64{s.Bx, s.By, s.Bz} {
		y := mat.NewVecDense(len(rows), nil)
		for r, i := range rows {
			y.SetVec(r, col[i])
		}
		var b, fit mat.VecDense
		if err := lp.qr.SolveVecTo(&b, false, y); err != nil {
			return nil
		}
		fit.MulVec(lp.x, &b)
		lp.resid[k] = make([]float64, len(rows))
		for r := range rows {
			lp.resid[k][r] = y.AtVec(r) - fit.AtVec(r)
		}
		lp.sig = math.Hypot(lp.sig, math.Hypot(b.AtVec(2), b.AtVec(3)))
	}
	if !(lp.sig > 0) {
		return nil
	}
	return lp
}

// test reports whether a line at at Hz (as the log shows it: a folded
// line at its alias) is in the readings: its sine and cosine, made
// orthogonal to the base, fitted to each axis's residual, must reach
// lineShare of the signal's amplitude and lineSNR of their own sigma (a
// sine's coefficient has about 2σ²/n of variance, IEEE Std 1057). share
// is the line's amplitude over the signal's.
func (lp *lineProbe) test(at float64) (share float64, ok bool) {
	for _, f := range lp.others {
		if math.Abs(f-at) < 1 {
			return 0, false
		}
	}
	n := len(lp.tau)
	z := mat.NewDense(n, 2, nil)
	for r, tau := range lp.tau {
		z.Set(r, 0, math.Cos(2*math.Pi*at*tau))
		z.Set(r, 1, math.Sin(2*math.Pi*at*tau))
	}
	var b, fit mat.Dense
	if err := lp.qr.SolveTo(&b, false, z); err != nil {
		return 0, false
	}
	fit.Mul(lp.x, &b)
	z.Sub(z, &fit)
	var g00, g01, g11 float64
	for r := 0; r < n; r++ {
		c, sn := z.At(r, 0), z.At(r, 1)
		g00 += c * c
		g01 += c * sn
		g11 += sn * sn
	}
	det := g00*g11 - g01*g01
	if !(det > 1e-9*g00*g11) {
		return 0, false
	}
	_, p := lp.x.Dims()
	var line, noise float64
	for k := range lp.resid {
		var zc, zs, rr float64
		for r, v := range lp.resid[k] {
			zc += z.At(r, 0) * v
			zs += z.At(r, 1) * v
			rr += v * v
		}
		a := (g11*zc - g01*zs) / det
		bb := (g00*zs - g01*zc) / det
		rss := math.Max(0, rr-(a*zc+bb*zs))
		line = math.Hypot(line, math.Hypot(a, bb))
		noise = math.Hypot(noise, math.Sqrt(2*rss/float64(n-p-2)/float64(n)))
	}
	share = line / lp.sig
	return share, line >= lineShare*lp.sig && line >= lineSNR*noise
}

// lineNear reports whether the log holds a line at at Hz beside the
// signal at freq Hz (lineProbe.test), looked for over max(1 s,
// 2.5/|at - freq|), at most 8 s: two and a half beats of the two. A mains
// line fitted beside the signal is measured too (left out of the probe's
// base: strongLine).
func (pl demodPlan) lineNear(s *ingest.Samples, res *calibrate.DemodResult, at, freq float64) (share float64, ok bool) {
	span := math.Min(8, math.Max(1, 2.5/math.Max(math.Abs(at-freq), 1e-9)))
	lp := pl.newLineProbe(s, res, freq, span, at)
	if lp == nil {
		return 0, false
	}
	return lp.test(at)
}

// leakyDocument marks the groups of the logs in which a fitted mains line
// too strong for its distance from the signal leaks into it (strongLine;
// their Problem, so that they are not counted sound: the leak biases every
// group alike, and each fit alone looks clean).
func leakyDocument(doc *report.Document, sv *survey) {
	if len(sv.leaky) == 0 {
		return
	}
	problemOnLogs(doc, sv, func(log string) (string, bool) {
		why, ok := sv.leaky[log]
		return why, ok
	})
}

// shortClash is what noWindowAdvice adds to its advice of windows of w
// seconds for the log s: that in windows that short a mains line lies
// too near the signal to be fitted apart (clash), so that no window fits
// both the log's runs and the line. Before, 0.6 s traverses refused at
// --window 1.0 advised 0.5987 s windows, in which a 150 Hz line 2 Hz from
// a 152 Hz tracer is not fitted at all (found in review). "" when the
// line is apart or no mains are fitted.
func shortClash(o *locateOptions, s *ingest.Samples, w float64) string {
	pl := demodPlan{mains: o.mains, fs: logRate(s)}
	if calibrate.MainsNuisance(o.freq, w, pl.fs, pl.mains, nil) == nil {
		return ""
	}
	h, m, ok := pl.nearestMains(o.freq)
	if !ok {
		return ""
	}
	d := math.Abs(o.freq - h*m)
	if d >= calibrate.NuisanceSeparation(w) {
		return ""
	}
	if d < 1e-9*o.freq {
		return fmt.Sprintf(" (though the signal lies on the %s of the %g Hz mains, which no window tells from it)", harmonicName(h), m)
	}
	return fmt.Sprintf(" (though in windows that short the %s of the %g Hz mains, %.3g Hz from the signal, cannot be fitted apart and leaks into it: that needs --window %.1f or longer, longer than the log's runs, so no window fits both; log longer runs, or move the tracer farther from the mains harmonics)", harmonicName(h), m, d, advisedWindow(o.freq, d, 0))
}
