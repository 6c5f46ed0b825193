package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// checkSurveyBaseUnits compares the median |B| of a survey log with the
// base record's: one site's field differs between the two by far less
// than the Earth's band (a few hundred nT at most), so a ratio near 1000
// or 100 000 (calibrate.UnitSlip) is a unit read as another. The side
// outside the Earth's band is the one in the wrong unit. Before, a survey
// in uT with a base in nT ran to "7 sound" at 0.024 A with warnings
// blaming close conductors or an object, and an nT survey declared as uT
// to "7 sound" at 25 000 A (found in review). It returns an error (the
// run is refused) when the survey's unit is the wrong one, or the base's
// unit was not given; a warning when --base-unit gave the base's unit
// (a record of variations only may sit outside the band).
func checkSurveyBaseUnits(o *locateOptions, base *ingest.Samples, path string, s *ingest.Samples) (string, error) {
	ms, ok1 := medianMagnitude(s.Bx, s.By, s.Bz)
	mb, ok2 := medianMagnitude(base.Bx, base.By, base.Bz)
	if !ok1 || !ok2 || !(mb > 0) {
		return "", nil
	}
	factor, larger, unit, ok := calibrate.UnitSlip(ms / mb)
	if !ok {
		return "", nil
	}
	inBand := func(m float64) bool { return m >= earthMinNT && m <= earthMaxNT }
	rel := fmt.Sprintf("%.4g times", ms/mb)
	if !larger {
		rel = fmt.Sprintf("1/%.4g of", mb/ms)
	}
	lead := fmt.Sprintf("%s: median |B| is %.4g nT as read, %s the base record's %.4g nT (%s): a factor of %g between a survey and its base station is a unit read as another, not the site (the Earth's field differs by far less over a survey)", path, ms, rel, mb, o.base, factor)
	switch {
	case !inBand(ms) && inBand(mb):
		given := o.read.fieldUnitGiven()
		var cause, fix, how string
		switch {
		case !larger:
			cause = fmt.Sprintf("the survey's field columns are probably in %s read as nT", unit)
			fix = fmt.Sprintf("give their unit with --unit bx=%s,by=%s,bz=%s", unit, unit, unit)
			how = "small"
		case given:
			cause = "the survey's field columns are probably in nT, not the unit given with --unit"
			fix = "give --unit bx=nT,by=nT,bz=nT (or leave --unit out)"
			how = "large"
		default:
			cause = fmt.Sprintf("the survey's field columns are in a unit %g times smaller than nT read as nT", factor)
			fix = "give their unit with --unit bx=U,by=U,bz=U"
			how = "large"
		}
		return "", fmt.Errorf("%s: %s, and every current would come out %g times too %s. Refused: %s", lead, cause, factor, how, fix)
	case inBand(ms) && !inBand(mb):
		cause := fmt.Sprintf("the base log's field columns are probably in %s read as nT (--base-unit bx=%s,by=%s,bz=%s)", unit, unit, unit, unit)
		if !larger {
			cause = fmt.Sprintf("the base log's field columns are in a unit %g times smaller than the one read (give it with --base-unit)", factor)
		}
		baseGiven := false
		for _, u := range o.baseUnits {
			for _, p := range strings.Split(u, ",") {
				if k, _, _ := strings.Cut(p, "="); fieldAxis(k) >= 0 {
					baseGiven = true
				}
			}
		}
		if baseGiven {
			return fmt.Sprintf("%s: %s, unless it records only the field's variations", lead, cause), nil
		}
		return "", fmt.Errorf("%s: %s, and the base correction would be %g times off. Refused", lead, cause, factor)
	}
	return "", nil
}

