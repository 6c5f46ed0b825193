package calibrate

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"

	"undercurrent/ingest"
)

// This file holds the thin adapters from the slice algorithms to
// *ingest.Samples, which the commands and the live pipeline call.

func source(s *ingest.Samples) string {
	if s.Source == "" {
		return "log"
	}
	return s.Source
}

// errNilLog is the error of an adapter given a nil *ingest.Samples.
var errNilLog = errors.New("calibrate: no log: the *ingest.Samples is nil")

func checkField(s *ingest.Samples) error {
	if s == nil {
		return errNilLog
	}
	n := s.Len()
	if len(s.Bx) != n || len(s.By) != n || len(s.Bz) != n {
		return fmt.Errorf("calibrate: %s: field columns have %d, %d, %d rows, time has %d", source(s), len(s.Bx), len(s.By), len(s.Bz), n)
	}
	return nil
}

// Readings returns the field of s as vectors (a copy), for FitEllipsoid,
// FlipOffset and ZeroOffset. Rows with a non-finite component are an error
// naming the row and column.
func Readings(s *ingest.Samples) ([][3]float64, error) {
	if err := checkField(s); err != nil {
		return nil, err
	}
	out := make([][3]float64, s.Len())
	for i := range out {
		out[i] = [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
		for k, v := range out[i] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("calibrate: %s: row %d: column %s is %g", source(s), i, fieldNames[k], v)
			}
		}
	}
	return out, nil
}

// Apply corrects s.Bx, s.By, s.Bz in place: B = Matrix (raw - Offset). The
// calibration belongs to the sensor frame, so apply it before Tilt (or to
// logs whose sensor was held aligned with east-north-up). A nil c or s is
// an error.
func (c *Calibration) Apply(s *ingest.Samples) error {
	if err := c.Validate(); err != nil {
		return fmt.Errorf("calibrate: %w", err)
	}
	if err := checkField(s); err != nil {
		return err
	}
	c.ApplyColumns(s.Bx, s.By, s.Bz)
	return nil
}

// BaseCorrect subtracts the base station's departure from its reference,
// interpolated to the rover's times, from rover's field in place. Both logs
// must be in east-north-up (tilt-correct a sensor-frame rover first); an
// IAGA-2002 base read by ingest is. See BaseCorrectColumns. A nil rover or
// base is an error.
func BaseCorrect(rover, base *ingest.Samples, set *BaseSettings) (*BaseReport, error) {
	if base == nil {
		return nil, errors.New("calibrate: base correction: no base record: the base *ingest.Samples is nil")
	}
	if err := checkField(rover); err != nil {
		return nil, err
	}
	if err := checkField(base); err != nil {
		return nil, err
	}
	if rover.Frame != ingest.FrameENU {
		return nil, fmt.Errorf("calibrate: base correction: %s is in the sensor frame; rotate it to east-north-up first (tilt)", source(rover))
	}
	if base.Frame != ingest.FrameENU {
		return nil, fmt.Errorf("calibrate: base correction: base record %s is in the sensor frame, not east-north-up", source(base))
	}
	rep, err := BaseCorrectColumns(source(rover), rover.Time, [3][]float64{rover.Bx, rover.By, rover.Bz},
		source(base), base.Time, [3][]float64{base.Bx, base.By, base.Bz}, set)
	if w := BaseFrameWarning(base); err == nil && w != "" {
		rep.Warnings = append(rep.Warnings, w)
	}
	return rep, err
}

// BaseFrameWarning returns the warning BaseCorrect gives when the east and
// north of the base record are not geographic, so that its departures are
// not along the survey's east and north: IAGA-2002 variation data whose
// header gives no DECBAS, or H E Z data of another type, which are not
// turned (ingest.IAGABaselineNoDECBAS, ingest.IAGAHENotTurned); "" for
// any other base. The elements named are those the file reports ("H E"
// for a file of H and E alone). The reader warns of the same in its own
// words unless it is read with ingest.WithIAGAFrameWarning(false), as a
// caller that shows both should read it.
func BaseFrameWarning(base *ingest.Samples) string {
	if base == nil {
		return ""
	}
	switch base.Meta["horizontal_frame"] {
	case ingest.IAGABaselineNoDECBAS:
		return fmt.Sprintf("base record %s holds observatory variation data in the baseline frame and its header gives no baseline declination (DECBAS): its east and north departures are turned from geographic axes by that declination", source(base))
	case ingest.IAGAHENotTurned:
		el := ingest.IAGAVectorElements(base.Meta["elements"])
		if el == "" {
			el = "H E"
		}
		return fmt.Sprintf("base record %s holds observatory data in %s, which are not turned to geographic north (only variation data are, by DECBAS): its east and north departures are those along E and H, turned from geographic axes by the angle of the observatory's H axis", source(base), el)
	}
	return ""
}

