package calibrate

import (
	"math"
	"sort"
)

// The base record's own reading noise.
//
// The base-station correction subtracts the base's departure, interpolated
// at each survey reading's time, from the reading: the base magnetometer's
// own noise goes into every corrected reading. It is not independent from
// reading to reading: every survey reading taken between two base readings
// carries the same two base values (250 survey readings a second against a
// base read once a second share each base value among about 250). Along a
// traverse it acts as slow drift, which barely raises the fit's residuals
// but moves the fitted current and depth (found in review: 0.2 nT of base
// noise under a 250 Hz log with 2 nT of noise gave pulls of spread 1.8, and
// 1 nT gave 7.2, with no word). BaseNoise measures it, for the caller to
// carry into the fits' sigmas.

// minBaseNoiseDiffs is the fewest fourth differences BaseNoise takes a
// noise from: the median of fewer than 30 is too loose (its relative
// standard error, 1.25/sqrt(n) for a normal sample, over 20%).
const minBaseNoiseDiffs = 32

// BaseNoise estimates the white reading noise of a base record per
// component (bx, by, bz), nT, from the fourth differences of readings that
// follow one another at the record's sample interval (step, the median
// interval, s): x[i-2] - 4 x[i-1] + 6 x[i] - 4 x[i+1] + x[i+2] of
// independent readings of noise sigma has variance (1 + 16 + 36 + 16 + 1)
// sigma² = 70 sigma², while the diurnal variation, sampled every few
// seconds or faster, changes smoothly. The scale is taken robustly, as the
// median absolute difference over 0.6745 (the median of |Z| for a standard
// normal Z), so that the few readings at a sudden change (a storm's
// commencement) and spikes do not set it. Missing values (NaN) and gaps
// break the runs; a component with fewer than 32 differences gets 0 (not
// measured). The same measure is taken of DC survey readings along a
// traverse (cmd/undercurrent dcnoise.go).
//
// For a coarse record (one-minute observatory values) the differences
// mostly hold the field's own variation over a few minutes rather than the
// instrument's noise. A straight line between readings misses variation of
// about that size (and the pulsations shorter than the interval, which the
// record does not hold at all), so the value still sizes the error the
// interpolated base puts in the readings: an estimate, not a measurement.
func BaseNoise(bt []float64, bb [3][]float64) (sigma [3]float64, step float64) {
	if len(bt) < 5 {
		return sigma, 0
	}
	d := make([]float64, 0, min(len(bt)-1, 10000))
	for i := 1; i < len(bt) && len(d) < cap(d); i++ {
		if v := bt[i] - bt[i-1]; v > 0 && !math.IsNaN(v) {
			d = append(d, v)
		}
	}
	if len(d) == 0 {
		return sigma, 0
	}
	sort.Float64s(d)
	step = d[len(d)/2]
	for k := range 3 {
		var diffs []float64
		for i := 4; i < len(bt); i++ {
			if math.Abs(bt[i]-bt[i-4]-4*step) > 0.5*step {
				continue // a reading missing in the run
			}
			x := bb[k][i-4 : i+1]
			v := x[0] - 4*x[1] + 6*x[2] - 4*x[3] + x[4]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			diffs = append(diffs, math.Abs(v))
		}
		if len(diffs) < minBaseNoiseDiffs {
			continue
		}
		sigma[k] = median(diffs, nil) / 0.6744897501960817 / math.Sqrt(70)
	}
	return sigma, step
}
