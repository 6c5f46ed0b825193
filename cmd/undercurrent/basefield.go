package main

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// The survey's corrected field against the base record's absolute field.
//
// A base log holds the Earth's field in east, north, up at a fixed place
// near the survey. The survey's readings, once calibrated (and turned by
// their attitude, for a sensor-frame log), hold the same field plus the
// conductors' anomaly, which is a few hundred nT at most over most of a
// survey, so that their median is the same field to within the site's
// crustal differences (tens of nT). A sensor turned on its pole, a heading
// reference off or a leaning pole turns the survey's field away from the
// base's; a scale error (a spin calibration without --reference) or an
// offset left in changes its magnitude. Neither shows in the fits: every
// line is turned or scaled with the field, its misfit unchanged. A spin
// calibration cannot see a turn at all (it fixes the frame only up to a
// rotation), so this comparison is the run's only check of it.

const (
	// fieldTurnAllowDeg is the angle between the survey's median field and
	// the base's that a site allows: 1° is 870 nT across a 50 000 nT
	// field, several times the crustal differences between two places a
	// few hundred metres apart (tens of nT) and the median's share of the
	// conductors' anomaly.
	fieldTurnAllowDeg = 1.0
	// fieldTurnPerKmDeg is the main field's change of direction with
	// distance, degrees per km: the inclination of a dipole field changes
	// by about 2° per degree of latitude (111 km), declination gradients
	// are of the same order away from the poles (from memory of the IGRF
	// charts), taken at 0.03°/km to be safe.
	fieldTurnPerKmDeg = 0.03
	// fieldScaleAllow is the relative difference of |B| a site allows:
	// 0.25%, 125 nT at 50 000 nT, for crustal differences and the
	// median's share of the anomaly. A fluxgate's scale error is 0.1-1%
	// (from memory).
	fieldScaleAllow = 0.0025
	// fieldMagPerKm is the main field's change of magnitude with
	// distance, nT per km (a few nT/km in the IGRF, from memory, doubled).
	fieldMagPerKm = 10.0
	// maxFieldSamples is how many readings of each log the comparison
	// keeps (every k-th reading of a longer log).
	maxFieldSamples = 20000
)

// surveyField collects the survey's corrected field, east, north, up, nT,
// for the comparison with the base record.
type surveyField struct {
	e, n, u []float64
	// fitted is set when the values are the fitted groups' backgrounds
	// (one a group) rather than readings.
	fitted bool
	// rough is set when the values are a DC survey's readings, whose
	// median holds the conductors' field (up to about 1000 nT over a
	// strong line): no fit was sound to give its background.
	rough bool
}

