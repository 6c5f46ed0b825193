package calibrate

import (
	"fmt"
	"math"
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
	K := ds.HalfWidth
	win := make([]float64, 0, 2*K+1)
	dev := make([]float64, 0, 2*K+1)
	for ci, c := range cols {
		for i, x := range c {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				continue
			}
			win = win[:0]
			for j := max(0, i-K); j < min(n, i+K+1); j++ {
				if v := c[j]; !math.IsNaN(v) && !math.IsInf(v, 0) {
					win = append(win, v)
				}
			}
			med := smallMedian(win)
			dev = dev[:0]
			for _, v := range win {
				dev = append(dev, math.Abs(v-med))
			}
			s := math.Max(1.4826*smallMedian(dev), ds.Floor)
			if math.Abs(x-med) > ds.Threshold*s {
				perCol[ci]++
				spike[i] = true
			}
		}
	}
	return spike, perCol, nonFinite, nil
}

// smallMedian sorts x in place by insertion (x is a short window) and
// returns its median.
func smallMedian(x []float64) float64 {
	for i := 1; i < len(x); i++ {
		v := x[i]
		j := i - 1
		for ; j >= 0 && x[j] > v; j-- {
			x[j+1] = x[j]
		}
		x[j+1] = v
	}
	n := len(x)
	if n%2 == 1 {
		return x[n/2]
	}
	return 0.5 * (x[n/2-1] + x[n/2])
}
