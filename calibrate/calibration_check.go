package calibrate

import (
	"fmt"
	"math"
	"strings"
	"time"

	"undercurrent/ingest"
)

// MaxReferenceMismatch is the relative difference between a log's median
// corrected |B| and a calibration's reference_nt above which Check warns.
//
// The Earth's main field changes by a few nT per kilometre (the gradients
// of the IGRF and WMM main-field models), its daily variation at mid
// latitudes is some tens of nT and even a strong magnetic storm moves it
// by a few hundred nT: over one site and one day |B| stays within about
// 1% (500 nT of 50 000). A calibration made for another sensor leaves that
// sensor's own offsets (hundreds to thousands of nT) and scale errors
// (percent) in the corrected field, which moves the median |B| by more.
// 2% leaves room for the survey's own anomalies and for a log made some
// hundreds of kilometres from where the calibration was made.
const MaxReferenceMismatch = 0.02

// MaxCalibrationAge is how long after its logs were taken a calibration
// is applied without a warning: a year. A rule of thumb, not a measured
// drift: a fluxgate's offsets drift with age and temperature cycling and
// jump when the sensor is knocked or its mount or electronics are changed,
// none of which a survey log shows by itself, and sensors are commonly
// recalibrated at least once a year. The check that does see a wrong
// calibration, the corrected field against the reference or a base
// station, stays the better guide; this one catches a stale file.
const MaxCalibrationAge = 365 * 24 * time.Hour

// MaxCalibrationLead is how long before a calibration's logs a survey may
// end without a warning: a day, so that a spin made at the end of the
// survey day, or the next morning, passes. A survey days before the
// calibration is either described by a later state of the sensor or, more
// often, given another job's file.
const MaxCalibrationLead = 24 * time.Hour

// MinEarthField and MaxEarthField bound the main field's magnitude at the
// Earth's surface, nT: about 22 000 nT in the South Atlantic to about
// 67 000 nT near the south magnetic pole in the IGRF (from memory), rounded
// outwards.
const (
	MinEarthField = 20000.0
	MaxEarthField = 70000.0
)

// sensorKeys are the metadata keys (Samples.Meta) that name a log's sensor.
var sensorKeys = []string{"sensor", "sensor_id", "serial"}

// SensorName returns the sensor a log names in its metadata (the Meta keys
// "sensor", "sensor_id" or "serial": in a CSV file the comment line
// "# undercurrent.meta.sensor: MAG-0412", in an Arrow or Parquet file the
// schema metadata key "undercurrent.meta.sensor"), or "" when it names
// none (and for a nil s). The calibrate command records it in
// Calibration.Sensor.
func SensorName(s *ingest.Samples) string {
	if s == nil {
		return ""
	}
	for _, k := range sensorKeys {
		if v := strings.TrimSpace(s.Meta[k]); v != "" {
			return v
		}
	}
	return ""
}

