package calibrate

import (
	"fmt"
	"math"
	"slices"
	"sort"
)

// DespikeSettings controls the spike filter (FindSpikes). A nil
// *DespikeSettings or a zero field takes the default.
type DespikeSettings struct {
	// HalfWidth is the number of neighbours on each side in the moving
	// window. Zero means 10 (a 21-sample window).
	HalfWidth int
	// Threshold is k: a reading is a spike when it departs from the local
	// trend of its neighbours by more than k s, with s = max(scale, Floor)
	// and the scale that of the neighbours' own departures from the trend
	// (see trendSpikes). Zero means 5: with the default window the
	// false-alarm rate on white Gaussian noise is below 0.1% per axis
	// (measured in this package's tests; the moving scale is itself noisy,
	// so the familiar 3 to 3.5 cut-offs flag far more).
	Threshold float64
	// Floor is the smallest scale s, nT, so that quantised or very quiet
	// data (MAD = 0) do not flag every change. Zero means 0.5 nT.
	Floor float64
	// Median judges each reading against the median of the readings in
	// its window and their MAD instead (the textbook Hampel filter): for a
	// record in time at one place, such as a base station, whose real
	// changes (the geomagnetic field's, minute to minute) have no smooth
	// local shape to follow, and which a moving sensor's anomalies do not
	// cross. Along a traverse it misses spikes where the field changes
	// fast, taking that change for noise.
	Median bool
	// AC says the columns are an alternating field's raw waveform in
	// time, many readings to a cycle (an AC log, 0.5 to 2 kHz of a 50 Hz
	// field): the readings are judged against the local quadratic alone,
	// without FindSpikes's second look against a line current's shape
	// (lineReview), which is a shape in distance along a traverse and
	// says nothing of a waveform. On such logs that look took most true
	// spikes for the waveform (of 480 spikes of 20 noise sigmas on a
	// simulated 1 kHz log of three cores, 2 were found instead of 176).
	AC bool
}

func (s *DespikeSettings) withDefaults() (DespikeSettings, error) {
	var d DespikeSettings
	if s != nil {
		d = *s
	}
	if d.HalfWidth < 0 || d.Threshold < 0 || d.Floor < 0 || math.IsNaN(d.Threshold) || math.IsNaN(d.Floor) {
		return d, fmt.Errorf("calibrate: despike: negative setting (half-width %d, threshold %g, floor %g)", d.HalfWidth, d.Threshold, d.Floor)
	}
	if d.HalfWidth == 0 {
		d.HalfWidth = 10
	}
	if d.Threshold == 0 {
		d.Threshold = 5
	}
	if d.Floor == 0 {
		d.Floor = 0.5
	}
	return d, nil
}

// DespikeReport says what Despike removed.
type DespikeReport struct {
	// Removed is the number of rows removed and Kept the number left.
	Removed, Kept int
	// PerAxis counts the spikes found on bx, by, bz (a row may count on
	// several axes).
	PerAxis [3]int
	// NonFinite counts rows removed because a field value was NaN or
	// infinite (missing readings).
	NonFinite int
	// Rows lists the removed rows by their index before removal.
	Rows []int
}

