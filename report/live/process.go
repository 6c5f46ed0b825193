package live

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"undercurrent/calibrate"
)

// processor turns closed windows of one asset into estimates and alarms.
type processor struct {
	asset *AssetConfig
	cals  []*calibrate.Calibration // per sensor, nil when uncalibrated
	rot   [][3][3]float64          // per sensor, sensor frame -> ENU
	est   Estimator                // nil while commissioning
	names []string                 // conductor names in estimator order
	// dirs are the directions along which the conductors' currents are
	// signed, in estimator order (nil: all taken as one direction).
	dirs [][3]float64
	// shifts are the principal axes of a commissioned geometry's
	// covariance (geometryShifts), nil for a geometry taken as exact.
	shifts []geometryShift
	prev   map[string]float64 // previous window's currents (step alarm)
	// prevEnd holds the current a previous window that held a change
	// ended at (its part after the change; currentAlarms), not
	// checkpointed: after a restart prev stands for it.
	prevEnd map[string]float64
	// frozen holds, per sensor, the reading it repeated on every axis
	// through the previous window (stuckAxis).
	frozen map[string][3]float64
	// active holds the latched conditions that still hold, by
	// latchKey (see latch); checkpointed as checkpoint.Ongoing.
	active map[string]*latchedState
	// level holds this window's over-current and imbalance values by
	// latch key, also when under their threshold (solve sets them, latch
	// reads them for a Cleared alarm's Value and then empties them).
	level map[string]float64
	// shareQuiet marks, by latch key, the held shares that this window
	// judged under their deadband (shareAlarms; cleared with level).
	shareQuiet map[string]bool
	// gapAfter, s, is the gap in the data after which a held condition
	// that holds again is raised anew (latch; the service's silent_after,
	// 0: never).
	gapAfter float64
	// prevAt is the end of the window prev was taken from (0: not
	// known), so that a step across a gap says so (currentAlarms).
	prevAt float64
	// prevMisfit is the misfit of the window prev was taken from when
	// it was degraded (the square root of its reduced chi-square; 0 when
	// it was not, or not known: not checkpointed), so that a step judged
	// against it says so (currentAlarms).
	prevMisfit float64
	worker     string
	// revision is the asset's read revision, copied into every estimate
	// and alarm; the worker keeps it equal to its checkpoint's.
	revision int
	// solveErr is the estimator's error of the last solve (nil when it
	// solved), kept for the log: alarms do not show it.
	solveErr error
}

func newProcessor(a *AssetConfig, worker string) (*processor, error) {
	p := &processor{asset: a, worker: worker, prev: map[string]float64{}}
	for _, s := range a.Sensors {
		var cal *calibrate.Calibration
		if s.Calibration != "" {
			c, err := calibrate.Load(s.Calibration)
			if err != nil {
				return nil, fmt.Errorf("live: asset %s sensor %s: %w", a.Name, s.Name, err)
			}
			cal = c
		}
		p.cals = append(p.cals, cal)
		p.rot = append(p.rot, orientation(s.Orientation))
	}
	return p, nil
}

// orientation returns R with b_ENU = R b_sensor, where
//
//	R = Rz(yaw) Ry(pitch) Rx(roll)
//
// are right-handed rotations about the up, north and east axes, angles in
// degrees.
func orientation(ypr [3]float64) [3][3]float64 {
	d := math.Pi / 180
	sy, cy := math.Sincos(ypr[0] * d)
	sp, cp := math.Sincos(ypr[1] * d)
	sr, cr := math.Sincos(ypr[2] * d)
	return [3][3]float64{
		{cy * cp, cy*sp*sr - sy*cr, cy*sp*cr + sy*sr},
		{sy * cp, sy*sp*sr + cy*cr, sy*sp*cr - cy*sr},
		{-sp, cp * sr, cp * cr},
	}
}

// reduced is a window reduced to one reading per usable sensor.
type reduced struct {
	in      SolveInput
	used    []int
	samples int
	missing map[string]string
	alarms  []Alarm
	// freq is the AC frequency the window was demodulated at, Hz, and
	// freqSigma its uncertainty (0 when it is the site's frequency).
	freq, freqSigma float64
	// ref is the reference of the AC window's phases (the site's
	// frequency's cosine from the Unix epoch, read at the window's
	// middle), and refSigma, degrees, the share of the phases' sigma that
	// the frequency's (freqSigma) gives them, carried from the middle of
	// the readings to the reference time.
	ref      phaseRef
	refSigma float64
	// harm are an AC window's used sensors' field phasors of harmonics 2
	// to 1+len(harm), ENU, in the order of used (harm[h-2][k]): only the
	// harmonics every used sensor's fit holds.
	harm [][][3]complex128
	// totals are the used sensors' mean total fields, |window mean of the
	// calibrated field|, nT (the static field: a sine over whole cycles
	// averages out).
	totals []float64
	// counts are the used sensors' sample counts, and scatter the
	// one-sigma of their readings from their samples' own scatter, in the
	// order of used: of a DC window's means (sampleScatter), of each
	// quadrature of an AC window's phasors (acPhasors' scatter about the
	// fit, times its noise gain over sqrt n; 0 when too few samples).
	counts  []int
	scatter []float64
	// spikes counts, per sensor, the readings left out of a DC window's
	// mean (despikeDC) or an AC window's demodulation (acSpikes, despikeACWindow) as
	// spikes; nil when none.
	spikes map[string]int
	// frozen names the sensors that repeated one reading on every axis
	// through the window (a hung logger or a frozen output; called stuck
	// only from the second such window: stuckAxis), for the wording of a
	// misfit they cause.
	frozen map[string]bool
	// dc are a DC window's usable sensors' calibrated readings, despiked,
	// for its change test (windowChange); nil for AC.
	dc []sensorData
	// ac are an AC window's used sensors' calibrated readings, despiked,
	// in the order of used, for its change test (windowChangeAC); nil for
	// DC.
	ac []sensorData
}

// frozenUsed names, "sensor X" or "sensors X, Y", the used sensors of
// the window that repeated one reading on every axis through it; "" when
// none did.
func (r *reduced) frozenUsed(a *AssetConfig) string {
	var names []string
	for _, si := range r.used {
		if n := a.Sensors[si].Name; r.frozen[n] {
			names = append(names, n)
		}
	}
	switch len(names) {
	case 0:
		return ""
	case 1:
		return "sensor " + names[0]
	}
	return "sensors " + strings.Join(names, ", ")
}

