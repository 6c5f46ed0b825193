package live

import (
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"

	"undercurrent/calibrate"
)

// acSpikeSigmas is how far, in robust standard deviations, a reading of
// an AC window must depart from the waveform fitted to the sensor's
// window to be left out as a spike (acSpikes): the DC windows' cut-off
// (dcSpikeSigmas), for the same reason, so that noise is not cut.
const acSpikeSigmas = dcSpikeSigmas

// acDespikeMin is the fewest samples an AC window's sensor needs to be
// despiked, as for DC (dcDespikeMin), and at least acSamplesPerParam per
// column of the waveform model.
const acDespikeMin = dcDespikeMin

// acSamplesPerParam is the fewest samples per column of the waveform
// model that acSpikes fits: with fewer, a single reading pulls the fit
// towards itself by a large share of its departure (its leverage, about
// columns / samples) and the robust spread of the residuals is too
// uncertain to cut at.
const acSamplesPerParam = 4

// acMaxHarmonic is the highest harmonic of the window's frequency in the
// waveform model of acSpikes: mains fields carry odd harmonics (the third
// and fifth most), which a fundamental-only fit would leave in the
// residuals and so raise the spread the spikes are judged against.
const acMaxHarmonic = 5

// acMaxSpikeShare is the largest share of a sensor's readings that
// acSpikes marks: when more depart from the fitted waveform, the
// model does not describe the window (the current changed within it in a
// way the model does not follow), and none is left out.
const acMaxSpikeShare = 0.25

// acDespikeRounds bounds the fit-and-judge rounds of acSpikes, and
// acTrimRounds its trimmed starting steps.
const (
	acDespikeRounds = 10
	acTrimRounds    = 4
)

// acCleanRatio is the largest ratio of an axis's robust standard
// deviation of the residuals (1.4826 times the median absolute residual)
// to the stated noise per reading at which acSpikes takes a window's
// plain fit as clean: for Gaussian noise the two agree within a few
// percent over a thousand readings and about 20 % over the fewest
// readings despiked (the median's relative sigma is about 1.25/sqrt(n),
// from memory).
const acCleanRatio = 1.5

