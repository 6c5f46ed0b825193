package calibrate

import "math"

// The local quadratic of trendSpikes follows a line current's anomaly only
// when it spans several readings: the field of a line h below the sensor
// falls to half in h either side, and with h under about 2.5 reading
// spacings (a shallow cable logged at walking pace: a line 0.35 m from the
// sensor at 0.25 m spacing) the quadratic, fitted without the reading and
// its two next neighbours, misses the peak by hundreds of nT and took the
// peak's readings for spikes on every traverse, while its scale, swollen
// by that misfit, let real spikes on the anomaly's flanks pass.
//
// Where the quadratic found a spike, the reading is judged again against
// the shape a line current gives, fitted to all
// its neighbours in the window, its next neighbours too, with all columns
// at once: each column a quadratic background plus
//
//	α w/((u-u0)² + w²) + β (u-u0)/((u-u0)² + w²)
//
// in the row offset u, with the line's crossing u0 and its distance w (in
// reading spacings; from lineMinWidth up) shared by the columns and found
// on a grid. A long straight current's field across a traverse has just
// that shape in every component (Biot-Savart: B ∝ (x ê2 − h ê1)/(x² + h²)
// in the plane across the line, x the distance along the traverse times
// the sine of the crossing angle). Neighbours departing from the fit by
// more than trendDropCut times the noise are left out one at a time, the
// worst first (other spikes). When the fit follows the neighbours to within
// lineReviewScale times the noise in every column, its value at the
// reading decides: a spike when the reading departs from it by more than
// Threshold scales (the neighbours' scale about the fit, with the fit's
// prediction variance at the reading); otherwise the quadratic's verdict
// stands. A one-reading spike is not such a shape: its neighbours, next
// ones included, do not follow it, so the fit to them does not predict it.
//
// A column where the quadratic followed the field (its scale within
// lineReviewScale times the noise) and the reading departs from it by
// more than overwhelmingFactor times the cut-off keeps the quadratic's
// verdict (clearSpike), and a reading with only such columns is not
// looked at again. The line fit, with its crossing free, can put a narrow
// line right at the reading, whose value the neighbours then hardly fix
// (g large): its scale there grew to four or five times the noise and a
// spike of 20 times the 5 nT noise on a weak, wide anomaly was kept. The
// look also cost 0.5 to 0.9 ms for each reading, ten times the whole
// filter on a log with 2% spikes. Where the quadratic follows the field
// the line, a quadratic and two more terms, has nothing to add but
// looseness; a marginal flag there (within 1.5 times the cut-off) is still
// looked at, which clears most of the quadratic's false alarms on noise.
// DespikeSettings.AC leaves the look out: a raw waveform in time is no
// traverse.
//
// The noise is the run's own: 1.4826 times the median absolute second
// difference over √6 (a second difference of white noise has variance
// 6σ²), at least Floor.

// lineReviewScale is how many times the run's noise the quadratic's scale
// may be before a reading is judged against the line shape, and the line
// fit's own scale must stay within to be used.
const lineReviewScale = 2

// lineMinWidth is the smallest distance of the line, in reading spacings,
// on the fit's grid: at half a spacing the shape puts a fifth of its peak
// on the next readings, so a spike, which has nothing there, is not fitted
// by it.
const lineMinWidth = 0.5

// lineParams is the number of linear parameters of the line fit per
// column: the quadratic's three and the shape's two.
const lineParams = 5

// runNoise is the noise of a run from its second differences (see above).
func runNoise(c []float64, floor float64) float64 {
	var d []float64
	for i := 1; i+1 < len(c); i++ {
		if v := c[i-1] - 2*c[i] + c[i+1]; finite(v) {
			d = append(d, math.Abs(v))
		}
	}
	if len(d) == 0 {
		return floor
	}
	return math.Max(1.4826*selectMedian(d)/math.Sqrt(6), floor)
}

