package live

import "math"

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

// saturatedAxis returns the first axis on which sensor s reads within
// saturationMargin of its range in the window's readings sr (before
// calibration, as the sensor clips them), and that reading, or "" when
// none does or no range is stated.
func saturatedAxis(a *AssetConfig, s *SensorConfig, sr *series) (string, float64) {
	if !(s.Range > 0) {
		return "", 0
	}
	lim := s.Range - saturationMargin(a, s.Range)
	for k, col := range [][]float64{sr.Bx, sr.By, sr.Bz} {
		for _, v := range col {
			if math.Abs(v) >= lim {
				return [3]string{"x", "y", "z"}[k], v
			}
		}
	}
	return "", 0
}