// acSpikes marks the readings of one sensor's AC window that are spikes
// (a logger glitch, a bit error, a short burst of them: one reading of
// 1e5 nT among 1000 moved the window's phasor by sqrt(2) spike/n, 140 nT,
// and a conductor's current by an ampere). The window's waveform is
// fitted to every axis by least squares at freq (Hz): the fundamental,
// its harmonics up to acMaxHarmonic below the sampling limit
// (nyquistFactor), a quadratic drift of the static field, and a linear
// and quadratic change of the fundamental's amplitude and phase (the
// current changing within the window); with drift, each harmonic's too
// (for a pass at a frequency the grid may be off: a harmonic's phase then
// drifts h times as fast as the fundamental's). A reading is marked when the
// residual of any axis departs from zero by more than acSpikeSigmas
// robust standard deviations (1.4826 times the median absolute residual
// of the readings fitted, the axis's own), and the fit is repeated
// without the readings marked until they no longer change; the first fit
// is found by trimming (see below). It returns nil when none is marked,
// when the sensor has too few samples, or when more than acMaxSpikeShare
// of them would be; clean is set when its first plain fit found the
// window clean (which does not depend on drift).
func acSpikes(d *sensorData, freq, noise float64, drift bool) (marks []bool, clean bool) {
	n := len(d.t)
	if n < acDespikeMin || !(freq > 0) {
		return nil, false
	}
	span := d.t[n-1] - d.t[0]
	if !(span > 0) {
		return nil, false
	}
	rate := float64(n-1) / span
	H := acHarmonics(rate, freq)
	cols := func(h int) int { return 9 + 2*(h-1) }
	for H > 1 && n < acSamplesPerParam*cols(H) {
		H--
	}
	p0 := cols(H) // without the harmonics' changes
	if n < acSamplesPerParam*p0 {
		return nil, false
	}
	// With drift, the changes of harmonics 2 to Hd, as many as the
	// readings allow beside the rest (four columns each).
	Hd := 1
	if drift {
		Hd = H
		for Hd > 1 && n < acSamplesPerParam*(p0+4*(Hd-1)) {
			Hd--
		}
	}
	p := p0 + 4*(Hd-1)
	// The basis at every reading; time about the window's middle, in
	// half-spans, so that the columns are of order one.
	var tm float64
	for _, t := range d.t {
		tm += t - d.t[0]
	}
	tm /= float64(n)
	u := make([]float64, n)
	var m2 float64
	for i, t := range d.t {
		u[i] = (t - d.t[0] - tm) / (span / 2)
		m2 += u[i] * u[i]
	}
	m2 /= float64(n)
	basis := mat.NewDense(n, p, nil)
	w := 2 * math.Pi * freq
	for i, t := range d.t {
		row := basis.RawRowView(i)
		wtau := w * (t - d.t[0])
		s, c := math.Sincos(wtau)
		q := u[i]*u[i] - m2
		row[0], row[1], row[2], row[3], row[4] = c, s, 1, u[i], q
		row[5], row[6], row[7], row[8] = u[i]*c, u[i]*s, q*c, q*s
		acHarmonicCols(row[9:], wtau, H)
		// With drift, each harmonic's linear and quadratic change, as
		// the fundamental's: off the window's frequency (the site's,
		// before the window's is found) a harmonic's phase drifts h
		// times as fast as the fundamental's.
		for j, v := range row[9 : 9+2*(Hd-1)] {
			row[p0+j] = u[i] * v
			row[p0+2*(Hd-1)+j] = q * v
		}
	}
	axes := [3][]float64{d.bx, d.by, d.bz}
	for _, col := range axes {
		for _, v := range col {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, false
			}
		}
	}
	// fit fits the model to the readings not in drop and returns every
	// reading's score: its largest residual over the axes in robust
	// standard deviations of the axis's residuals of the readings fitted
	// (1.4826 times their median absolute value, found by selection,
	// calibrate.SelectKth: the value a sort puts in the middle), which it
	// keeps per axis in spread. The work buffers are the same for every
	// round.
	score := make([]float64, n)
	res := make([][]float64, 3)
	for k := range res {
		res[k] = make([]float64, n)
	}
	abs := make([]float64, 0, n)
	var spread [3]float64
	var X, Y, beta, pred mat.Dense
	var qr mat.QR
	fit := func(drop []bool, kept, pc int) bool {
		X.ReuseAs(kept, pc)
		Y.ReuseAs(kept, 3)
		r := 0
		for i := range n {
			if drop[i] {
				continue
			}
			X.SetRow(r, basis.RawRowView(i)[:pc])
			for k := range 3 {
				Y.Set(r, k, axes[k][i])
			}
			r++
		}
		qr.Factorize(&X)
		beta.Reset()
		if err := qr.SolveTo(&beta, false, &Y); err != nil {
			X.Reset()
			Y.Reset()
			return false
		}
		pred.Reset()
		pred.Mul(basis.Slice(0, n, 0, pc), &beta)
		X.Reset()
		Y.Reset()
		clear(score)
		for k := range 3 {
			scale := 0.0
			abs = abs[:0]
			for i := range n {
				res[k][i] = axes[k][i] - pred.At(i, k)
				if !drop[i] {
					scale = math.Max(scale, math.Abs(axes[k][i]))
					abs = append(abs, math.Abs(res[k][i]))
				}
			}
			if slices.ContainsFunc(abs, math.IsNaN) {
				return false
			}
			// Noise-free readings leave residuals of rounding only: a
			// floor far above it and far below any sensor's noise.
			sigma := math.Max(1.4826*calibrate.SelectKth(abs, len(abs)/2), 1e-9*scale)
			if !(sigma > 0) || math.IsInf(sigma, 0) {
				return false
			}
			spread[k] = sigma
			for i := range n {
				score[i] = math.Max(score[i], math.Abs(res[k][i])/sigma)
			}
		}
		for _, v := range score {
			if math.IsNaN(v) {
				return false
			}
		}
		return true
	}
	// First one plain fit to every reading, of the model without the
	// harmonics' changes (p0 columns, all that a window at its own
	// frequency needs): when no reading stands out of it, by half the cut-off, and each axis's robust spread is within
	// acCleanRatio of the stated noise per reading (a burst that pulled
	// the fit towards itself hides in the fit's own spread, but widens it
	// far beyond the noise: 52 of 250 readings of -5e4 nT did), the window
	// is clean and the rounds below, which would mark nothing, are skipped
	// (they took most of an AC window's processing). Without a stated
	// noise, or with readings noisier than stated, every window takes the
	// rounds.
	drop := make([]bool, n)
	if !fit(drop, n, p0) {
		return nil, false
	}
	if noise > 0 && slices.Max(score) <= acSpikeSigmas/2 && slices.Max(spread[:]) <= acCleanRatio*noise {
		return nil, true
	}
	// Start: the least-trimmed-squares concentration steps. A burst pulls
	// the least squares fit towards itself, so that the spread of the
	// residuals grows with it and hides it from a cut at acSpikeSigmas
	// (one of 150 readings of 5e4 nT among 1000 did); each step fits the
	// share 1 - acMaxSpikeShare of the readings that the previous fit
	// missed least, which brings the fit to the waveform of the clean
	// readings when a burst is shorter than that share. Its first step
	// fits every reading with the whole model.
	left := 0
	sorted := make([]float64, n)
	next := make([]bool, n)
	keep := n - int(acMaxSpikeShare*float64(n))
	for range acTrimRounds {
		if !fit(drop, n-left, p) {
			return nil, false
		}
		copy(sorted, score)
		limit := calibrate.SelectKth(sorted, keep-1)
		nextLeft := 0
		for i, v := range score {
			next[i] = v > limit
			if next[i] {
				nextLeft++
			}
		}
		same := slices.Equal(next, drop)
		drop, next = next, drop
		left = nextLeft
		if same {
			break
		}
	}
	// Then judge every reading against the fit to those kept, and fit
	// again to those within acSpikeSigmas, until they no longer change.
	for range acDespikeRounds {
		if !fit(drop, n-left, p) {
			return nil, false
		}
		nextLeft := 0
		for i, v := range score {
			next[i] = !(v <= acSpikeSigmas)
			if next[i] {
				nextLeft++
			}
		}
		if float64(nextLeft) > acMaxSpikeShare*float64(n) {
			return nil, false
		}
		same := slices.Equal(next, drop)
		drop, next = next, drop
		left = nextLeft
		if same {
			break
		}
	}
	if left == 0 {
		return nil, false
	}
	return drop, false
}

