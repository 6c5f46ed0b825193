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