// add keeps the finite readings of s (every k-th of a long log).
func (f *surveyField) add(s *ingest.Samples) {
	n := s.Len()
	step := 1 + n/maxFieldSamples
	for i := 0; i < n; i += step {
		e, no, u := s.Bx[i], s.By[i], s.Bz[i]
		if !finite(e) || !finite(no) || !finite(u) {
			continue
		}
		f.e, f.n, f.u = append(f.e, e), append(f.n, no), append(f.u, u)
	}
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// finiteMedian returns the median of the finite values of x (NaN when none).
func finiteMedian(x []float64) float64 {
	v := make([]float64, 0, len(x))
	for _, a := range x {
		if finite(a) {
			v = append(v, a)
		}
	}
	if len(v) == 0 {
		return math.NaN()
	}
	sort.Float64s(v)
	m := len(v) / 2
	if len(v)%2 == 1 {
		return v[m]
	}
	return (v[m-1] + v[m]) / 2
}

// baseDistanceKm returns the distance from the survey's origin to the
// base station, km, and whether it is known. A base log that is not an
// observatory's (no IAGA-2002 header) is taken to be the survey's own
// base station, beside it (0 km), unless it gives its latitude and
// longitude; an observatory's record with a position but no survey origin
// (local x, y only) is at an unknown distance.
func baseDistanceKm(base *ingest.Samples, origin *[2]float64) (float64, bool) {
	lat, err1 := strconv.ParseFloat(strings.TrimSpace(base.Meta["latitude"]), 64)
	lon, err2 := strconv.ParseFloat(strings.TrimSpace(base.Meta["longitude"]), 64)
	placed := err1 == nil && err2 == nil
	iaga := base.Meta["iaga_code"] != "" || base.Meta["elements"] != ""
	if !placed {
		return 0, !iaga
	}
	if origin == nil {
		return 0, false
	}
	// Haversine on a sphere of the mean Earth radius, 6371 km: a distance
	// only used to widen an allowance.
	const r = 6371.0
	p1, p2 := origin[0]*math.Pi/180, lat*math.Pi/180
	dl := (lon - origin[1]) * math.Pi / 180
	h := math.Pow(math.Sin((p2-p1)/2), 2) + math.Cos(p1)*math.Cos(p2)*math.Pow(math.Sin(dl/2), 2)
	return 2 * r * math.Asin(math.Min(1, math.Sqrt(h))), true
}

// baseFieldWarnings compares the survey's corrected field f with the base
// record's and returns a warning when their directions differ by more than
// a site allows (a turned or tilted sensor) and one when their magnitudes
// do (a scale error or an offset left in). Nothing when either is not an
// absolute Earth's field in east, north, up, or the base's distance is
// unknown (compared is then false). basePath names the base log, cal is the calibration applied
// (nil: none), mountYaw the --mount-yaw already applied (the flag's value
// to suggest is the sum).
func baseFieldWarnings(basePath string, base *ingest.Samples, f *surveyField, origin *[2]float64, cal *calibrate.Calibration, mountYaw float64, ot *orientTest) (warns []string, compared bool) {
	if base == nil || f == nil || len(f.e) < 10 && !(f.fitted && len(f.e) > 0) || base.Len() == 0 {
		return nil, false
	}
	if base.Frame == ingest.FrameSensor || calibrate.BaseFrameWarning(base) != "" || base.Meta["horizontal_frame"] == ingest.IAGABaselineKept {
		return nil, false
	}
	b := [3]float64{finiteMedian(base.Bx), finiteMedian(base.By), finiteMedian(base.Bz)}
	s := [3]float64{finiteMedian(f.e), finiteMedian(f.n), finiteMedian(f.u)}
	if !finite(b[0]+b[1]+b[2]) || !finite(s[0]+s[1]+s[2]) {
		return nil, false
	}
	nb, ns := norm(b), norm(s)
	earth := func(v float64) bool { return v >= calibrate.MinEarthField && v <= calibrate.MaxEarthField }
	if !earth(ns) {
		return nil, false // a field not in nT
	}
	// An observatory's variation record (IAGA-2002 Data Type
	// "variation") keeps an arbitrary baseline in its vector and a
	// nominal declination baseline (DECBAS): its direction and |B| are
	// not the absolute field (BOU20200101vsec.sec: vector |B| 51293 nT,
	// its own F column 51815 nT). Its F column, from a scalar
	// magnetometer, is absolute; a vector whose |B| disagrees with the
	// file's F is taken as not absolute whatever the file calls itself.
	dataType := strings.TrimSpace(base.Meta["data_type"])
	nf := math.NaN()
	if base.F != nil {
		nf = finiteMedian(base.F)
	}
	hasF := earth(nf)
	absolute := earth(nb) && !strings.HasPrefix(strings.ToLower(dataType), "variation") && !(hasF && math.Abs(nb-nf) > fieldScaleAllow*nf)
	levelOf := "base record"
	if !absolute {
		if !hasF {
			return nil, false // a variation record with no absolute level
		}
		kind := "its vector does not give the absolute field: its |B| differs from its F"
		if dataType != "" {
			kind = fmt.Sprintf("its vector is of Data Type %q, whose baseline is not the absolute field", dataType)
		}
		levelOf = fmt.Sprintf("base record's F column (its scalar total field; %s, so the field's direction is not compared)", kind)
		nb = nf
	}
	if !absolute && !hasF {
		return nil, false
	}
	km, known := baseDistanceKm(base, origin)
	if !known {
		return nil, false
	}
	compared = true
	refitLevel := false
	cos := (b[0]*s[0] + b[1]*s[1] + b[2]*s[2]) / (nb * ns)
	angle := math.Acos(math.Max(-1, math.Min(1, cos))) * 180 / math.Pi
	allow := fieldTurnAllowDeg + fieldTurnPerKmDeg*km
	if f.rough {
		allow = math.Max(allow, axesMatchDeg)
	}
	where := "beside the survey"
	if km > 0.05 {
		where = fmt.Sprintf("%.1f km from the survey", km)
	}
	what := "the survey's field after the corrections (median"
	if f.fitted {
		what = "the survey's field after the corrections (the median of the fitted groups' backgrounds, the conductors' field left out:"
	}
	if f.rough {
		what = "the survey's field after the corrections (the readings' median, which holds the conductors' field, no group's fit being sound enough to give its background:"
	}
	if absolute && angle > allow {
		if msg, ok, level := axesWarning(what, s, b, angle, allow, basePath, where, mountYaw, ot); ok {
			warns = append(warns, msg)
			if level != nil {
				ns, refitLevel = norm(*level), true
			}
		} else {
			warns = append(warns, turnWarning(what, s, b, angle, allow, basePath, where, cal, mountYaw, ot))
		}
	} else if absolute && f.fitted {
		if w := unseenTurnWarning(s, b, allow, basePath, where, cal, mountYaw, ot); w != "" {
			warns = append(warns, w)
		}
	}
	d := (ns - nb) / nb
	allowMag := fieldScaleAllow + fieldMagPerKm*km/nb
	if math.Abs(d) > allowMag && (!f.rough || refitLevel) {
		var cause string
		switch {
		case cal == nil:
			cause = fmt.Sprintf("no --calibration was given, so the sensor's offsets and scale are left in (calibrate it, with --reference %.0f if the base's level is absolute)", nb)
		case cal.Method == calibrate.MethodEllipsoid && !cal.ScaleFixed():
			cause = fmt.Sprintf("the calibration was made without --reference and keeps the sensor's own scale: calibrate again with --reference %.0f (the base's |B|, if its level is absolute)", nb)
		case cal.Method != calibrate.MethodEllipsoid:
			cause = fmt.Sprintf("the %s calibration fits offsets only, not the sensor's scale or soft iron, and may leave an offset undetermined", cal.Method)
		default:
			cause = "the calibration's scale or offsets do not suit this survey, or the base's own level is off"
		}
		src := ""
		switch {
		case refitLevel:
			src = " of the groups' backgrounds fitted again with the readings read as above"
		case f.fitted:
			src = " of the fitted groups' backgrounds"
		}
		warns = append(warns, fmt.Sprintf("|B| of the survey after the corrections is %.0f nT (median)%s, %+.2f%% from the %.0f nT of the %s (%s, %s), more than the %.2f%% that local anomalies and the distance between them allow: %s. Currents scale with the sensor's scale (a scale %.2f%% off gives currents %.2f%% off), which the fits' uncertainties do not include",
			ns, src, 100*d, nb, levelOf, basePath, where, 100*allowMag, cause, math.Abs(100*d), math.Abs(100*d)))
	}
	return warns, compared
}

func norm(v [3]float64) float64 { return math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2]) }