// FindSpikes runs the spike filter over each column and marks the rows
// that are spikes on any column, or hold a non-finite value. The window
// stays within the columns (moved inwards at their ends; readings of a
// run too short to judge, under about ten, are left alone); callers split
// at group boundaries.
// perCol counts spikes per column. Columns of different lengths are an
// error.
func FindSpikes(cols [][]float64, set *DespikeSettings) (spike []bool, perCol []int, nonFinite int, err error) {
	ds, err := set.withDefaults()
	if err != nil {
		return nil, nil, 0, err
	}
	if len(cols) == 0 {
		return nil, nil, 0, nil
	}
	n := len(cols[0])
	spike = make([]bool, n)
	perCol = make([]int, len(cols))
	for k, c := range cols {
		if len(c) != n {
			return nil, nil, 0, fmt.Errorf("calibrate: FindSpikes: column %d has %d values, column 0 has %d", k, len(c), n)
		}
	}
	for _, c := range cols {
		for i, v := range c {
			if (math.IsNaN(v) || math.IsInf(v, 0)) && !spike[i] {
				spike[i] = true
				nonFinite++
			}
		}
	}
	if ds.Median {
		for ci, c := range cols {
			perCol[ci] = hampel(c, ds, spike)
		}
		return spike, perCol, nonFinite, nil
	}
	// Each column against its local trend, then the readings where that
	// trend could not follow the field, or found a spike, against a line
	// current's shape in all columns at once (lineReview).
	// Without that second look (AC, or more than three columns) the
	// scales are not kept, and trendSpikes may then skip a reading's
	// median once the reading is shown not to be a spike (trendFit.fit).
	review := len(cols) <= 3 && !ds.AC
	flags, scales := make([][]bool, len(cols)), make([][][2]float64, len(cols))
	for ci, c := range cols {
		flags[ci] = make([]bool, n)
		if review {
			scales[ci] = make([][2]float64, n)
		}
		trendSpikes(c, ds, flags[ci], scales[ci])
	}
	if review {
		lineReview(cols, flags, scales, ds)
	}
	for ci := range cols {
		for i, f := range flags[ci] {
			if f {
				perCol[ci]++
				spike[i] = true
			}
		}
	}
	return spike, perCol, nonFinite, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// Each reading is judged against the local trend of its neighbours, not
// their spread: a quadratic in the row number fitted by least squares to
// the HalfWidth readings on either side, the reading and the one next to
// it on each side left out (so that two or three spikes in a row do not
// hide each other), refitted once without the neighbours that depart from
// the first fit by more than min(Threshold, trendDropCut) scales (other
// spikes). The reading's departure from the fit's value at its row is
// compared with the scale of the neighbours' departures from the fit:
// 1.4826 times their median absolute value (the MAD's factor for Gaussian
// noise), times sqrt(m/(m-3)) for the three parameters fitted to m
// readings and sqrt(1+g) for the fitted value's own variance g σ² (g the
// (0,0) entry of the fit's inverse normal matrix), so that on white noise
// the departure over the scale is about a standard normal.
//
// The median and MAD of the raw readings in the window (the textbook
// Hampel filter, DespikeSettings.Median) take the field's own change as
// noise wherever it changes fast: on the flank of a buried cable's
// anomaly 21 readings span hundreds of nT, and an 800 nT spike 0.5 m from
// the peak of a 1333 nT anomaly passed. The local quadratic follows a
// flank to the noise, and a peak too when it spans several readings; a
// narrower anomaly leaves the quadratic's misfit on its neighbours as
// well, which the scale then takes in. No reading of a noise-free anomaly
// is taken for a spike at the default Threshold, however strong
// (calibrate's despike tests): a line current's (Biot-Savart) at 2.5
// reading spacings or more from the sensor, a point dipole's at 5 or more,
// a sine's of 4 or more readings a cycle. (The median filter cut readings
// of the line at 2.5 spacings and of the dipoles at 6.) Closer, a line's
// peak is kept by FindSpikes's second look, against the line's own shape
// (lineReview, despike_line.go).
//
// Near an end of the run the window of 2K+1 rows is moved inwards, so
// that the reading keeps as many neighbours, and its own neighbours there
// are taken too, so that the fit is carried one row beyond them and not
// two. Where the window is lopsided (more neighbours on one side), the
// fit is extrapolated, and a curved flank bends a quadratic carried past
// its neighbours away from the readings by more than the neighbours'
// scale: on clean simulated traverses over a line current it took 9% of
// the first and last two readings for spikes at 5 scales, and the spike
// warning fired on them at 10 (calibrate's despike end tests). There a
// reading is a spike only if the cubic and the quartic fitted to the same
// neighbours, each with four degrees of freedom for its scale, also put
// it beyond the cut, each fit's scale taking in its own prediction
// variance at the reading's row (g00 above). A lopsided window needs
// minTrendPoints+1 neighbours (the cubic's), a centred one
// minTrendPoints; a reading with fewer (a run of under about ten
// readings) is not judged: the median and MAD of so short a run, which
// spans the anomaly, took the anomaly for spikes (a 7-reading traverse
// lost 2 of its 7 clean readings to --despike). Only a HalfWidth under 5,
// too narrow a window for a quadratic anywhere, takes the median and MAD
// of the window instead.

// trendDropCut is the most scales a neighbour may depart from the first
// fit and stay in the second: another spike is left out even when the
// test itself is stricter (the spike warning's 10 scales).
const trendDropCut = 5

// minTrendPoints is the fewest neighbours a local quadratic is fitted to:
// three parameters and four degrees of freedom for the scale.
const minTrendPoints = 7

// trendSpikes marks the spikes of one column in spike and returns their
// number (see above). When scale is not nil it receives the scale each
// reading was judged with and its departure (0 where a reading was not
// judged; the scale 0 where it departed too little to need one). When
// scale is nil, a reading that the screen in trendFit.fit shows cannot be
// a spike is passed without its median: the same spikes, found faster.
func trendSpikes(c []float64, ds DespikeSettings, spike []bool, scale [][2]float64) int {
	count, _ := trendSpikesScreened(c, ds, spike, scale)
	return count
}

// trendSpikesScreened is trendSpikes, and returns as well the number of
// fits that the screen passed without their median.
func trendSpikesScreened(c []float64, ds DespikeSettings, spike []bool, scale [][2]float64) (count, screened int) {
	n, K := len(c), ds.HalfWidth
	var tf trendFit
	tf.init(K)
	if scale == nil {
		tf.screen = ds.Threshold
	}
	for i, xi := range c {
		if !finite(xi) {
			continue
		}
		tf.reset()
		// The window of 2K+1 rows centred on the reading, moved inwards
		// where it meets an end of the run, so that a reading there is
		// judged on as many neighbours as one in the middle.
		lo, hi := i-K, i+K+1
		if lo < 0 {
			lo, hi = 0, hi-lo
		}
		if hi > n {
			lo, hi = max(0, lo-(hi-n)), n
		}
		// Next to an end the reading's own neighbours are taken too, so
		// that the fit is carried one row beyond them, not two.
		skip := 1
		if lo != i-K || hi != i+K+1 {
			skip = 0
		}
		left := 0
		for j := lo; j < hi; j++ {
			if (j < i-skip || j > i+skip) && finite(c[j]) {
				// Relative to the reading judged: the fit's value at its
				// row is then the departure, without cancellation.
				tf.add(float64(j-i), c[j]-xi)
				if j < i {
					left++
				}
			}
		}
		m := len(tf.u)
		cut := ds.Threshold * ds.Floor
		var dev, s float64
		switch {
		case tf.full < minTrendPoints:
			// A window too narrow for a trend (a HalfWidth under 5).
			if m == 0 {
				continue
			}
			dev, s = tf.median()
		case left != m-left:
			// Lopsided (next to an end, or beside missing readings):
			// the fit is carried beyond its neighbours on one side.
			if m < minTrendPoints+1 {
				continue // not enough for the cubic's second opinion
			}
			// A spike only if the cubic and the quartic (each given
			// four degrees of freedom for its scale), carried there
			// too, say so as well: a curved flank bends the
			// quadratic's extrapolation off the readings, the higher
			// orders' less.
			for deg := 2; deg <= 4 && m >= minTrendPoints+deg-2; deg++ {
				dev, s = tf.fit(min(ds.Threshold, trendDropCut), cut, deg)
				if math.Abs(dev) <= ds.Threshold*math.Max(s, ds.Floor) {
					break
				}
			}
		case m < minTrendPoints:
			// Too few neighbours to judge (a short run): left alone.
			continue
		default:
			dev, s = tf.fit(min(ds.Threshold, trendDropCut), cut, 2)
		}
		if scale != nil {
			scale[i] = [2]float64{s, dev}
		}
		if math.Abs(dev) > ds.Threshold*math.Max(s, ds.Floor) {
			count++
			spike[i] = true
		}
	}
	return count, tf.screened
}

// trendFit is the local fit of trendSpikes, in buffers reused from
// reading to reading: the neighbours' row offsets u and values x
// (relative to the reading judged).
type trendFit struct {
	u, x, r, a []float64
	keep       []bool
	// The whole window's fit (every neighbour there and kept), the same
	// for every reading away from the ends and gaps: the coefficients'
	// weights on the neighbours' values, b_i = Σ w[i][j] x_j, and g00.
	full    int
	w       [3][]float64
	fullG00 float64
	// screen, when not 0, is the Threshold of a caller that needs only
	// whether the reading is a spike, not its scale (see fit).
	screen   float64
	screened int
}

// init sizes the buffers for half-width K and forms the whole window's
// weights.
func (f *trendFit) init(K int) {
	m := 2 * K
	f.u, f.x = make([]float64, 0, m), make([]float64, 0, m)
	f.r, f.a = make([]float64, m), make([]float64, 0, m)
	f.keep = make([]bool, m)
	for j := -K; j <= K; j++ {
		if j < -1 || j > 1 {
			f.add(float64(j), 0)
		}
	}
	f.full = len(f.u)
	if f.full < minTrendPoints {
		return
	}
	for j := range f.full {
		f.keep[j] = true
	}
	// The weights are the fits to unit vectors (formed before f.w is set,
	// so by the general solve).
	var w [3][]float64
	for i := range w {
		w[i] = make([]float64, f.full)
	}
	for j := range f.full {
		f.x[j] = 1
		b, g00, _ := f.solve(f.keep[:f.full])
		for i := range w {
			w[i][j] = b[i]
		}
		f.fullG00 = g00
		f.x[j] = 0
	}
	f.w = w
	f.reset()
}

func (f *trendFit) reset() { f.u, f.x = f.u[:0], f.x[:0] }

func (f *trendFit) add(u, x float64) {
	f.u = append(f.u, u)
	f.x = append(f.x, x)
}

// median returns the departure of the reading (0 here) from the median of
// its neighbours and the scale 1.4826 MAD of them with it.
func (f *trendFit) median() (dev, s float64) {
	w := append(f.a[:0], f.x...)
	w = append(w, 0)
	slices.Sort(w)
	med := middle(w)
	for k, v := range w {
		w[k] = math.Abs(v - med)
	}
	slices.Sort(w)
	return -med, 1.4826 * middle(w)
}

// middle is the median of sorted w.
func middle(w []float64) float64 {
	m := len(w)
	if m%2 == 1 {
		return w[m/2]
	}
	return 0.5 * (w[m/2-1] + w[m/2])
}

// fit fits a polynomial of degree deg (2, the quadratic; 3 or 4) to the
// neighbours, refits once without those departing by more than k scales,
// and returns the reading's departure from the fit at its row (the
// reading being 0) and the scale. A first departure under half of quiet
// (the cut at the scale's floor) cannot be a spike: it returns that
// departure and a zero scale without the rest. A singular fit returns
// zeros (no spike), and so does a first fit that f.screen shows cannot
// find a spike (screenedOut).
func (f *trendFit) fit(k, quiet float64, deg int) (dev, s float64) {
	m := len(f.u)
	keep := f.keep[:m]
	for j := range keep {
		keep[j] = true
	}
	solve := f.solve
	if deg > 2 {
		solve = func(keep []bool) ([5]float64, float64, bool) { return f.solvePoly(keep, deg+1) }
	}
	b, g00, ok := solve(keep)
	if !ok {
		return 0, 0
	}
	if math.Abs(b[0]) <= 0.5*quiet {
		return -b[0], 0
	}
	if f.screen > 0 && f.screenedOut(b, g00, float64(deg+1), k) {
		f.screened++
		return 0, 0
	}
	s = f.scale(keep, b, g00, float64(deg+1))
	drop := 0
	for j := range m {
		if math.Abs(f.r[j]) > k*s {
			keep[j] = false
			drop++
		}
	}
	if drop > 0 && m-drop >= minTrendPoints+deg-2 {
		if b2, g2, ok := solve(keep); ok {
			b, s = b2, f.scale(keep, b2, g2, float64(deg+1))
		}
	}
	return -b[0], s
}

// solve fits x = b0 + b1 u + b2 u² to the kept neighbours by least
// squares and returns the coefficients and g00, the (0,0) entry of the
// inverse normal matrix; ok is false when that matrix is singular.
func (f *trendFit) solve(keep []bool) (b [5]float64, g00 float64, ok bool) {
	if m := len(f.u); m == f.full && f.w[0] != nil && f.u[0] == -f.u[m-1] && !slices.Contains(keep, false) {
		// The whole window: its weights.
		x := f.x[:f.full]
		for i := range f.w {
			w := f.w[i][:len(x)]
			var v float64
			for j, xj := range x {
				v += w[j] * xj
			}
			b[i] = v
		}
		return b, f.fullG00, true
	}
	var s0, s1, s2, s3, s4, t0, t1, t2 float64
	for j, u := range f.u {
		if !keep[j] {
			continue
		}
		x, uu := f.x[j], u*u
		s0++
		s1 += u
		s2 += uu
		s3 += uu * u
		s4 += uu * uu
		t0 += x
		t1 += x * u
		t2 += x * uu
	}
	// The symmetric normal matrix [s0 s1 s2; s1 s2 s3; s2 s3 s4], inverted
	// by its cofactors (3×3, small integers' moments: well conditioned for
	// any window the settings allow).
	c00 := s2*s4 - s3*s3
	c01 := s2*s3 - s1*s4
	c02 := s1*s3 - s2*s2
	c11 := s0*s4 - s2*s2
	c12 := s1*s2 - s0*s3
	c22 := s0*s2 - s1*s1
	det := s0*c00 + s1*c01 + s2*c02
	if !(det > 1e-9*s0*s2*s4) {
		return b, 0, false
	}
	b[0] = (c00*t0 + c01*t1 + c02*t2) / det
	b[1] = (c01*t0 + c11*t1 + c12*t2) / det
	b[2] = (c02*t0 + c12*t1 + c22*t2) / det
	return b, c00 / det, true
}

// solvePoly fits a polynomial of P coefficients (P up to 5: a cubic or a
// quartic), x = b0 + b1 u + ... + b(P-1) u^(P-1), to the kept neighbours by
// least squares and returns the coefficients and g00, the (0,0) entry of
// the inverse normal matrix: the fit's prediction variance at the
// reading's row is σ² x0ᵀ(XᵀX)⁻¹x0 with x0 = (1, 0, ..., 0), that is σ² g00
// (the standard error of a least-squares prediction).
// The normal equations, in u over its largest size (which leaves b0 and
// g00 as they are), are solved by Gauss-Jordan elimination with partial
// pivoting together with the inverse's first column. ok is false when
// the matrix is singular.
func (f *trendFit) solvePoly(keep []bool, P int) (b [5]float64, g00 float64, ok bool) {
	U := 0.0
	for j, u := range f.u {
		if keep[j] {
			U = max(U, math.Abs(u))
		}
	}
	var a [5][7]float64 // [N | Xᵀx | e0]
	for j, u := range f.u {
		if !keep[j] {
			continue
		}
		v := u / U
		p := [5]float64{1, v, v * v, v * v * v, v * v * v * v}
		for r := range P {
			for c := range P {
				a[r][c] += p[r] * p[c]
			}
			a[r][P] += p[r] * f.x[j]
		}
	}
	a[0][P+1] = 1
	m := a[0][0]
	for c := range P {
		piv := c
		for r := c + 1; r < P; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[piv][c]) {
				piv = r
			}
		}
		a[c], a[piv] = a[piv], a[c]
		if !(math.Abs(a[c][c]) > 1e-9*m) {
			return b, 0, false
		}
		for r := range P {
			if r != c {
				q := a[r][c] / a[c][c]
				for k := c; k < P+2; k++ {
					a[r][k] -= q * a[c][k]
				}
			}
		}
	}
	for r, Uk := 0, 1.0; r < P; r, Uk = r+1, Uk*U {
		b[r] = a[r][P] / a[r][r] / Uk
	}
	return b, a[0][P+1] / a[0][0], true
}