// lineReview re-judges the readings of the columns as said above. flags[c]
// and scales[c] are trendSpikes' verdicts and scales and departures per
// column; flags is updated in place.
func lineReview(cols [][]float64, flags [][]bool, scales [][][2]float64, ds DespikeSettings) {
	n, K := len(cols[0]), ds.HalfWidth
	if K < 5 || n < 2*lineParams+1 {
		return
	}
	flagged := false
	for _, f := range flags {
		for _, v := range f {
			flagged = flagged || v
		}
	}
	if !flagged {
		return // nothing to re-judge
	}
	noise := make([]float64, len(cols))
	top := 0.0
	for ci, c := range cols {
		noise[ci] = runNoise(c, ds.Floor)
		top = max(top, noise[ci])
	}
	// From a short run the estimate is itself noisy (from 41 readings of
	// 2 nT noise it came out 1.0 nT), and the axes of one sensor are not
	// usually far apart in noise: none is taken as under half the largest.
	for ci := range noise {
		noise[ci] = max(noise[ci], 0.5*top)
	}
	lf := lineFit{okAt: -1}
	for i := range n {
		review := false
		for ci := range cols {
			if !finite(cols[ci][i]) {
				review = false
				break
			}
			if flags[ci][i] {
				review = true
			}
		}
		if review && overwhelming(flags, scales, noise, i, ds) {
			continue
		}
		if !review {
			continue
		}
		lo, hi := i-K, i+K+1
		if lo < 0 {
			lo, hi = 0, hi-lo
		}
		if hi > n {
			lo, hi = max(0, lo-(hi-n)), n
		}
		lf.reset(len(cols))
		left, right := 0, 0
		for j := lo; j < hi; j++ {
			if j == i {
				continue
			}
			ok := true
			for _, c := range cols {
				ok = ok && finite(c[j])
			}
			if !ok {
				continue
			}
			lf.u = append(lf.u, float64(j-i))
			for ci, c := range cols {
				lf.x[ci] = append(lf.x[ci], c[j]-c[i])
			}
			if j < i {
				left++
			} else {
				right++
			}
		}
		if left < 3 || right < 3 || len(lf.u) < 2*lineParams {
			continue
		}
		// The line found for the reading before, one row on, starts the
		// search (the grid across the window is for the first).
		warm := lf.okAt == i-1 && lf.okAt >= 0
		lf.okAt = -1
		dev, s, ok := lf.judge(noise, K, warm)
		if !ok {
			continue
		}
		lf.okAt = i
		for ci := range cols {
			if flags[ci][i] && clearSpike(scales[ci][i], noise[ci], ds) {
				continue
			}
			flags[ci][i] = math.Abs(dev[ci]) > ds.Threshold*math.Max(s[ci], ds.Floor)
		}
	}
}

// lineFit is the line-shape fit of lineReview for one reading: the
// neighbours' row offsets u and, per column, their values x relative to
// the reading's.
type lineFit struct {
	u    []float64
	x    [][]float64
	keep []bool
	r    [][]float64
	// The last reading judged with a good fit (-1 for none), and its
	// line's crossing and distance.
	okAt  int
	u0, w float64
}

func (f *lineFit) reset(nc int) {
	f.u = f.u[:0]
	if len(f.x) != nc {
		f.x = make([][]float64, nc)
		f.r = make([][]float64, nc)
	}
	for c := range f.x {
		f.x[c] = f.x[c][:0]
	}
}

// basis is the fit's functions at row offset u: the quadratic in u/K and
// the line's even and odd shapes about u0 at distance w.
func basis(u, u0, w, K float64) [lineParams]float64 {
	v, d := u/K, u-u0
	q := d*d + w*w
	return [lineParams]float64{1, v, v * v, w / q, d / q}
}

