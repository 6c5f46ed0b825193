package live

import (
	"fmt"
	"math"
)

// A sensor driven past its range reads its rail, and a logger behind a
// saturated front end adds its readout noise to it: the readings no longer
// repeat one value, so the stuck test (stuckAxis) misses them, and the
// window's fit, taking a clipped 120,000 nT for 100,000 nT, read 30 A as
// 25.04 ± 0.06 A. With the sensor's range stated in the site file
// (range_nt), a window in which the sensor reads within saturationMargin
// of its range on an axis is taken as clipped and the sensor left out.

// saturationMargin is how near its range, nT, a reading must come to be
// taken as clipped: ten times the asset's noise per reading (a rail's
// readout noise stays well within it), and at least a ten-thousandth of
// the range (a fluxgate's linearity is worst at its ends).
func saturationMargin(a *AssetConfig, rng float64) float64 {
	return SaturationMargin(a.Noise, rng)
}

// SaturationMargin is saturationMargin for a sensor of range rng, nT, and
// noise per reading noise, nT (0 when not known): how near its range a
// reading must come to be taken as clipped, ten times the noise and at
// least a ten-thousandth of the range. locate's --range-nt uses it too.
func SaturationMargin(noise, rng float64) float64 {
	return math.Max(10*noise, 1e-4*rng)
}

// saturatedAxis returns the axis on which sensor s reads within
// saturationMargin of its range, or beyond it, in the window's readings
// sr (before calibration, as the sensor clips them), the reading furthest
// out, and whether that reading lies beyond the range by more than
// saturationMargin (beyond): a sensor cannot read past its range, so
// such a reading says the stated range_nt is wrong (set too low, or the
// wrong sensor model), not that the sensor clipped. It returns "" when
// no reading comes near the range or no range is stated.
func saturatedAxis(a *AssetConfig, s *SensorConfig, sr *series) (axis string, v float64, beyond bool) {
	if !(s.Range > 0) {
		return "", 0, false
	}
	m := saturationMargin(a, s.Range)
	lim := s.Range - m
	for k, col := range [][]float64{sr.Bx, sr.By, sr.Bz} {
		for _, x := range col {
			if math.Abs(x) >= lim && (axis == "" || math.Abs(x) > math.Abs(v)) {
				axis, v = [3]string{"x", "y", "z"}[k], x
			}
		}
	}
	return axis, v, axis != "" && math.Abs(v) > s.Range+m
}

// saturatedMessage is the saturated alarm's text for sensor name's
// reading v on axis, range rng nT (saturatedAxis).
func saturatedMessage(name, axis string, v, rng float64, beyond bool) string {
	if beyond {
		return fmt.Sprintf("sensor %s read %.8g nT on axis %s, beyond the stated range_nt of ±%.8g nT (check the site file: a sensor cannot read past its range, so the range stated is likely too low or of another sensor model): it is left out until its readings come within the range", name, v, axis, rng)
	}
	return fmt.Sprintf("sensor %s read %.8g nT on axis %s, at its range of ±%.8g nT: its readings are clipped and left out", name, v, axis, rng)
}

// A sensor clipped at its rail without range_nt stated: its AC readings
// are flat-topped, sitting on one value through part of every half cycle
// at one end or both, but the stuck test (stuckAxis) needs one value
// through the whole window and saturatedAxis a stated range. Three
// 100 x 10 mm bars of 2000 A seen 0.3 m away by sensors clipped at
// ±100,000 nT read 257, 280 and 256 A, and the alarm blamed the model.
// A sine spends almost none of its time at its extreme value: an AC
// axis holding its window's highest or lowest reading for more than
// railShare of its samples, and more than a sine could (railAxis), is
// taken as clipped at the sensor's rail, and the sensor left out as
// saturated.

// railShare is the least share of a window's samples at an axis's
// extreme value for it to be taken as a rail: clipping that holds less
// trims the peaks by under 1.2 % (a rail at cos(pi railShare) = 0.988 of
// the peak holds the sine for railShare of its cycle).
const railShare = 0.05

// railAxis returns the axis of an AC window's readings sr (raw, as the
// sensor clips them) that holds its highest or lowest value for more
// than railShare of its samples and more than 1.5 times what a sine at
// freq, Hz, could; noise is the asset's noise per reading, nT (0 when not
// stated). A rail read through a logger's readout noise scatters about
// the rail, so with noise stated the samples within 6 noise of the
// extreme value are counted as held; with noise = 0 only the extreme
// value itself. What a sine could hold: two samples a cycle (a sine
// sampled in step with the grid repeats its peak sample's value each
// cycle, twice when the peak falls midway between two samples), plus its
// share of time within d of its peak, acos(1 - d/A)/pi for amplitude A
// (half the axis's range) and d two resolution steps (smallestStep:
// readings rounded to a coarse resolution hold the top step) plus twice
// the 6 noise counted. It returns the value held (the extreme), its
// share of the samples, and whether the axis is held at both ends
// (symmetric clipping); "" when no axis is.
func railAxis(sr *series, freq, noise float64) (axis string, v, share float64, both bool) {
	n := len(sr.T)
	if n < scatterSamples || !(sr.T[n-1] > sr.T[0]) || !(freq > 0) {
		return "", 0, 0, false
	}
	perCycle := float64(n-1) / (sr.T[n-1] - sr.T[0]) / freq
	band := 0.0
	if noise > 0 {
		band = 6 * noise
	}
	for k, col := range [][]float64{sr.Bx, sr.By, sr.Bz} {
		if len(col) != n {
			continue
		}
		lo, hi := col[0], col[0]
		for _, x := range col {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
		if !(hi > lo) {
			continue // one value through the window: stuckAxis's
		}
		var nlo, nhi int
		for _, x := range col {
			if x <= lo+band {
				nlo++
			}
			if x >= hi-band {
				nhi++
			}
		}
		q := smallestStep(col)
		sine := 2/perCycle + math.Acos(math.Max(-1, 1-(2*q+2*band)/((hi-lo)/2)))/math.Pi
		lim := math.Max(railShare, 1.5*sine)
		slo, shi := float64(nlo)/float64(n), float64(nhi)/float64(n)
		if slo <= lim && shi <= lim {
			continue
		}
		s, val := shi, hi
		if slo > shi {
			s, val = slo, lo
		}
		if s > share {
			axis, v, share, both = [3]string{"x", "y", "z"}[k], val, s, slo > lim && shi > lim
		}
	}
	return axis, v, share, both
}

// railMessage is the saturated alarm's text for sensor name held at v nT
// (within 6 noise of it when noise, nT, is stated) on axis for share of
// the window's samples (railAxis).
func railMessage(name, axis string, v, share, noise float64, both bool) string {
	ends := "at one end"
	if both {
		ends = "at both ends"
	}
	at := fmt.Sprintf("held %.8g nT", v)
	if noise > 0 {
		at = fmt.Sprintf("held within %.3g nT (6 times the noise) of %.8g nT", 6*noise, v)
	}
	return fmt.Sprintf("sensor %s %s on axis %s for %.0f%% of the window's samples, its waveform flat-topped %s where a sine spends almost none of its time at one value: clipped at its rail (the field is beyond its range; range_nt is not stated): its readings are left out", name, at, axis, 100*share, ends)
}