// screenedOut reports whether the first fit b (p parameters, every
// neighbour kept) is shown, without its median, to drop no neighbour
// and to find no spike at the cut f.screen, k being the drop cut: then
// fit's answer is the first fit's departure -b0 against its scale s1,
// and |b0| <= f.screen s1 is no spike. Both hold when
// s1 >= max(|b0|/f.screen, max|r|/k) =: B. s1 is c med|r| (scale), and the
// median of m values is at least L = B/c when at most (m-1)/2 of them
// are below L: a count in place of the selection, which took about half
// of the spike filter's time on AC logs. L is raised by 1e-9 of itself
// so that rounding in scale's product cannot bring s1 below B. When the
// count is higher the full fit runs, so the spikes found are the same.
func (f *trendFit) screenedOut(b [5]float64, g00, p, k float64) bool {
	m := len(f.u)
	maxR := 0.0
	for j, u := range f.u {
		r := math.Abs(f.x[j] - (b[0] + u*(b[1]+u*(b[2]+u*(b[3]+u*b[4])))))
		f.r[j] = r
		if r > maxR {
			maxR = r
		}
	}
	c := 1.4826 * math.Sqrt(float64(m)/(float64(m)-p)*(1+g00))
	L := math.Max(math.Abs(b[0])/f.screen, maxR/k) / c * (1 + 1e-9)
	below := 0
	for _, r := range f.r[:m] {
		if r < L {
			below++
		}
	}
	return below <= (m-1)/2
}