// tooLargeByUnit adds to the Earth-field band warning of a survey log
// whose median |B| is 1000 or 100 000 times the band (a field in nT read,
// or declared with --unit, as uT or gauss): no log with the Earth's field
// in it or removed reads so much, so the consequence is said plainly.
// Before, an nT log declared as uT ran to "7 sound" at 25 000 A with only
// the band warning (found in review).
func tooLargeByUnit(bx, by, bz []float64) string {
	m, ok := medianMagnitude(bx, by, bz)
	if !ok {
		return ""
	}
	for _, f := range []float64{1e3, 1e5} {
		if v := m / f; v >= earthMinNT && v <= earthMaxNT {
			return fmt.Sprintf(". Read so, the field is %g times the Earth's, and every current and anomaly below comes out %g times too large: check the unit before using any result", f, f)
		}
	}
	return ""
}

// earthLogUnit refuses a spin or flip log (the Earth's field turned
// through the sensor) whose median |B| read as nT is the Earth's band
// divided by 1000 or 100 000: its field columns are in uT or gauss, and a
// calibration made from it would hold offsets and a reference that many
// times too small, which locate then applied to logs in nT. Before, such
// a log drew only the band warning and the calibration was written, and
// locate later blamed "another sensor, or far from this site" (found in
// review). --unit, which the caller checks, overrides.
func earthLogUnit(path string, s *ingest.Samples) error {
	m, ok := medianMagnitude(s.Bx, s.By, s.Bz)
	if !ok {
		return nil
	}
	for _, u := range []struct {
		f    float64
		name string
	}{{1e3, "uT"}, {1e5, "G"}} {
		if v := m * u.f; v >= earthMinNT && v <= earthMaxNT {
			return fmt.Errorf("%s: median |B| is %.4g nT as read, but a spin or flip log holds the Earth's field, %.0f-%.0f nT: read in %s it is %.0f nT, so its field columns are probably in %s. A calibration made from it would hold offsets and a reference %g times too small, applied by locate to logs in nT. Refused: give the unit with --unit bx=%s,by=%s,bz=%s (or --unit bx=nT,by=nT,bz=nT if nT is right)",
				path, m, earthMinNT, earthMaxNT, u.name, v, u.name, u.f, u.name, u.name, u.name)
		}
	}
	return nil
}

// steadyFactor is how steady |B| must be to be taken for a record of the
// Earth's field: the 10th to 90th percentile within 5% of the median. The
// largest storms of the space age moved the field by about 600 nT, near
// 1% (Dst -589 nT on 14 March 1989, World Data Center for Geomagnetism,
// Kyoto); a survey's sensor offsets turning with its heading and the
// conductors' own anomalies add some hundreds of nT more. A log with the
// Earth's field removed (by the logger, or a baseline taken off) holds
// the conductors' field and noise, whose size changes by far more than
// that from one reading to the next.
const steadyFactor = 0.05

// steadyEarthUnit looks at the |B| of a log read as nT: when its median
// lies outside the Earth's band, one field unit's factor brings it inside
// and |B| is as steady as a record of the Earth's field (steadyFactor), it
// returns the median, the 10th-90th percentile spread relative to it, and
// that unit with its factor (nT per unit). ok is false otherwise.
func steadyEarthUnit(bx, by, bz []float64) (m, rel float64, unit string, factor float64, ok bool) {
	var mags []float64
	step := max(1, len(bx)/(1<<20))
	for i := 0; i < len(bx); i += step {
		if v := math.Sqrt(bx[i]*bx[i] + by[i]*by[i] + bz[i]*bz[i]); !math.IsNaN(v) && !math.IsInf(v, 0) {
			mags = append(mags, v)
		}
	}
	if len(mags) < 2 {
		return 0, 0, "", 0, false
	}
	sort.Float64s(mags)
	n := len(mags)
	m = mags[n/2]
	spread := mags[n*9/10] - mags[n/10]
	if m >= earthMinNT && m <= earthMaxNT || !(m > 0) || !(spread <= steadyFactor*m) {
		return 0, 0, "", 0, false
	}
	for _, u := range []struct {
		name   string
		factor float64 // nT per unit
	}{{"T", 1e9}, {"mT", 1e6}, {"G", 1e5}, {"uT", 1e3}, {"mG", 1e2}, {"pT", 1e-3}} {
		if f := m * u.factor; f >= earthMinNT && f <= earthMaxNT {
			return m, spread / m, u.name, u.factor, true
		}
	}
	return 0, 0, "", 0, false
}