// Check looks for signs that c was made for another sensor than the one
// that took s, and returns a warning for each; none when nothing is amiss
// or nothing can be compared. s is the log as read, before Apply: Check
// corrects a copy of the field itself and leaves s unchanged.
//
//   - When c names its sensor (Calibration.Sensor) and s names one too
//     (SensorName), they must be the same.
//   - When c records when its logs were taken (LogsTaken) and s has
//     absolute times, s must not end more than MaxCalibrationLead
//     before them nor more than MaxCalibrationAge after them
//     (CheckTaken).
//   - When c has a reference field magnitude (reference_nt, written by the
//     ellipsoid method), the median |B| of s after the correction must be
//     within MaxReferenceMismatch of it. The median, not the mean, so that
//     readings near a conductor or a buried steel object do not move it.
//
// Rows with a non-finite field component are left out. A nil c or s has
// nothing to compare: no warnings.
func (c *Calibration) Check(s *ingest.Samples) []string {
	if c == nil || s == nil {
		return nil
	}
	var warns []string
	if got := SensorName(s); c.Sensor != "" && got != "" && got != c.Sensor {
		warns = append(warns, fmt.Sprintf("%s was taken by sensor %q, but the calibration was made for sensor %q: a calibration belongs to one sensor", source(s), got, c.Sensor))
	}
	if span := SpanOf(s.Time); span != nil {
		for _, w := range c.CheckTaken(span.First, span.Last) {
			warns = append(warns, source(s)+": "+w)
		}
	}
	if checkField(s) != nil {
		return warns
	}
	mags := make([]float64, 0, s.Len())
	raws := make([]float64, 0, s.Len())
	for i := range s.Bx {
		r := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
		if !finite3(r) {
			continue
		}
		v := c.Correct(r)
		mags = append(mags, math.Sqrt(v[0]*v[0]+v[1]*v[1]+v[2]*v[2]))
		raws = append(raws, math.Sqrt(r[0]*r[0]+r[1]*r[1]+r[2]*r[2]))
	}
	if len(mags) == 0 {
		return warns
	}
	med := median(mags, make([]float64, 0, len(mags)))
	// A log of the Earth's field that the calibration takes out of the
	// Earth's range has been given the wrong calibration, or one with a
	// wrong reference; the reference check below cannot see that, since
	// the field is corrected by the same calibration.
	if raw := median(raws, make([]float64, 0, len(raws))); raw >= MinEarthField && raw <= MaxEarthField && (med < MinEarthField || med > MaxEarthField) {
		warns = append(warns, fmt.Sprintf("%s: median |B| is %.0f nT as read but %.0f nT after the calibration, outside the Earth's surface field (%.0f-%.0f nT): the calibration (its reference or scale) does not suit this log, and currents scale with it", source(s), raw, med, MinEarthField, MaxEarthField))
	}
	if !(c.Reference > 0) {
		return warns
	}
	if d := (med - c.Reference) / c.Reference; math.Abs(d) > MaxReferenceMismatch {
		// A factor of about 1000 (or 1e5) is a unit slip, not another
		// sensor: before, a spin calibration made from a log in uT read
		// as nT was blamed on "another sensor, or far from this site"
		// (found in review).
		if w, ok := unitSlipWording(med, c.Reference); ok {
			warns = append(warns, fmt.Sprintf("%s: median |B| after the calibration is %.0f nT, %s", source(s), med, w))
			return warns
		}
		warns = append(warns, fmt.Sprintf("%s: median |B| after the calibration is %.0f nT, %+.1f%% from the %.0f nT the calibration was made in (more than the %.0f%% the Earth's field changes over a site and a day): was the calibration made for another sensor, or far from this site?", source(s), med, 100*d, c.Reference, 100*MaxReferenceMismatch))
	}
	return warns
}

func finite3(r [3]float64) bool {
	for _, v := range r {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// CheckTaken compares the times of readings corrected with c, first to
// last, with the time c's logs were taken (LogsTaken), and returns a
// warning when they end more than MaxCalibrationLead before the logs
// begin, or more than MaxCalibrationAge after the logs end; none when c
// records no
// times (nil c, logs without times, a file written before they were
// recorded) or first or last is the zero time.
func (c *Calibration) CheckTaken(first, last time.Time) []string {
	if c == nil || c.LogsTaken == nil || first.IsZero() || last.IsZero() {
		return nil
	}
	p := c.LogsTaken
	var warns []string
	if lead := p.First.Sub(last); lead > MaxCalibrationLead {
		warns = append(warns, fmt.Sprintf("the readings end %s, %s before the calibration's logs (%s of %s): a calibration describes the sensor as it was when its logs were taken, and one made after the survey holds for it only if nothing changed the sensor in between (a knock, a new mount or battery); check that it is this sensor's calibration for this job",
			last.UTC().Format("2006-01-02"), days(lead), c.logsWord(), p.Dates()))
	}
	if age := last.Sub(p.Last); age > MaxCalibrationAge {
		warns = append(warns, fmt.Sprintf("the readings end %s, %s after the calibration's logs (%s of %s), more than the %s after which a sensor is usually calibrated again (a rule of thumb: offsets drift, and a knock moves them): calibrate the sensor again, and compare the corrected field with a base station meanwhile",
			last.UTC().Format("2006-01-02"), days(age), c.logsWord(), p.Dates(), days(MaxCalibrationAge)))
	}
	return warns
}

// days shows a duration of a day or more in days ("820 days"), a shorter
// one in hours.
func days(d time.Duration) string {
	if d < 24*time.Hour {
		return fmt.Sprintf("%.0f hours", d.Hours())
	}
	n := int(d.Hours() / 24)
	if n == 1 {
		return "1 day"
	}
	return fmt.Sprintf("%d days", n)
}