// frozenWindow reports whether s repeats one reading on every axis
// through the window.
func frozenWindow(s *series) bool {
	for _, col := range [][]float64{s.Bx, s.By, s.Bz} {
		if len(col) < 2 {
			return false
		}
		for _, v := range col[1:] {
			if v != col[0] {
				return false
			}
		}
	}
	return true
}

// addSpikes counts k readings of sensor name left out as spikes.
func (r *reduced) addSpikes(name string, k int) {
	if r.spikes == nil {
		r.spikes = map[string]int{}
	}
	r.spikes[name] += k
}

// dcSpikeSigmas is how far, in robust standard deviations, a reading of
// a DC window must depart from the running median of its neighbours to
// be left out as a spike (despikeDC): the cut-off locate gives the spike
// filter of a base record without --despike, twice calibrate's default,
// so that noise is not cut (a 10 sigma departure has a probability of
// about 1.5e-23 for Gaussian noise, erfc(10/sqrt 2)) and a clean window's
// mean stays as it was.
const dcSpikeSigmas = 10

// dcDespikeHalf is the spike filter's half-width for DC windows: each
// reading against the median of up to 101 readings around it. A fixed
// sensor's field barely changes within a window, and the spread of so
// many readings is steady: with calibrate's default of 10 each side the
// median absolute deviation of 21 readings of Gaussian noise fell to a
// fifth of its expected value often enough that clean simulated windows
// lost a reading in every few at 10 robust standard deviations.
const dcDespikeHalf = 50

// dcDespikeMin is the fewest samples a DC window's sensor needs to be
// despiked: the reading and dcDespikeHalf neighbours on one side, so that
// every reading is judged against at least 51.
const dcDespikeMin = dcDespikeHalf + 1

// minSamples is the fewest samples a sensor needs in a window to be used:
// a three-parameter sine fit needs more than three (IEEE Std 1057).
const minSamples = 4

// nyquistFactor is the lowest sample rate, in multiples of the AC
// frequency, at which a sensor's samples are demodulated: the sampling
// theorem needs a rate above twice the frequency for both quadratures of
// the phasor to be observable (at exactly 2f the sine term vanishes at
// every sample); 2.5 leaves a margin for the frequency's wander.
const nyquistFactor = 2.5

// maxFreqOffset is how far from the site's frequency, Hz, the AC
// frequency is looked for in each window (statutory grid limits are
// within 1 %, 0.5 Hz at 50 Hz).
const maxFreqOffset = 1.0

// sensorData is one usable sensor's calibrated samples in a window.
type sensorData struct {
	i          int
	t          []float64
	bx, by, bz []float64
}