// solveLine fits the kept neighbours with the line at (u0, w) and returns
// the coefficients per column, the sum over columns of the squared
// residuals over the noise squared, and the prediction factor g =
// φ0ᵀ(ΦᵀΦ)⁻¹φ0 at the reading (u = 0); ok is false when singular. With
// resid set the residuals of all the neighbours are left in f.r;
// otherwise (the search, which needs only chi2) chi2 comes from the
// normal equations, Σx² − bᵀΦᵀx, without a second pass.
func (f *lineFit) solveLine(u0, w, K float64, noise []float64, resid bool) (b [3][lineParams]float64, chi2, g float64, ok bool) {
	nc := len(f.x)
	const P = lineParams
	// [N | Φᵀx per column | φ0]
	var a [P][P + 4]float64
	var xx [3]float64
	phxAll := [P][3]float64{}
	if nc > 3 {
		return b, 0, 0, false
	}
	for j, u := range f.u {
		if !f.keep[j] {
			continue
		}
		p := basis(u, u0, w, K)
		for r := range P {
			for c := r; c < P; c++ {
				a[r][c] += p[r] * p[c]
			}
			for ci := range nc {
				a[r][P+ci] += p[r] * f.x[ci][j]
			}
		}
		for ci := range nc {
			xx[ci] += f.x[ci][j] * f.x[ci][j]
		}
	}
	for r := range P {
		for c := 0; c < r; c++ {
			a[r][c] = a[c][r]
		}
		for ci := range nc {
			phxAll[r][ci] = a[r][P+ci]
		}
	}
	p0 := basis(0, u0, w, K)
	for r := range P {
		a[r][P+3] = p0[r]
	}
	scale := a[0][0]
	for c := range P {
		piv := c
		for r := c + 1; r < P; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[piv][c]) {
				piv = r
			}
		}
		a[c], a[piv] = a[piv], a[c]
		if !(math.Abs(a[c][c]) > 1e-10*scale) {
			return b, 0, 0, false
		}
		for r := range P {
			if r != c {
				q := a[r][c] / a[c][c]
				for k := c; k < P+4; k++ {
					a[r][k] -= q * a[c][k]
				}
			}
		}
	}
	for r := range P {
		for ci := range nc {
			b[ci][r] = a[r][P+ci] / a[r][r]
		}
		g += p0[r] * a[r][P+3] / a[r][r]
	}
	if !resid {
		for ci := range nc {
			v := xx[ci]
			for r := range P {
				v -= b[ci][r] * phxAll[r][ci]
			}
			chi2 += max(v, 0) / (noise[ci] * noise[ci])
		}
		return b, chi2, g, true
	}
	for j, u := range f.u {
		p := basis(u, u0, w, K)
		for ci := range nc {
			v := f.x[ci][j]
			for r := range P {
				v -= b[ci][r] * p[r]
			}
			f.r[ci] = append(f.r[ci][:j], v)
			if f.keep[j] {
				chi2 += v * v / (noise[ci] * noise[ci])
			}
		}
	}
	return b, chi2, g, true
}

// best finds the line's (u0, w) that fits the kept neighbours best: with
// wide set, on a grid of whole spacings across the window and widths from
// lineMinWidth by factors of 2, then (and alone otherwise, from u0 and w)
// refined by a compass search.
func (f *lineFit) best(noise []float64, K, u0, w float64, wide bool) (float64, float64, bool) {
	bestChi, ok := math.Inf(1), false
	try := func(uu, ww float64) {
		if ww < lineMinWidth || ww > 4*K || math.Abs(uu) > 2*K {
			return
		}
		if _, chi2, _, good := f.solveLine(uu, ww, K, noise, false); good && chi2 < bestChi {
			bestChi, u0, w, ok = chi2, uu, ww, true
		}
	}
	if wide {
		for uu := -K; uu <= K; uu++ {
			for ww := lineMinWidth; ww <= 2*K; ww *= 2 {
				try(uu, ww)
			}
		}
	} else {
		try(u0, w)
	}
	if !ok {
		return u0, w, false
	}
	// A compass search, the steps halved when no move helps, down to a
	// thousandth of a spacing (at most 60 rounds, the line's distance at
	// most 4 half-widths of the window): a sharp anomaly of thousands of nT needs
	// its crossing and distance that closely for the fit to come to the
	// noise.
	du, lw := 0.5, math.Log(1.5)
	if !wide {
		du, lw = 0.0625, math.Log(1.05)
	}
	for it := 0; du > 1e-3 && it < 60; it++ {
		cu, cw, before := u0, w, bestChi
		for _, m := range [][2]float64{{1, 0}, {-1, 0}, {0, 1}, {0, -1}} {
			try(cu+m[0]*du, cw*math.Exp(m[1]*lw))
		}
		if !(bestChi < before) {
			du, lw = du/2, lw/2
		}
	}
	return u0, w, ok
}

