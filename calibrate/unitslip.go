package calibrate

import (
	"fmt"
	"math"
)

// UnitSlip tells whether ratio, one field magnitude over another that
// should match it (the same site's field), is a unit read as another
// rather than a real difference: within 25% of 1000 (uT read as nT, or nT
// as uT, for ratios near 1/1000) or of 100 000 (gauss against nT). The
// Earth's field changes by far less over a site, and no magnetometer's
// scale is out by such factors. It returns the factor (1000 or 1e5, with
// the ratio's direction in larger: true when the first magnitude is the
// larger) and the unit the smaller magnitude was probably in.
func UnitSlip(ratio float64) (factor float64, larger bool, unit string, ok bool) {
	if !(ratio > 0) || math.IsInf(ratio, 0) {
		return 0, false, "", false
	}
	l := math.Log10(ratio)
	larger = l > 0
	for _, u := range []struct {
		f    float64
		name string
	}{{1e3, "uT"}, {1e5, "G"}} {
		if math.Abs(math.Abs(l)-math.Log10(u.f)) < math.Log10(1.25) {
			return u.f, larger, u.name, true
		}
	}
	return 0, false, "", false
}

// unitSlipWording says what a ratio of med to ref near a unit factor
// (UnitSlip) means, for the calibration check.
func unitSlipWording(med, ref float64) (string, bool) {
	f, larger, unit, ok := UnitSlip(med / ref)
	if !ok {
		return "", false
	}
	if larger {
		return fmt.Sprintf("%.4g times the %.4g nT the calibration was made in, a unit slip rather than another sensor or site: the calibration's log was probably in %s read as nT (make the calibration again with --unit bx=%s,by=%s,bz=%s; its offsets are %g times too small), or this log's unit is wrong", med/ref, ref, unit, unit, unit, unit, f), true
	}
	return fmt.Sprintf("1/%.4g of the %.4g nT the calibration was made in, a unit slip rather than another sensor or site: this log is probably in %s read as nT (give --unit bx=%s,by=%s,bz=%s), or the calibration's log was read in the wrong unit", ref/med, ref, unit, unit, unit, unit), true
}