// reduce calibrates, rotates and averages (DC) or demodulates (AC) each
// sensor's samples, and raises silent and stuck alarms. AC windows are
// demodulated at the frequency found in the window (see windowFrequency).
func (p *processor) reduce(w *window) *reduced {
	a := p.asset
	r := &reduced{missing: map[string]string{}, freq: a.Frequency, ref: phaseRef{nominal: a.Frequency, at: (w.Start + w.End) / 2}}
	var use []sensorData
	for i, s := range a.Sensors {
		sr := w.Sensors[i]
		n := sr.len()
		if n == 0 {
			r.missing[s.Name] = "silent"
			r.alarms = append(r.alarms, p.alarm(w, AlarmSilent, s.Name, 0, 0, fmt.Sprintf("sensor %s sent no samples in the window", s.Name)))
			continue
		}
		exp := 0
		if i < len(w.Expected) {
			exp = w.Expected[i]
		}
		if n < minSamples {
			r.missing[s.Name] = sampleCount(n, exp) + ", too few to use"
			continue
		}
		if axis, v, beyond := saturatedAxis(a, &s, &sr); axis != "" {
			r.missing[s.Name] = "saturated"
			r.alarms = append(r.alarms, p.alarm(w, AlarmSaturated, s.Name, v, s.Range, saturatedMessage(s.Name, axis, v, s.Range, beyond)))
			continue
		}
		if a.Mode == "ac" {
			if axis, v, share, both := railAxis(&sr, a.Frequency, a.Noise); axis != "" {
				r.missing[s.Name] = "saturated"
				r.alarms = append(r.alarms, p.alarm(w, AlarmSaturated, s.Name, v, 0, railMessage(s.Name, axis, v, share, a.Noise, both)))
				continue
			}
		}
		if axis, v := p.stuckAxis(s.Name, &sr); axis != "" {
			r.missing[s.Name] = "stuck"
			r.alarms = append(r.alarms, p.alarm(w, AlarmStuck, s.Name, v, 0,
				fmt.Sprintf("sensor %s repeated one value on axis %s for %d samples", s.Name, axis, n)))
			continue
		}
		if frozenWindow(&sr) {
			// Not yet called stuck (that takes a second window), but
			// named as frozen if its readings are then a misfit.
			if r.frozen == nil {
				r.frozen = map[string]bool{}
			}
			r.frozen[s.Name] = true
		}
		if a.Mode == "ac" {
			// The rate from times near 2e9 s carries rounding: 1e-6 of slack.
			if rate := float64(n-1) / (sr.T[n-1] - sr.T[0]); !(rate*(1+1e-6) >= nyquistFactor*a.Frequency) {
				r.missing[s.Name] = fmt.Sprintf("sample rate %.4g Hz is below %.2g times the %.4g Hz frequency (sampling theorem: above 2 f), not used", rate, nyquistFactor, a.Frequency)
				continue
			}
		}
		if n+1 < exp {
			// More than one short: one is allowed for a sample on a
			// boundary or a jittered clock.
			r.missing[s.Name] = sampleCount(n, exp)
		}
		d := sensorData{i: i, t: sr.T, bx: append([]float64(nil), sr.Bx...), by: append([]float64(nil), sr.By...), bz: append([]float64(nil), sr.Bz...)}
		if c := p.cals[i]; c != nil {
			c.ApplyColumns(d.bx, d.by, d.bz)
		}
		use = append(use, d)
	}
	if a.Mode != "ac" {
		use = p.despikeDC(use, r)
	}
	if a.Mode == "ac" && len(use) > 0 {
		// Despiked at the site's frequency first, so that a spike does
		// not lead the frequency search (windowFrequency) astray, with the
		// harmonics' changes fitted (acSpikes' drift): the grid may be off
		// the site's frequency, and the harmonics' phases then drift
		// through the window (a fit that did not follow them cut up to a
		// quarter of a short window's clean readings, 31 of 125 at 250 ms,
		// 50.1 Hz and a 10 % third harmonic, and the frequency was then
		// lost). The readings are then despiked afresh at the window's
		// frequency, and that pass's marks alone kept and counted.
		// (despikeACWindow gives a sensor new slices; the copy of use
		// shares none that it changes.)
		// A sensor whose window the first pass found clean at its plain
		// fit (the same at both passes) is not despiked again at the
		// same frequency.
		first := append([]sensorData(nil), use...)
		cut, clean := despikeACWindow(first, a.Frequency, a.Noise, true, nil, &reduced{}, a.Sensors)
		r.freq, r.freqSigma = windowFrequency(first, a.Frequency)
		if r.freq != a.Frequency {
			clean = nil
		}
		if again, _ := despikeACWindow(use, r.freq, a.Noise, false, clean, r, a.Sensors); again || cut {
			r.freq, r.freqSigma = windowFrequency(use, a.Frequency)
		}
	}
	var ns []int
	var gains []float64 // AC: each used sensor's fit's noise gain (acPhasors)
	for _, d := range use {
		s := a.Sensors[d.i]
		R := p.rot[d.i]
		if a.Mode == "ac" {
			// The fundamental with the harmonics the readings allow
			// (acPhasors), so that a harmonic does not leak into it.
			ph, harm, g, sc, err := acPhasors(d.t, [3][]float64{d.bx, d.by, d.bz}, r.freq, acFitHarmonics(d.t, r.freq), r.ref)
			if err != nil {
				r.missing[s.Name] = err.Error()
				continue
			}
			gains = append(gains, g)
			// Each quadrature's noise from the readings' own scatter
			// about the fit, as the stated noise's below.
			r.scatter = append(r.scatter, sc*g/math.Sqrt(float64(len(d.t))))
			r.ac = append(r.ac, d)
			enu := func(ph [3]complex128) [3]complex128 {
				var e [3]complex128
				for row := range 3 {
					for k := range 3 {
						e[row] += complex(R[row][k], 0) * ph[k]
					}
				}
				return e
			}
			r.in.Phasors = append(r.in.Phasors, enu(ph))
			if len(r.in.Phasors) == 1 {
				r.harm = make([][][3]complex128, len(harm))
			}
			r.harm = r.harm[:min(len(r.harm), len(harm))]
			for h := range r.harm {
				r.harm[h] = append(r.harm[h], enu(harm[h]))
			}
		} else {
			m := [3]float64{mean(d.bx), mean(d.by), mean(d.bz)}
			var e [3]float64
			for row := range 3 {
				e[row] = R[row][0]*m[0] + R[row][1]*m[1] + R[row][2]*m[2]
			}
			r.in.Fields = append(r.in.Fields, e)
			r.scatter = append(r.scatter, sampleScatter(d.bx, d.by, d.bz))
		}
		r.totals = append(r.totals, math.Sqrt(mean(d.bx)*mean(d.bx)+mean(d.by)*mean(d.by)+mean(d.bz)*mean(d.bz)))
		n := len(d.t)
		r.in.Points = append(r.in.Points, s.Position)
		r.used = append(r.used, d.i)
		r.samples += n
		ns = append(ns, n)
	}
	r.counts = ns
	if a.Mode == "ac" && r.freqSigma > 0 && len(r.ac) > 0 {
		// The found frequency's error df turns the phases by 360 df
		// (ref.at - tm), tm the middle of the readings (the fit's phase
		// is the readings' at their middle, uncorrelated with the
		// frequency there).
		var tm float64
		var n int
		for _, d := range r.ac {
			for _, t := range d.t {
				tm += t - r.ref.at
			}
			n += len(d.t)
		}
		r.refSigma = 360 * r.freqSigma * math.Abs(tm/float64(n))
	}
	if a.Noise > 0 && len(ns) > 0 {
		// Noise of a mean of n samples (DC) or of each quadrature of a
		// sine fit over n samples (AC): sigma / sqrt(n), each sensor with
		// its own n (weighted least squares needs each reading's own
		// variance). Sigma keeps the median sensor's, for estimators that
		// take one value. An AC sensor's is widened by its fit's noise
		// gain (acPhasors: 1 over whole cycles).
		r.in.Sigmas = make([]float64, len(ns))
		for k, n := range ns {
			r.in.Sigmas[k] = a.Noise / math.Sqrt(float64(n))
			if k < len(gains) {
				r.in.Sigmas[k] *= gains[k]
			}
		}
		order := make([]int, len(ns))
		for k := range order {
			order[k] = k
		}
		sort.SliceStable(order, func(i, j int) bool { return ns[order[i]] < ns[order[j]] })
		r.in.Sigma = r.in.Sigmas[order[len(order)/2]]
	}
	return r
}