// scale fills f.r with every neighbour's departure from the fit b (p
// parameters: a quadratic, or a cubic) and returns the scale of the kept
// ones' (see trendSpikes).
func (f *trendFit) scale(keep []bool, b [5]float64, g00, p float64) float64 {
	a := f.a[:0]
	for j, u := range f.u {
		r := f.x[j] - (b[0] + u*(b[1]+u*(b[2]+u*(b[3]+u*b[4]))))
		f.r[j] = r
		if keep[j] {
			a = append(a, math.Abs(r))
		}
	}
	f.a = a
	m := len(a)
	return 1.4826 * selectMedian(a) * math.Sqrt(float64(m)/(float64(m)-p)*(1+g00))
}

// selectMedian returns the median of a, reordering it (Hoare's
// selection: linear time, where a sort took most of the filter's).
func selectMedian(a []float64) float64 {
	m := len(a)
	k := m / 2
	hi := selectKth(a, k)
	if m%2 == 1 {
		return hi
	}
	// The lower middle is the largest of those below the k-th.
	lo := a[0]
	for _, v := range a[1:k] {
		if v > lo { // no NaN here: plain comparison, not math.Max
			lo = v
		}
	}
	return 0.5 * (lo + hi)
}

// selectKth reorders a so that a[k] is its k-th smallest (0-based), those
// before it no larger and those after no smaller, and returns a[k].
func selectKth(a []float64, k int) float64 {
	lo, hi := 0, len(a)-1
	for lo < hi {
		p := a[(lo+hi)/2]
		i, j := lo, hi
		for i <= j {
			for a[i] < p {
				i++
			}
			for a[j] > p {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return a[k]
		}
	}
	return a[k]
}

// hampel marks the spikes of one column in spike and returns their number.
// It keeps the moving window sorted (one binary-search insertion and one
// removal per step) and finds the MAD by merging the deviations either
// side of the median, so a step costs O(window) rather than a sort.
func hampel(c []float64, ds DespikeSettings, spike []bool) int {
	n, K := len(c), ds.HalfWidth
	win := make([]float64, 0, 2*K+1)
	insert := func(v float64) {
		if !finite(v) {
			return
		}
		i := sort.SearchFloat64s(win, v)
		win = append(win, 0)
		copy(win[i+1:], win[i:])
		win[i] = v
	}
	remove := func(v float64) {
		if !finite(v) {
			return
		}
		i := sort.SearchFloat64s(win, v)
		win = append(win[:i], win[i+1:]...)
	}
	for j := 0; j < min(n, K+1); j++ {
		insert(c[j])
	}
	count := 0
	for i, x := range c {
		if i > 0 {
			if j := i + K; j < n {
				insert(c[j])
			}
			if j := i - K - 1; j >= 0 {
				remove(c[j])
			}
		}
		if !finite(x) || len(win) == 0 {
			continue
		}
		m := len(win)
		med := win[m/2]
		if m%2 == 0 {
			med = 0.5 * (win[m/2-1] + win[m/2])
		}
		s := math.Max(1.4826*sortedMAD(win, med), ds.Floor)
		if math.Abs(x-med) > ds.Threshold*s {
			count++
			spike[i] = true
		}
	}
	return count
}

// sortedMAD returns the median of |w - med| for sorted w by merging the
// deviations below and above med, which are each already in order.
func sortedMAD(w []float64, med float64) float64 {
	m := len(w)
	p := sort.SearchFloat64s(w, med)
	a, b := p-1, p
	next := func() float64 {
		if b >= m || (a >= 0 && med-w[a] <= w[b]-med) {
			a--
			return med - w[a+1]
		}
		b++
		return w[b-1] - med
	}
	var d0, d1 float64
	for k := 0; k <= m/2; k++ {
		d0, d1 = d1, next()
	}
	if m%2 == 1 {
		return d1
	}
	return 0.5 * (d0 + d1)
}