// unitFactorWords words how far off a value read in nT is when its
// unit's factor (nT per unit) is factor: "1000 times too small".
func unitFactorWords(factor float64) string {
	if factor < 1 {
		return fmt.Sprintf("%g times too large", 1/factor)
	}
	return fmt.Sprintf("%g times too small", factor)
}

// The centred dipole of IGRF-14 for epoch 2025.0 (International
// Association of Geomagnetism and Aeronomy, Working Group V-MOD, 2024):
// g10, g11, h11 in nT. The dipole is within a few thousand nT of the
// Earth's field in most places (at Boulder, 40.14 N 105.24 W, it gives
// H 20 014 and Z 43 976 nT against the observatory's 20 827 and 46 875);
// the non-dipole field is largest over the South Atlantic, where it is
// about a third of the field.
const (
	dipoleG10 = -29350.0
	dipoleG11 = -1410.3
	dipoleH11 = 4545.5
)

// dipoleEarthField returns the horizontal intensity and the vertical
// component (positive down) of the IGRF-14 centred dipole at geodetic
// latitude and longitude in degrees, taken as geocentric at the surface
// (an error of at most 0.2 degrees in latitude, far below the dipole's
// own).
func dipoleEarthField(lat, lon float64) (h, z float64) {
	theta := (90 - lat) * math.Pi / 180
	phi := lon * math.Pi / 180
	st, ct := math.Sincos(theta)
	sp, cp := math.Sincos(phi)
	q := dipoleG11*cp + dipoleH11*sp
	x := -dipoleG10*st + q*ct // north
	y := dipoleG11*sp - dipoleH11*cp
	z = -2 * (dipoleG10*ct + q*st) // down
	return math.Hypot(x, y), z
}

// earthMatch is how close a steady field must come to the dipole's at the
// log's origin, in horizontal intensity and vertical component together,
// as a share of the dipole's total field, to be taken for the Earth's
// field at that place: the dipole is within 0.06 of it at Boulder and
// about 0.1 over Britain, and a field read level with an unknown heading
// keeps its horizontal intensity and its vertical component.
const earthMatch = 0.25

// earthAt reports whether the per-axis medians v (east, north, up, nT)
// are the Earth's field at the origin g by the dipole (earthMatch).
func earthAt(v [3]float64, g *ingest.Geodetic) bool {
	h, z := dipoleEarthField(g.Lat, g.Lon)
	f := math.Hypot(h, z)
	return math.Hypot(math.Hypot(v[0], v[1])-h, -v[2]-z) <= earthMatch*f
}