// windowFrequency returns the AC frequency of a window and its one-sigma
// uncertainty, or nominal and 0 when the window does not show a frequency
// significantly different from it. The frequency is fitted (IEEE Std
// 1057 four-parameter sine fit, calibrate.FitSine4) to the sensor axis
// with the largest variance, started from the best of a scan of
// three-parameter fits spaced a quarter of 1/span over nominal +/-
// maxFreqOffset. Its uncertainty is the Cramer-Rao bound for the
// frequency of a sinusoid of peak amplitude A in white noise sigma,
// var(omega) = 2 sigma^2 / (A^2 sum (t - tmean)^2). The found frequency is
// used when it is more than 5 sigma from nominal: a nominal-frequency
// window keeps its phase reference, while a grid 0.2 Hz off over 1 s no
// longer loses the sinc(0.2) = 6.5 % of amplitude of demodulating at the
// nominal frequency.
func windowFrequency(use []sensorData, nominal float64) (float64, float64) {
	// The strongest axis by its variance about the mean (A^2/2 plus the
	// noise's for a sine of peak amplitude A), cheaper than a fit.
	var best, bt []float64
	bestVar := 0.0
	for _, d := range use {
		for _, col := range [][]float64{d.bx, d.by, d.bz} {
			m := mean(col)
			var v float64
			for _, x := range col {
				v += (x - m) * (x - m)
			}
			if v /= float64(len(col)); v > bestVar {
				best, bt, bestVar = col, d.t, v
			}
		}
	}
	if best == nil {
		return nominal, 0
	}
	// The harmonics the readings allow are fitted beside the fundamental
	// in the scan and in the four-parameter fit (acharmonics.go): a
	// harmonic left out of the fit leaks into the fundamental's amplitude
	// and pulls the frequency.
	set := acSettings(acFitHarmonics(bt, nominal+maxFreqOffset))
	f0, err := calibrate.FitSine(bt, best, nominal, set)
	if err != nil {
		return nominal, 0
	}
	bestAmp := f0.Amplitude()
	span := bt[len(bt)-1] - bt[0]
	if !(span > 0) {
		return nominal, 0
	}
	step := 0.25 / span
	k := int(math.Ceil(maxFreqOffset / step))
	start, startAmp := nominal, bestAmp
	for j := -k; j <= k; j++ {
		fr := nominal + float64(j)*step
		if j == 0 || fr <= 0 {
			continue
		}
		if f, err := calibrate.FitSine(bt, best, fr, set); err == nil && f.Amplitude() > startAmp {
			start, startAmp = fr, f.Amplitude()
		}
	}
	f4, err := calibrate.FitSine4(bt, best, start, set)
	if err != nil || !(math.Abs(f4.Freq-nominal) <= maxFreqOffset+step) || !(f4.Amplitude() > 0) {
		return nominal, 0
	}
	var tm, ss float64
	for _, t := range bt {
		tm += t - bt[0]
	}
	tm /= float64(len(bt))
	for _, t := range bt {
		d := t - bt[0] - tm
		ss += d * d
	}
	sigma := math.Sqrt2 * f4.Sigma / (f4.Amplitude() * math.Sqrt(ss)) / (2 * math.Pi)
	if !(math.Abs(f4.Freq-nominal) > 5*sigma) {
		return nominal, 0
	}
	return f4.Freq, sigma
}

// sampleCount says how many samples a sensor gave a window: "131 of 500
// samples" when its rate gives more (exp), else "1 sample", "3 samples".
func sampleCount(n, exp int) string {
	switch {
	case exp > n:
		return fmt.Sprintf("%d of %d samples", n, exp)
	case n == 1:
		return "1 sample"
	}
	return fmt.Sprintf("%d samples", n)
}

func mean(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}