// despikeACWindow leaves out of the AC window's sensors use the readings
// that are spikes at freq (acSpikes), counting them in r, and reports
// whether it left any out (drift: the harmonics' changes are fitted
// too, see acSpikes), and which sensors' windows its first plain fit
// found clean; the sensors in skip are taken as clean and not despiked
// (found so by an earlier pass at the same frequency). A reading that departs at the same time as a
// reading of another sensor (within a quarter of the period, or one and
// a half sample intervals of either sensor) is kept: the conductors'
// field changed (a current switched within the window, which the model of
// acSpikes does not follow), seen by every sensor near them, while a
// spike in a raw waveform is its own sensor's.
func despikeACWindow(use []sensorData, freq, noise float64, drift bool, skip []bool, r *reduced, names []SensorConfig) (bool, []bool) {
	marks := make([][]float64, len(use)) // each sensor's marked times
	flags := make([][]bool, len(use))
	clean := make([]bool, len(use))
	dt := make([]float64, len(use))
	for j := range use {
		d := &use[j]
		if j < len(skip) && skip[j] {
			clean[j] = true
		} else {
			flags[j], clean[j] = acSpikes(d, freq, noise, drift)
		}
		if n := len(d.t); n > 1 {
			dt[j] = (d.t[n-1] - d.t[0]) / float64(n-1)
		}
		for i, f := range flags[j] {
			if f {
				marks[j] = append(marks[j], d.t[i])
			}
		}
	}
	any := false
	for j := range use {
		if flags[j] == nil {
			continue
		}
		d := &use[j]
		left := 0
		for i, f := range flags[j] {
			if !f {
				continue
			}
			for q := range use {
				if q == j || len(marks[q]) == 0 {
					continue
				}
				tol := math.Max(0.25/freq, 1.5*math.Max(dt[j], dt[q]))
				k := sort.SearchFloat64s(marks[q], d.t[i]-tol)
				if k < len(marks[q]) && marks[q][k] <= d.t[i]+tol {
					flags[j][i] = false // seen by another sensor
					break
				}
			}
			if flags[j][i] {
				left++
			}
		}
		if left == 0 {
			continue
		}
		n := len(d.t)
		t := make([]float64, 0, n-left)
		bx, by, bz := make([]float64, 0, cap(t)), make([]float64, 0, cap(t)), make([]float64, 0, cap(t))
		for i := range n {
			if !flags[j][i] {
				t, bx, by, bz = append(t, d.t[i]), append(bx, d.bx[i]), append(by, d.by[i]), append(bz, d.bz[i])
			}
		}
		d.t, d.bx, d.by, d.bz = t, bx, by, bz
		r.addSpikes(names[d.i].Name, left)
		any = true
	}
	return any, clean
}