// surveyLogUnit looks at a DC survey log read without --unit whose |B|
// is as steady as a record of the Earth's field while its median lies
// outside the Earth's band, where one field unit's factor would bring it
// (steadyEarthUnit). Such a log is either a total field in that unit read
// as nT, or, below the band, a log with the Earth's field taken off (by
// the logger, a model or a reference sensor) leaving a fixed background
// of some tens or hundreds of nT, or a gradiometer's offset. Read with
// the factor, the first is still the Earth's field; the second is a
// vector fixed in the survey's frame that only by chance matches it. So
// the log is refused (err) only on the evidence of a total field: above
// the band (no background left by taking a field off reads so much);
// its size steady while its direction turns in the sensor's axes, as the
// Earth's field does for a carried sensor (ingest.TurningTotalField); or,
// in east, north, up with an origin, its medians times the factor the
// dipole Earth's field at that place (earthAt). Otherwise it returns a
// warning naming both readings and the --unit of each. Before, every
// steady log below the band was refused as in mG or uT, and the --unit
// it advised made a background-removed survey's currents 100 or 1000
// times too large with every fit "sound" (found in review). A log with
// the Earth's field removed that is not steady is not looked at; nor are
// an AC log (whose sensors may leave the static field out) and an
// IAGA-2002 file (in nT by its format).
func surveyLogUnit(path string, s *ingest.Samples) (string, error) {
	if s.Meta["elements"] != "" {
		return "", nil
	}
	m, rel, unit, factor, ok := steadyEarthUnit(s.Bx, s.By, s.Bz)
	if !ok {
		return "", nil
	}
	mags, vecs := fieldRows(s.Bx, s.By, s.Bz)
	var med [3]float64
	for k := range med {
		c := make([]float64, len(vecs))
		for i, v := range vecs {
			c[i] = v[k]
		}
		sort.Float64s(c)
		med[k] = c[len(c)/2] * factor
	}
	var why string
	switch {
	case factor < 1:
		why = "and far above it, where no background left by taking a field off lies"
	case ingest.TurningTotalField(mags, vecs):
		why = "and turning in the sensor's axes as the Earth's field does for a carried sensor"
	case s.Frame != ingest.FrameSensor && s.Origin != nil && earthAt(med, s.Origin):
		why = fmt.Sprintf("and read in %s its east, north and up are the Earth's field at the log's origin (%.4g, %.4g)", unit, s.Origin.Lat, s.Origin.Lon)
	}
	if why != "" {
		return "", fmt.Errorf("%s: median |B| is %.4g nT as read, outside %s, yet as steady as a record of the Earth's field (90%% of readings within %.2g%% of each other), %s: its field columns are probably in %s, and read as nT every current fitted would come out %s. Refused: give their unit with --unit bx=%s,by=%s,bz=%s, or --unit bx=nT,by=nT,bz=nT if they are in nT",
			path, m, earthBand, 100*rel, why, unit, unitFactorWords(factor), unit, unit, unit)
	}
	return fmt.Sprintf("%s: median |B| is %.4g nT as read, outside %s, and steady (90%% of readings within %.2g%% of each other), which fits two readings: the Earth's field taken off (by the logger, a model or a reference sensor) leaving a fixed background of %.4g nT, or a gradiometer's offset, when nT is right and the currents below stand (give --unit bx=nT,by=nT,bz=nT to say so); or total-field readings in %s, when every current below is %s (give --unit bx=%s,by=%s,bz=%s). Nothing in the log tells them apart: its field does not turn in the sensor's axes%s",
		path, m, earthBand, 100*rel, m, unit, unitFactorWords(factor), unit, unit, unit, originWords(s)), nil
}

// originWords says why the log's origin did not settle its unit.
func originWords(s *ingest.Samples) string {
	switch {
	case s.Frame == ingest.FrameSensor:
		return ", and in the sensor's axes it cannot be set beside the Earth's field at a place"
	case s.Origin == nil:
		return ", and with no origin it cannot be set beside the Earth's field at a place"
	}
	return fmt.Sprintf(", and read in another unit it is not the Earth's field at the log's origin (%.4g, %.4g)", s.Origin.Lat, s.Origin.Lon)
}

// fieldRows returns |B| and the field vector of the finite readings, at
// most about a million of them, evenly spread.
func fieldRows(bx, by, bz []float64) ([]float64, [][3]float64) {
	var mags []float64
	var vecs [][3]float64
	step := max(1, len(bx)/(1<<20))
	for i := 0; i < len(bx); i += step {
		if v := math.Sqrt(bx[i]*bx[i] + by[i]*by[i] + bz[i]*bz[i]); !math.IsNaN(v) && !math.IsInf(v, 0) {
			mags = append(mags, v)
			vecs = append(vecs, [3]float64{bx[i], by[i], bz[i]})
		}
	}
	return mags, vecs
}