// solve runs the estimator on a reduced window and builds the estimate and
// its alarms. A failed solve still gives an estimate (quality "failed")
// so that every window has exactly one.
func (p *processor) solve(w *window, r *reduced) (*Estimate, []Alarm) {
	a := p.asset
	e := &Estimate{Asset: a.Name, Window: w.Index, Start: w.Start, End: w.End, Mode: a.Mode,
		Sensors: len(r.used), Samples: r.samples, Closed: w.Reason, Worker: p.worker, Conductors: []ConductorEstimate{}, Revision: p.revision}
	if len(r.missing) > 0 {
		e.Missing = r.missing
	}
	e.Spikes = r.spikes
	if a.Mode == "ac" {
		e.Frequency, e.FrequencySigma = r.freq, r.freqSigma
		if e.Frequency == 0 {
			e.Frequency = a.Frequency
		}
	}
	alarms := r.alarms
	out, err := p.est.Solve(&r.in)
	if err == nil && len(out.Current) != len(p.names) {
		err = fmt.Errorf("estimator returned %d currents for %d conductors", len(out.Current), len(p.names))
	}
	if err == nil {
		if what := nonFiniteOutput(out); what != "" {
			err = fmt.Errorf("the fit gave a non-finite %s", what)
		}
	}
	p.solveErr = err
	if err != nil {
		// The estimator's error is for the log (the worker logs
		// solveErr); the alarm says what an operator can act on.
		msg := fmt.Sprintf("no estimate: no sensor gave enough usable samples (at least %d) in the window", minSamples)
		var sat []string
		for _, s := range a.Sensors {
			if r.missing[s.Name] == "saturated" {
				sat = append(sat, s.Name)
			}
		}
		switch {
		case len(r.used) == 0 && len(sat) == len(a.Sensors):
			msg = fmt.Sprintf("no estimate: every sensor was saturated in the window (%s): the field is beyond the sensors' range, so no current can be read from them and no over-current alarm raised (a field beyond their range may itself mean a large current: check the site, and the sensors' range)", strings.Join(sat, ", "))
		case len(r.used) == 0 && len(sat) > 0:
			msg = fmt.Sprintf("no estimate: no sensor gave usable samples in the window; saturated: %s (the field beyond their range), the others silent, short of samples or left out (see missing)", strings.Join(sat, ", "))
		}
		if len(r.used) > 0 {
			msg = fmt.Sprintf("no estimate: the fit with the %d usable sensors failed (see the log)", len(r.used))
			if sn := p.largestField(r); sn != "" && nonFiniteOutput(out) != "" {
				msg = fmt.Sprintf("no estimate: the fit with the %d usable sensors gave non-finite values (the readings are far beyond any field; the largest, sensor %s's, is %.4g nT)", len(r.used), sn, p.fieldOf(r, sn))
			}
			if len(sat) > 0 {
				msg += fmt.Sprintf("; left out as saturated (the field beyond their range): %s", strings.Join(sat, ", "))
			}
		}
		return p.failed(w, e, r.alarms, msg)
	}
	// The fit judged against the noise: the stated one, or with noise = 0
	// the readings' own scatter within the window (judged).
	// A commissioned geometry's error is in the sigmas: the misfit it is
	// expected to give (Chi2Geometry) is no sign of a poor fit.
	judge := func(r *reduced, out *SolveOutput) float64 {
		jred := math.NaN()
		e.Chi2Geometry = 0
		if a.Noise > 0 {
			if out.DOF > 0 {
				jred = out.Chi2 / float64(out.DOF)
				if jred > a.Alarms.MaxChi2 && len(p.shifts) > 0 {
					e.Chi2Geometry = p.geometryChi2(&r.in, out.Chi2)
					jred = out.Chi2 / (float64(out.DOF) + e.Chi2Geometry)
				}
			}
		} else if jin, ok := p.judged(r); ok {
			jred = p.reducedChi2(jin)
		}
		return jred
	}
	jred := judge(r, out)
	if jred > a.Alarms.MaxChi2 {
		// A sensor the others contradict (knocked round, moved, its
		// offset changed) is left out, named, and the window solved with
		// the rest.
		if sub, bad, why, reds := p.isolate(r); sub != nil {
			if o2, err2 := p.est.Solve(&sub.in); err2 == nil && len(o2.Current) == len(p.names) && nonFiniteOutput(o2) == "" {
				frozen := r.frozen
				coil := map[string]string{}
				for _, name := range bad {
					coil[name] = p.coilHint(r, name, o2)
				}
				r, out = sub, o2
				for k, name := range bad {
					if frozen[name] {
						r.missing[name] = "frozen (one reading repeated on every axis through the window), inconsistent with the other sensors' readings: " + why[k]
						alarms = append(alarms, p.alarm(w, AlarmInconsistent, name, reds[k], a.Alarms.MaxChi2,
							fmt.Sprintf("sensor %s repeated one reading on every axis through the window (frozen: a hung logger or a stuck output; it is called stuck if it repeats it through the next window too), and that reading is inconsistent with the other sensors': %s; the window is solved without it. Check the sensor's logger and output", name, why[k])))
						continue
					}
					r.missing[name] = "inconsistent with the other sensors' readings (knocked, moved, or its offset changed?): " + why[k]
					if coil[name] != "" {
						r.missing[name] = "inconsistent with the other sensors' readings (knocked, moved, its offset changed, or a coil's voltages?): " + why[k]
					}
					alarms = append(alarms, p.alarm(w, AlarmInconsistent, name, reds[k], a.Alarms.MaxChi2,
						fmt.Sprintf("sensor %s's reading is inconsistent with the other sensors': %s; the window is solved without it. Check the sensor (turned or moved on its mount, offset drift)%s", name, why[k], coil[name])))
				}
				e.Missing, e.Sensors, e.Samples = r.missing, len(r.used), r.samples
				jred = judge(r, out)
			}
		}
	}
	if !math.IsNaN(jred) {
		p.setLevel(AlarmDegraded, "", jred) // judged: a held degraded fit may clear
		p.inconsistentDeadband(r, jred)
	}
	e.RMS, e.Chi2, e.DOF, e.Background = out.RMS, out.Chi2, out.DOF, out.Background
	e.Quality = "good"
	// scale widens a degraded window's sigmas by its misfit (see
	// Estimate.SigmaScale).
	scale := 1.0
	if jred > a.Alarms.MaxChi2 {
		e.Quality = "degraded"
		worst := ""
		if s := p.worstSensors(r); s != "" {
			worst = "; the sensors the fit misses most, with the share of the misfit that leaving each out removes: " + s
		}
		model := "; a misfit spread over several sensors points to a conductor the thin-line model does not describe (a flat bar, a bend or another source close to the sensors: a line's field differs from a strip's of width w at distance d by about (w/d)^2/12; or, in AC, a conducting enclosure or screen between the conductors and the sensors, which shields and turns the field) or to a wrong geometry, one at a single sensor to that sensor (moved, turned, its offset changed)"
		if fr := r.frozenUsed(a); fr != "" {
			model = "; " + fr + " repeated one reading on every axis through the window (frozen: a hung logger or a stuck output, called stuck if it repeats it through the next window too): its readings are likely the misfit; check its logger and output"
		}
		if a.Noise > 0 {
			scale = math.Sqrt(jred)
			e.SigmaScale = scale
			alarms = append(alarms, p.alarm(w, AlarmDegraded, "", jred, a.Alarms.MaxChi2,
				fmt.Sprintf("the readings miss the held geometry by %.3g times the stated noise, more than the %.3g times allowed: the window's uncertainties are widened by that factor (reduced chi-square %.3g above %.3g)%s%s",
					scale, math.Sqrt(a.Alarms.MaxChi2), jred, a.Alarms.MaxChi2, worst, model)))
		} else {
			// The sigmas already come from the residuals (noise = 0): not
			// widened again, but the model's error is not noise.
			alarms = append(alarms, p.alarm(w, AlarmDegraded, "", jred, a.Alarms.MaxChi2,
				fmt.Sprintf("the readings miss the held geometry by %.3g times their own scatter within the window, more than the %.3g times allowed (reduced chi-square %.3g above %.3g against it): with noise = 0 the uncertainties come from the fit's residuals, which take the model's error for noise, so they understate it%s%s",
					math.Sqrt(jred), math.Sqrt(a.Alarms.MaxChi2), jred, a.Alarms.MaxChi2, worst, model)))
		}
	}
	if e.Quality == "good" && len(r.missing) > 0 {
		e.Quality = "partial" // a sensor short of samples or left out: see Missing
	}
	misfit := 0.0 // a degraded window's misfit, times the noise
	if jred > a.Alarms.MaxChi2 {
		misfit = math.Sqrt(jred)
	}
	if imp, byMisfit := p.implausible(w, r, out, misfit); len(imp) > 0 {
		if !byMisfit {
			e.Quality = "implausible"
		} // else the window stays "degraded": its misfit explains the checks
		for _, al := range imp {
			e.Implausible = append(e.Implausible, al.Message)
		}
		alarms = append(alarms, imp...)
	}
	prev := make(map[string]float64, len(p.prev))
	for k, v := range p.prev {
		prev[k] = v
	}
	prevEnd := make(map[string]float64, len(p.prevEnd))
	for k, v := range p.prevEnd {
		prevEnd[k] = v
	}
	// The held geometry's error, in quadrature with the window's noise.
	gCur, gPhase, gCov := p.geometrySigmas(&r.in, len(p.names))
	var split *windowSplit
	if a.Mode == "ac" {
		split = p.windowChangeAC(r)
	} else {
		split = p.windowChange(r)
	}
	if split != nil {
		e.Change = &WindowChange{At: split.at, Sigmas: split.sigmas}
		for i, name := range p.names {
			e.Change.Conductors = append(e.Change.Conductors, ChangeLevel{Name: name,
				Before: split.before.Current[i], BeforeSigma: split.before.CurrentSigma[i],
				After: split.after.Current[i], AfterSigma: split.after.CurrentSigma[i],
				PhaseBefore: phaseOf(split.before, i), PhaseAfter: phaseOf(split.after, i)})
		}
	}
	harm := p.harmonicCurrents(r, scale)
	byName := map[string]complex128{}
	// A window with currents that does not follow the previous one
	// (a data outage, failed windows between) is compared with it across
	// the gap: marked, and its step alarms say so.
	// A degraded window's currents may have traded current between
	// conductors (the model misses the field): its step alarms say so
	// (misfit, above).
	prevMisfit := p.prevMisfit
	gap := 0.0
	if p.prevAt > 0 && len(p.prev) > 0 {
		if g := w.Start - p.prevAt; g > 0.5*(w.End-w.Start) {
			gap = g
			e.AfterGap = g
		}
	}
	for i, name := range p.names {
		c := ConductorEstimate{Name: name, Current: out.Current[i], CurrentSigma: out.CurrentSigma[i] * scale}
		if gCur != nil {
			c.CurrentSigmaGeometry = gCur[i]
			c.CurrentSigma = math.Hypot(c.CurrentSigma, gCur[i])
		}
		ph := 0.0
		if out.Phase != nil {
			v, s := out.Phase[i], math.Min(180, math.Hypot(out.PhaseSigma[i]*scale, r.refSigma))
			if gPhase != nil {
				g := math.Min(180, gPhase[i])
				s = math.Min(180, math.Hypot(s, g))
				c.PhaseSigmaGeometry = &g
			}
			c.Phase, c.PhaseSigma = &v, &s
			ph = v
		}
		e.Conductors = append(e.Conductors, c)
		byName[name] = complex(c.Current*math.Cos(ph*math.Pi/180), c.Current*math.Sin(ph*math.Pi/180))
		total := 0.0
		if i < len(harm) {
			c.Harmonics = harm[i]
			tot, ts := totalRMS(c.Current, out.CurrentSigma[i]*scale, harm[i])
			if gCur != nil && c.Current > 0 {
				// The geometry's error scales every harmonic alike.
				ts = math.Hypot(ts, gCur[i]*tot/c.Current)
			}
			c.CurrentTotal, c.CurrentTotalSigma = &tot, &ts
			total = tot
			e.Conductors[len(e.Conductors)-1] = c
		}
		alarms = append(alarms, p.currentAlarms(w, i, name, c.Current, total, split, gap, misfit)...)
	}
	e.CurrentCovariance = currentCovariance(out.CurrentCov, scale, gCov, len(p.names))
	alarms = append(alarms, p.shareAlarms(w, e)...)
	prevAt := p.prevAt
	p.prevAt, p.prevMisfit = w.End, misfit
	if len(a.Alarms.Balance) > 1 && a.Alarms.MaxImbalance > 0 {
		// The currents are summed along one direction, the first balance
		// conductor's: a conductor whose direction points the other way
		// (a return described in the direction its current flows back)
		// counts with its sign turned, so a balanced go and return sum
		// to zero however their directions are written.
		var sum complex128
		all := true
		var ref [3]float64
		for k, n := range a.Alarms.Balance {
			v, ok := byName[n]
			all = all && ok
			d := p.dirOf(n)
			if k == 0 {
				ref = d
			} else if d[0]*ref[0]+d[1]*ref[1]+d[2]*ref[2] < 0 {
				v = -v
			}
			sum += v
		}
		imb := cmplxAbs(sum)
		if all {
			p.setLevel(AlarmImbalance, "", imb)
		}
		if all && imb > a.Alarms.MaxImbalance {
			alarms = append(alarms, p.alarm(w, AlarmImbalance, "", imb, a.Alarms.MaxImbalance, imbalanceMessage(a.Mode, a.Alarms.Balance, imb)))
		}
	}
	if a.Mode == "ac" {
		e.Caution = NetCurrentCaution
	}
	if what := nonFiniteEstimate(e, alarms); what != "" {
		// Not encodable (JSON has no infinities): the window fails
		// rather than stopping the asset. The step alarm's previous
		// currents are left as they were before the window.
		p.solveErr = fmt.Errorf("the estimate has a non-finite %s", what)
		p.prev, p.prevEnd, p.prevAt, p.prevMisfit = prev, prevEnd, prevAt, prevMisfit
		return p.failed(w, e, r.alarms, fmt.Sprintf("no estimate: the window's estimate came out with a non-finite %s (see the log)", what))
	}
	return e, alarms
}