// Tilt rotates sensor-frame readings of s to east-north-up in place, from
// its quaternion or roll/pitch/yaw columns (convention in EulerToENU and
// QuatToENU), and sets s.Frame to ingest.FrameENU. A nil s is an error.
func Tilt(s *ingest.Samples, set *TiltSettings) error {
	var ts TiltSettings
	if set != nil {
		ts = *set
	}
	if err := checkField(s); err != nil {
		return err
	}
	if s.Frame != ingest.FrameSensor {
		return fmt.Errorf("calibrate: tilt: %s is already in east-north-up", source(s))
	}
	n := s.Len()
	hasQ := s.Qw != nil && s.Qx != nil && s.Qy != nil && s.Qz != nil
	hasE := s.Roll != nil && s.Pitch != nil && s.Yaw != nil
	useQ := false
	switch ts.Attitude {
	case "":
		useQ = hasQ
		if !hasQ && !hasE {
			return fmt.Errorf("calibrate: tilt: %s has neither quaternion (qw, qx, qy, qz) nor roll, pitch, yaw columns", source(s))
		}
	case "quaternion":
		if !hasQ {
			return fmt.Errorf("calibrate: tilt: %s has no quaternion columns (qw, qx, qy, qz)", source(s))
		}
		useQ = true
	case "euler":
		if !hasE {
			return fmt.Errorf("calibrate: tilt: %s has no roll, pitch, yaw columns", source(s))
		}
	default:
		return fmt.Errorf("calibrate: tilt: attitude %q, want \"euler\" or \"quaternion\"", ts.Attitude)
	}
	// Check everything first so that an error leaves s untouched.
	var names [4]string
	var cols [4][]float64
	if useQ {
		names, cols = [4]string{"qw", "qx", "qy", "qz"}, [4][]float64{s.Qw, s.Qx, s.Qy, s.Qz}
	} else {
		names, cols = [4]string{"roll", "pitch", "yaw", ""}, [4][]float64{s.Roll, s.Pitch, s.Yaw, s.Roll}
	}
	for j, c := range cols {
		if len(c) != n {
			return fmt.Errorf("calibrate: tilt: %s: column %s has %d rows, time has %d", source(s), names[j], len(c), n)
		}
		for i, v := range c {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("calibrate: tilt: %s: row %d: column %s is %g", source(s), i, names[j], v)
			}
		}
	}
	for i := 0; i < n; i++ {
		var m [3][3]float64
		if useQ {
			var err error
			if m, err = QuatToENU(s.Qw[i], s.Qx[i], s.Qy[i], s.Qz[i]); err != nil {
				return fmt.Errorf("calibrate: tilt: %s: row %d: %w", source(s), i, err)
			}
		} else {
			m = EulerToENU(s.Roll[i], s.Pitch[i], s.Yaw[i])
		}
		v := matVec3(m, [3]float64{s.Bx[i], s.By[i], s.Bz[i]})
		s.Bx[i], s.By[i], s.Bz[i] = v[0], v[1], v[2]
	}
	s.Frame = ingest.FrameENU
	return nil
}

// Despike removes from s (every column) the rows the Hampel filter marks
// as spikes on bx, by or bz, or that hold a missing field value, and says
// how many. The moving window never crosses a change of group. A nil s
// is an error.
func Despike(s *ingest.Samples, set *DespikeSettings) (*DespikeReport, error) {
	if err := checkField(s); err != nil {
		return nil, err
	}
	n := s.Len()
	rep := &DespikeReport{}
	spike := make([]bool, n)
	for lo := 0; lo < n; {
		hi := lo + 1
		for hi < n && (s.Group == nil || s.Group[hi] == s.Group[lo]) {
			hi++
		}
		sp, per, nf, err := FindSpikes([][]float64{s.Bx[lo:hi], s.By[lo:hi], s.Bz[lo:hi]}, set)
		if err != nil {
			return nil, err
		}
		copy(spike[lo:hi], sp)
		for k := 0; k < 3; k++ {
			rep.PerAxis[k] += per[k]
		}
		rep.NonFinite += nf
		lo = hi
	}
	for i, sp := range spike {
		if sp {
			rep.Rows = append(rep.Rows, i)
		}
	}
	rep.Removed = len(rep.Rows)
	rep.Kept = n - rep.Removed
	if rep.Removed > 0 {
		compactRows(s, spike)
	}
	return rep, nil
}

// compactRows drops the rows marked in drop from every per-row column of s
// ([]float64 and []string fields of its length), so that columns ingest
// adds later are kept in step too.
func compactRows(s *ingest.Samples, drop []bool) {
	n := s.Len()
	v := reflect.ValueOf(s).Elem()
	for i := 0; i < v.NumField(); i++ {
		f := v.Field(i)
		if !f.CanSet() || f.Kind() != reflect.Slice || f.Len() != n {
			continue
		}
		switch col := f.Interface().(type) {
		case []float64:
			f.Set(reflect.ValueOf(compact(col, drop)))
		case []string:
			f.Set(reflect.ValueOf(compact(col, drop)))
		}
	}
}

func compact[T any](col []T, drop []bool) []T {
	j := 0
	for i, x := range col {
		if !drop[i] {
			col[j] = x
			j++
		}
	}
	return col[:j:j]
}

// Demodulate runs DemodulateColumns on s (time, field, positions and
// groups). See DemodulateColumns and DemodSettings. A nil s is an error.
func Demodulate(s *ingest.Samples, set *DemodSettings) (*DemodResult, error) {
	if err := checkField(s); err != nil {
		return nil, err
	}
	c := &Columns{Time: s.Time, B: [3][]float64{s.Bx, s.By, s.Bz}, Group: s.Group}
	if s.X != nil && s.Y != nil && s.Z != nil {
		c.Pos = [3][]float64{s.X, s.Y, s.Z}
	}
	res, err := DemodulateColumns(c, set)
	var nw *NoWindowError
	if errors.As(err, &nw) {
		nw.Source = source(s)
		return nil, nw
	}
	var ill *IllConditionedError
	if errors.As(err, &ill) {
		ill.Source = source(s)
		return nil, ill
	}
	if err != nil {
		return nil, fmt.Errorf("calibrate: %s: %s", source(s), strings.TrimPrefix(err.Error(), "calibrate: "))
	}
	return res, nil
}
