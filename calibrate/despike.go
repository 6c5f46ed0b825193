package calibrate

import (
	"fmt"
	"math"
	"sort"
)

// DespikeSettings controls the Hampel spike filter. A nil *DespikeSettings
// or a zero field takes the default.
type DespikeSettings struct {
	// HalfWidth is the number of neighbours on each side in the moving
	// window. Zero means 10 (a 21-sample window). Keep the window shorter
	// than the narrowest real anomaly, or its peak may be taken for a
	// spike.
	HalfWidth int
	// Threshold is k: a reading is a spike when |x - median| > k s with
	// s = max(1.4826 MAD, Floor). Zero means 5: with the default window the
	// false-alarm rate on white Gaussian noise is below 0.1% per axis
	// (measured in this package's tests; the moving MAD is itself noisy, so
	// the familiar 3 to 3.5 cut-offs flag 0.6% to 2%).
	Threshold float64
	// Floor is the smallest scale s, nT, so that quantised or very quiet
	// data (MAD = 0) do not flag every change. Zero means 0.5 nT.
	Floor float64
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

// FindSpikes runs the Hampel filter over each column and marks the rows
// that are spikes on any column, or hold a non-finite value. The window is
// clipped at the ends of the columns; callers split at group boundaries.
// perCol counts spikes per column. All columns must have the same length
// (it panics otherwise, a programming mistake).
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
	for _, c := range cols {
		if len(c) != n {
			panic("calibrate: FindSpikes: columns of different lengths")
		}
		for i, v := range c {
			if (math.IsNaN(v) || math.IsInf(v, 0)) && !spike[i] {
				spike[i] = true
				nonFinite++
			}
		}
	}
	for ci, c := range cols {
		perCol[ci] = hampel(c, ds, spike)
	}
	return spike, perCol, nonFinite, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

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