// imbalanceMessage words an imbalance alarm of imb A for what the balance
// conductors are: a go and return pair, whose currents differ by what
// leaves the circuit, or three or more conductors (the phases of a
// three-phase circuit, a feed and its returns), whose sum (for AC their
// phasor sum) is the residual current, which an unbalanced load as well
// as a leak gives wherever the circuit's neutral or other return is not
// among them.
func imbalanceMessage(mode string, balance []string, imb float64) string {
	if len(balance) == 2 {
		return fmt.Sprintf("go and return currents differ by %.4g A (leakage?)", imb)
	}
	sum := "sum"
	if mode == "ac" {
		sum = "phasor sum"
	}
	return fmt.Sprintf("the %s of the currents of %s (the residual current) is %.4g A: an unbalanced load returning by a neutral not among them, or leakage (current returning by another path)", sum, strings.Join(balance, ", "), imb)
}

// currentCovariance is the estimate's covariance of the n conductors'
// currents, A^2 (Estimate.CurrentCovariance): the solve's (noise, c),
// widened by scale as the sigmas are, plus the held geometry's share g
// (nil: none). Its diagonal is the conductors' current_sigma_a squared.
// nil when the estimator gives no covariance.
func currentCovariance(c [][]float64, scale float64, g [][]float64, n int) [][]float64 {
	if len(c) != n {
		return nil
	}
	out := make([][]float64, n)
	for i := range n {
		if len(c[i]) != n {
			return nil
		}
		out[i] = make([]float64, n)
		for j := range n {
			out[i][j] = c[i][j] * scale * scale
			if len(g) == n {
				out[i][j] += g[i][j]
			}
		}
	}
	return out
}

// failed makes e a failed estimate, without currents or fit results, with
// the reduction's alarms (silent and stuck sensors) and a degraded
// alarm saying msg.
func (p *processor) failed(w *window, e *Estimate, alarms []Alarm, msg string) (*Estimate, []Alarm) {
	e.Quality = "failed"
	e.Conductors = []ConductorEstimate{}
	e.RMS, e.Chi2, e.DOF, e.Background, e.SigmaScale, e.Implausible = 0, 0, 0, nil, 0, nil
	e.Chi2Geometry, e.Change, e.CurrentCovariance, e.Caution = 0, nil, nil, ""
	out := append([]Alarm(nil), alarms...)
	al := p.alarm(w, AlarmDegraded, "", 0, 0, msg)
	al.fitFailed = true
	return e, append(out, al)
}