// uncheckedCalibrationWarning says what the calibration at path leaves
// open (Calibration.Caveats) when no base record's field could check it.
func uncheckedCalibrationWarning(path string, cal *calibrate.Calibration) string {
	cv := cal.Caveats()
	if len(cv) == 0 {
		return ""
	}
	return fmt.Sprintf("%s leaves open: %s; no base record's absolute field was there to check the survey's corrected field against (a base log beside the survey, --base, checks its direction to 1° and its |B| to 0.25%%)", path, strings.Join(cv, "; "))
}

// baseCheck holds what the comparison of the survey's field with the base
// record's needs until the groups are fitted.
type baseCheck struct {
	base    *ingest.Samples // nil: no base record to compare with
	raw     *surveyField    // the survey's corrected readings
	origin  *[2]float64
	cal     *calibrate.Calibration
	calPath string
	// enu is set when every log is in east, north, up (not a
	// sensor-frame log), where --field-axes applies.
	enu bool
}

// warnings compares the survey's field with the base record's
// (baseFieldWarnings) once the groups are fitted, and says what the
// calibration leaves open when nothing could check it. A DC survey's
// field is the sound fits' backgrounds (surveyLevel): the readings' median
// holds the conductors' field, which does not average out (a line's
// horizontal field has the same sign on both sides of it) and moved it by
// hundreds of nT over a 25 A line, and a failed fit's background holds a
// phantom line's. An AC survey's readings swing about the Earth's field
// and their median is kept. Without a base record, the vertical
// component's sign is checked against the site's hemisphere
// (upWarning).
func (c *baseCheck) warnings(o *locateOptions, sv *survey) (alerts, warns []string) {
	compared := false
	if c.raw != nil {
		f := c.surveyLevel(sv)
		if c.base != nil {
			alerts, compared = baseFieldWarnings(o.base, c.base, f, c.origin, c.cal, o.mountYaw, newOrientTest(o, sv, c.enu))
		} else if w := upWarning(f, c.origin); w != "" {
			alerts = append(alerts, w)
		}
	}
	if c.cal != nil && !compared {
		if w := uncheckedCalibrationWarning(c.calPath, c.cal); w != "" {
			warns = append(warns, w)
		}
	}
	return alerts, warns
}