// judge fits the line shape to the neighbours, leaving out the worst one
// while it departs by more than trendDropCut times the noise (at most a
// third of them), and returns the reading's departure from the fit and
// the scale per column; ok is false when the fit does not follow the kept
// neighbours to within lineReviewScale times the noise in every column.
func (f *lineFit) judge(noise []float64, K int, warm bool) (dev, s []float64, ok bool) {
	m := len(f.u)
	f.keep = f.keep[:0]
	for range m {
		f.keep = append(f.keep, true)
	}
	Kf := float64(K)
	kept := m
	u0, w := f.u0-1, f.w
	for wide := !warm; ; wide = false {
		var good bool
		u0, w, good = f.best(noise, Kf, u0, w, wide)
		if !good {
			return nil, nil, false
		}
		b, _, g, _ := f.solveLine(u0, w, Kf, noise, true)
		worst, wv := -1, float64(trendDropCut)
		for j := range m {
			if !f.keep[j] {
				continue
			}
			for ci := range f.x {
				if v := math.Abs(f.r[ci][j]) / noise[ci]; v > wv {
					worst, wv = j, v
				}
			}
		}
		if worst >= 0 && kept-1 >= 2*lineParams && kept-1 >= 2*m/3 {
			f.keep[worst] = false
			kept--
			continue
		}
		if worst >= 0 {
			return nil, nil, false // too many neighbours off the shape
		}
		dev, s = make([]float64, len(f.x)), make([]float64, len(f.x))
		p0 := basis(0, u0, w, Kf)
		a := make([]float64, 0, m)
		for ci := range f.x {
			a = a[:0]
			for j := range m {
				if f.keep[j] {
					a = append(a, math.Abs(f.r[ci][j]))
				}
			}
			sc := 1.4826 * selectMedian(a) * math.Sqrt(float64(kept)/float64(kept-lineParams))
			if sc > lineReviewScale*noise[ci] {
				return nil, nil, false
			}
			var pred float64
			for r := range lineParams {
				pred += b[ci][r] * p0[r]
			}
			// The reading is 0 (values are relative to it).
			dev[ci] = -pred
			s[ci] = math.Max(sc, noise[ci]) * math.Sqrt(1+g)
		}
		f.u0, f.w = u0, w
		return dev, s, true
	}
}

// overwhelmingFactor is how many times the cut-off a reading must depart
// from a quadratic that followed the field for the quadratic's verdict to
// stand whatever the line look says. From simulated scenarios with 15
// spikes injected at known rows, four seeds each: at 2 more spikes of 6
// to 7.5 noise sigmas were cleared (deep-short-traverse, bend, leak-n10),
// at 1.2 clean readings the look had cleared were flagged again (8 on
// bend, 4 on deep-short-traverse).
const overwhelmingFactor = 1.5

// clearSpike says whether the quadratic's verdict sc (its scale and the
// reading's departure) is a clear spike: the quadratic followed the field
// (its scale within lineReviewScale times the noise) and the reading
// departs by more than overwhelmingFactor times the cut-off.
func clearSpike(sc [2]float64, noise float64, ds DespikeSettings) bool {
	q, d := sc[0], sc[1]
	return q <= lineReviewScale*noise && math.Abs(d) > overwhelmingFactor*ds.Threshold*math.Max(q, ds.Floor)
}

// overwhelming says whether every column the quadratic flagged at reading
// i holds a clear spike, so that the line look is not needed.
func overwhelming(flags [][]bool, scales [][][2]float64, noise []float64, i int, ds DespikeSettings) bool {
	for ci := range flags {
		if flags[ci][i] && !clearSpike(scales[ci][i], noise[ci], ds) {
			return false
		}
	}
	return true
}