// nonFiniteOutput names the first non-finite number of an estimator's
// output ("" when every one is finite).
func nonFiniteOutput(out *SolveOutput) string {
	if out == nil {
		return ""
	}
	bad := func(v ...float64) bool {
		for _, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return true
			}
		}
		return false
	}
	switch {
	case bad(out.Current...):
		return "current"
	case bad(out.CurrentSigma...):
		return "current sigma"
	case bad(out.Phase...) || bad(out.PhaseSigma...):
		return "phase"
	case out.Background != nil && bad(out.Background[:]...):
		return "background"
	case bad(out.Chi2):
		return "chi-square"
	case bad(out.RMS):
		return "RMS residual"
	}
	return ""
}

// nonFiniteEstimate names the first non-finite number of an estimate or
// its alarms ("" when all are finite, as JSON needs).
func nonFiniteEstimate(e *Estimate, alarms []Alarm) string {
	bad := func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) }
	badp := func(x *float64) bool { return x != nil && bad(*x) }
	if bad(e.RMS) || bad(e.Chi2) || bad(e.SigmaScale) || bad(e.Frequency) || bad(e.FrequencySigma) {
		return "fit result"
	}
	if e.Background != nil && (bad(e.Background[0]) || bad(e.Background[1]) || bad(e.Background[2])) {
		return "background"
	}
	for _, c := range e.Conductors {
		if bad(c.Current) || bad(c.CurrentSigma) || bad(c.CurrentSigmaGeometry) || badp(c.Phase) || badp(c.PhaseSigma) || badp(c.PhaseSigmaGeometry) {
			return "current of conductor " + c.Name
		}
	}
	for _, row := range e.CurrentCovariance {
		for _, v := range row {
			if bad(v) {
				return "current covariance"
			}
		}
	}
	for _, a := range alarms {
		if bad(a.Value) || bad(a.Threshold) {
			return a.Kind + " alarm value"
		}
	}
	return ""
}

// largestField names the used sensor whose reduced reading is largest
// ("" when none is used).
func (p *processor) largestField(r *reduced) string {
	best, name := -1.0, ""
	for k, i := range r.used {
		if m := p.fieldAt(r, k); m > best || math.IsNaN(m) {
			best, name = m, p.asset.Sensors[i].Name
		}
	}
	return name
}

// fieldOf is the magnitude of the reduced reading of used sensor name.
func (p *processor) fieldOf(r *reduced, name string) float64 {
	for k, i := range r.used {
		if p.asset.Sensors[i].Name == name {
			return p.fieldAt(r, k)
		}
	}
	return math.NaN()
}

// fieldAt is the magnitude of the k-th used sensor's reduced reading (the
// mean field for DC, the phasor's for AC), computed without overflow.
func (p *processor) fieldAt(r *reduced, k int) float64 {
	if k < len(r.in.Fields) {
		f := r.in.Fields[k]
		return math.Hypot(math.Hypot(f[0], f[1]), f[2])
	}
	if k < len(r.in.Phasors) {
		f := r.in.Phasors[k]
		return math.Hypot(math.Hypot(cmplxAbs(f[0]), cmplxAbs(f[1])), cmplxAbs(f[2]))
	}
	return math.NaN()
}

// Checks of an implausible window, the subjects of its implausible alarms.
const (
	checkEarthField = "earth-field"
	checkChi2       = "chi2"
)

// implausible returns an implausible alarm for each check of the window's
// readings that fails, none when they look like magnetometer readings in
// nanotesla:
//
//   - earth-field: the Earth's field seen by the sensors (for DC the
//     uniform background fitted with the currents, which the conductors'
//     own fields do not enter; for AC, when earth_field is given, the
//     median of the sensors' mean total fields) outside the asset's
//     earth_field range. Readings in microtesla sent as nanotesla put the
//     geomagnetic field near 50 instead of 50,000. A DC estimator that
//     fits no background is not checked.
//   - chi2: with the asset's noise given, a chi-square far below its
//     degrees of freedom (chi2Implausible): the residuals are far smaller
//     than the noise says, which is what readings scaled down by a wrong
//     unit give (the noise stated in nT, the readings 1000 times too small).
//
// misfit, above 0 on a degraded window, is how many times the noise the
// readings miss the held geometry by: the background fitted with the
// currents then absorbs part of the model's misfit (a bend held as two
// lines put it at 1.1e5 nT), so a fitted background outside earth_field
// but within misfitFieldFactor of it is said to be that, not a unit
// error, and byMisfit is true when every failed check is so explained
// (the window stays "degraded", the cause listed first).
func (p *processor) implausible(w *window, r *reduced, out *SolveOutput, misfit float64) (alarms []Alarm, byMisfit bool) {
	a := p.asset
	byMisfit = true
	if a.fieldHi > 0 {
		level, what := math.NaN(), ""
		if out.Background != nil {
			b := out.Background
			level, what = math.Hypot(math.Hypot(b[0], b[1]), b[2]), "the fitted uniform background"
		} else if a.Mode == "ac" && len(r.totals) > 0 {
			v := append([]float64(nil), r.totals...)
			sort.Float64s(v)
			level, what = v[len(v)/2], "the sensors' median mean total field"
		}
		if !math.IsNaN(level) {
			p.setLevel(AlarmImplausible, checkEarthField, level)
		}
		if !math.IsNaN(level) && (level < a.fieldLo || level > a.fieldHi) {
			th := a.fieldLo
			if level > a.fieldHi {
				th = a.fieldHi
			}
			msg := fmt.Sprintf("the Earth's field seen by the sensors (%s) is %.4g nT, outside earth_field %g to %g nT: fields in the wrong unit (sent as nT)? set earth_field = [0, 0] for sensors without the static field",
				what, level, a.fieldLo, a.fieldHi)
			if misfit > 0 && out.Background != nil {
				off := math.Max(level/a.fieldHi, a.fieldLo/level) // times beyond the range
				if off <= misfitFieldFactor {
					msg = fmt.Sprintf("the window is degraded (the readings miss the held geometry by %.3g times the noise) and the uniform background fitted with the currents, %.4g nT, is outside earth_field %g to %g nT: "+
						"the background absorbs the model's misfit, so it is not the Earth's field here; mend the held geometry (see the degraded alarm), after which it reads the Earth's field again",
						misfit, level, a.fieldLo, a.fieldHi)
				} else {
					byMisfit = false
					msg = fmt.Sprintf("the uniform background fitted with the currents is %.4g nT, %.3g times outside earth_field %g to %g nT, in a degraded window (the readings miss the held geometry by %.3g times the noise): "+
						"the background absorbs part of the model's misfit, but a level this far off is more likely fields in the wrong unit (sent as nT)? set earth_field = [0, 0] for sensors without the static field",
						level, off, a.fieldLo, a.fieldHi, misfit)
				}
			} else {
				byMisfit = false
			}
			alarms = append(alarms, p.alarm(w, AlarmImplausible, checkEarthField, level, th, msg))
		}
	}
	if a.Noise > 0 && out.DOF > 0 {
		p.setLevel(AlarmImplausible, checkChi2, out.Chi2/float64(out.DOF))
	}
	if a.Noise > 0 && out.DOF > 0 && chi2Implausible(out.Chi2, out.DOF) {
		red := out.Chi2 / float64(out.DOF)
		byMisfit = false
		alarms = append(alarms, p.alarm(w, AlarmImplausible, checkChi2, red, maxImplausibleChi2,
			fmt.Sprintf("the readings stray from the fit by only %.3g times the stated noise of %g nT, far less than noise would: fields in the wrong unit, or the noise overstated? (reduced chi-square %.3g on %d degrees of freedom)",
				math.Sqrt(red), a.Noise, red, out.DOF)))
	}
	return alarms, byMisfit && len(alarms) > 0
}