// baseFarKm is the distance from the survey beyond which a base record is
// said to be too far to stand for the survey's own variation: the daily
// variation changes with latitude and follows local time, and a base
// station within about a hundred km, a few hundred at most, is the usual
// practice for a magnetic survey's diurnal correction (common practice,
// from memory; storms and pulsations differ over shorter distances still).
const baseFarKm = 300

// baseFarWarning returns a warning when the base record gives its own
// latitude and longitude (an IAGA-2002 header) and lies more than
// baseFarKm from the survey's origin, with the distance and the hours of
// local time between them; "" when it is near, or either place is
// unknown.
func baseFarWarning(basePath string, base *ingest.Samples, origin *[2]float64) string {
	if base == nil || origin == nil {
		return ""
	}
	km, known := baseDistanceKm(base, origin)
	if !known || !(km > baseFarKm) {
		return ""
	}
	lat, _ := strconv.ParseFloat(strings.TrimSpace(base.Meta["latitude"]), 64)
	lon, _ := strconv.ParseFloat(strings.TrimSpace(base.Meta["longitude"]), 64)
	name := strings.TrimSpace(base.Meta["station_name"])
	if code := strings.TrimSpace(base.Meta["iaga_code"]); code != "" {
		if name != "" {
			name += ", "
		}
		name += code
	}
	if name != "" {
		name = " (" + name + ")"
	}
	// Local time runs 1 hour per 15° of longitude.
	hours := math.Abs(math.Remainder(lon-origin[1], 360)) / 15
	return fmt.Sprintf("the base record %s%s lies at latitude %.3f°, longitude %.3f°, %.0f km from the survey (latitude %.3f°, longitude %.3f°) and %.1f hours of local time apart: the daily variation changes with latitude and follows local time, so a base record stands for a survey's variation only within about a few hundred km (%d km taken here, common practice); removing a far station's variation can add tens of nT of drift that is not the survey's. Use a base magnetometer at the site or the nearest observatory's record, or check the drift without --base",
		basePath, name, lat, math.Remainder(lon, 360), km, origin[0], math.Remainder(origin[1], 360), hours, baseFarKm)
}
