package main

import (
	"fmt"
	"math"

	"undercurrent/calibrate"
)

// baseConductorNT is the largest departure of a base record from its
// reference, nT, that the Earth's own variation explains. The daily range
// is tens of nT (DOMAIN.md: 34-81 nT in H at Boulder, November 2014), and
// even a strong storm at mid latitudes stays within a few hundred nT; a
// fixed sensor within a few metres of a conductor whose current varies
// (a DC traction return: 200 A changing by 30 % moves the field 1.5 m
// away by about 8000 nT) departs by thousands.
const baseConductorNT = 1000

// baseInConductorField returns a warning when the base correction removed
// departures above baseConductorNT from the survey log path: the base
// sensor sits in a conductor's field, which the correction then subtracts
// from every reading (found in review: a fixed sensor beside the cable
// given as --base drew 23 of 25 fits "sound" and warnings that blamed the
// clock and the calibration). "" when the departures are geomagnetic in size.
func baseInConductorField(base, path string, r *calibrate.BaseReport) string {
	big := math.Max(r.MaxAbs[0], math.Max(r.MaxAbs[1], r.MaxAbs[2]))
	if !(big > baseConductorNT) {
		return ""
	}
	return fmt.Sprintf("the base record %s departs from its reference by up to %.0f nT over %s's readings (east/north/up %.0f/%.0f/%.0f nT): no geomagnetic variation reaches that (tens of nT a day, a few hundred in a strong storm), so the base sensor is most likely in a conductor's field (beside a cable or a traction return whose current changes), and the correction subtracted that conductor's changing field from every reading; the currents and depths are not to be trusted. Place the base sensor far from any conductor (tens of metres), or log the current itself and give it as --current-reference instead",
		base, big, path, r.MaxAbs[0], r.MaxAbs[1], r.MaxAbs[2])
}