// misfitFieldFactor is how many times beyond earth_field a degraded
// window's fitted background may lie and still be taken for the model's
// misfit absorbed (implausible): a unit error puts it a thousand times
// off (microtesla or picotesla sent as nanotesla), a misfit of a bend or
// bar near the sensors a few times (rv22a's bend: 1.4 times).
const misfitFieldFactor = 100

// maxImplausibleChi2 and minChi2Tail bound chi2Implausible.
const (
	maxImplausibleChi2 = 0.01
	minChi2Tail        = 1e-6
)

// chi2Implausible reports whether a fit's chi-square is too small for
// its degrees of freedom to come from the stated noise: the reduced
// chi-square below maxImplausibleChi2 (residuals a tenth of the noise or
// less) and a lower-tail probability of the chi-square distribution with
// dof degrees of freedom below minChi2Tail, so that few degrees of
// freedom, whose chi-square is often small by chance (one in 12 below
// 0.01 with one degree of freedom), are not flagged.
func chi2Implausible(chi2 float64, dof int) bool {
	if !(chi2/float64(dof) < maxImplausibleChi2) {
		return false
	}
	return distuv.ChiSquared{K: float64(dof)}.CDF(chi2) < minChi2Tail
}

func cmplxAbs(c complex128) float64 { return math.Hypot(real(c), imag(c)) }

// dirOf is the direction along which conductor name's current is signed
// (zero when not known).
func (p *processor) dirOf(name string) [3]float64 {
	for i, n := range p.names {
		if n == name && i < len(p.dirs) {
			return p.dirs[i]
		}
	}
	return [3]float64{}
}

func (p *processor) alarm(w *window, kind, subject string, value, threshold float64, msg string) Alarm {
	return Alarm{Asset: p.asset.Name, Kind: kind, Window: w.Index, Start: w.Start, End: w.End,
		Subject: subject, Value: value, Threshold: threshold, Message: msg, Revision: p.revision}
}

// harmonicCurrents solves each harmonic of an AC window's field phasors
// (reduced.harm) for the conductors' harmonic currents with the
// window's estimator (the geometry held as for the fundamental; the
// quasi-static field of a line is the same at 100-250 Hz as at 50 Hz),
// the sigmas widened by scale as the fundamental's. It returns, per
// conductor, its harmonics in order; nil for DC, when none was fitted,
// or when a harmonic's solve fails.
func (p *processor) harmonicCurrents(r *reduced, scale float64) [][]HarmonicCurrent {
	if p.asset.Mode != "ac" || len(r.harm) == 0 || p.est == nil {
		return nil
	}
	out := make([][]HarmonicCurrent, len(p.names))
	for h, ph := range r.harm {
		if len(ph) != len(r.in.Points) {
			return nil
		}
		in := SolveInput{Points: r.in.Points, Phasors: ph, Sigma: r.in.Sigma, Sigmas: r.in.Sigmas}
		o, err := p.est.Solve(&in)
		if err != nil || len(o.Current) != len(p.names) || nonFiniteOutput(o) != "" {
			return nil
		}
		for i := range p.names {
			hc := HarmonicCurrent{Order: h + 2, Current: math.Abs(o.Current[i]), CurrentSigma: o.CurrentSigma[i] * scale, PhaseSigma: 180}
			if i < len(o.Phase) && i < len(o.PhaseSigma) {
				// The reference's error turns harmonic h by h times
				// the fundamental's.
				hc.Phase = o.Phase[i]
				hc.PhaseSigma = math.Min(180, math.Hypot(o.PhaseSigma[i]*scale, float64(h+2)*r.refSigma))
			}
			out[i] = append(out[i], hc)
		}
	}
	return out
}

// totalRMS returns the total RMS current of a conductor whose
// fundamental is fund +- fundSigma (A RMS) with harmonics harm, and its
// one-sigma error: sqrt(fund^2 + sum(I_h^2 - 2 sigma_h^2)), each
// harmonic's square less the mean its noise adds (a phasor of noise
// sigma_h in each quadrature adds 2 sigma_h^2 to the squared magnitude),
// at least the fundamental's magnitude; the error propagated to first
// order, sqrt(sum (I_k sigma_k)^2) / total.
func totalRMS(fund, fundSigma float64, harm []HarmonicCurrent) (float64, float64) {
	sum := fund * fund
	v := fund * fund * fundSigma * fundSigma
	for _, hc := range harm {
		sum += hc.Current*hc.Current - 2*hc.CurrentSigma*hc.CurrentSigma
		v += hc.Current * hc.Current * hc.CurrentSigma * hc.CurrentSigma
	}
	tot := math.Max(math.Sqrt(math.Max(sum, 0)), math.Abs(fund))
	if tot == 0 {
		return 0, fundSigma
	}
	return tot, math.Sqrt(v) / tot
}
