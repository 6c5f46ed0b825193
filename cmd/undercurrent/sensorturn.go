package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse"
)

// Signs of a sensor whose orientation is not what the log says, looked
// for in the survey's corrected field; both were diagnosed by the misfit
// warning as conductors closer together than the fit can part.
//
//   - A sensor-frame log is turned to east, north, up by its attitude
//     columns; an offset left in the readings (no calibration, or an
//     offset-only one that leaves an axis undetermined) turns with the
//     sensor and adds R(t) o to the field, R(t) the attitude's rotation.
//     offsetTurnCheck fits o by least squares, each group's own mean field
//     taken out, and warns when it is clearly there.
//   - A sensor that turns (rocks, sways, is turned on its pole) with no
//     attitude logged, or not applied, turns the Earth's field between
//     its axes: the components swing by far more than |B| does and the
//     fitted lines do not explain the swing (a conductor's field does the
//     same where it is at right angles to the Earth's, near the magnetic
//     equator, but the fits then explain it). swing compares them.

// minOffsetTurnNT is the least turning offset offsetTurnCheck warns
// about, nT: a tenth of a typical sensor's hard iron (hundreds of nT), and
// several times the noise of a fluxgate.
const minOffsetTurnNT = 30.0

// offsetTurn accumulates the normal equations of b - mean_g(b) =
// (R - mean_g(R)) o over the groups of the sensor-frame logs.
type offsetTurn struct {
	ata  [3][3]float64
	atb  [3]float64
	btb  float64
	n    int
	logs []string
}

// attitudeTurns returns the rotation Tilt applies to each reading of the
// sensor-frame log s, as rows R[i] (east, north, up of each sensor axis),
// found by turning the three unit vectors; nil when it cannot.
func attitudeTurns(s *ingest.Samples) [][3][3]float64 {
	n := s.Len()
	out := make([][3][3]float64, n)
	for j := 0; j < 3; j++ {
		c := *s
		cols := [3][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
		for i := range cols[j] {
			cols[j][i] = 1
		}
		c.Bx, c.By, c.Bz = cols[0], cols[1], cols[2]
		if err := calibrate.Tilt(&c, nil); err != nil {
			return nil
		}
		for i := 0; i < n; i++ {
			out[i][0][j], out[i][1][j], out[i][2][j] = c.Bx[i], c.By[i], c.Bz[i]
		}
	}
	return out
}

// groupRuns returns the row ranges of s's groups (one range without a
// group column).
func groupRuns(s *ingest.Samples) [][2]int {
	n := s.Len()
	if s.Group == nil {
		return [][2]int{{0, n}}
	}
	var runs [][2]int
	for lo := 0; lo < n; {
		hi := lo + 1
		for hi < n && s.Group[hi] == s.Group[lo] {
			hi++
		}
		runs = append(runs, [2]int{lo, hi})
		lo = hi
	}
	return runs
}

// add takes the readings of s, in east, north, up after Tilt, with rot
// the rotations Tilt applied (attitudeTurns).
func (t *offsetTurn) add(path string, s *ingest.Samples, rot [][3][3]float64) {
	if rot == nil || len(rot) != s.Len() {
		return
	}
	t.logs = append(t.logs, path)
	for _, r := range groupRuns(s) {
		lo, hi := r[0], r[1]
		if hi-lo < 10 {
			continue
		}
		var mb [3]float64
		var mr [3][3]float64
		m := 0
		for i := lo; i < hi; i++ {
			b := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
			if !finite(b[0] + b[1] + b[2]) {
				continue
			}
			m++
			for k := 0; k < 3; k++ {
				mb[k] += b[k]
				for j := 0; j < 3; j++ {
					mr[k][j] += rot[i][k][j]
				}
			}
		}
		if m < 10 {
			continue
		}
		for k := 0; k < 3; k++ {
			mb[k] /= float64(m)
			for j := 0; j < 3; j++ {
				mr[k][j] /= float64(m)
			}
		}
		for i := lo; i < hi; i++ {
			b := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
			if !finite(b[0] + b[1] + b[2]) {
				continue
			}
			for k := 0; k < 3; k++ {
				y := b[k] - mb[k]
				var a [3]float64
				for j := 0; j < 3; j++ {
					a[j] = rot[i][k][j] - mr[k][j]
				}
				for j := 0; j < 3; j++ {
					t.atb[j] += a[j] * y
					for l := 0; l < 3; l++ {
						t.ata[j][l] += a[j] * a[l]
					}
				}
				t.btb += y * y
				t.n++
			}
		}
	}
}

// warning returns the warning when the fitted turning offset is clear:
// at least minOffsetTurnNT, over five standard errors, and explaining at
// least a twentieth of the field's spread within the groups (a calibrated
// walking survey over a 1.8 A pipe: under a millionth, the offset under a
// tenth of its standard error). cal is the
// calibration applied (nil: none).
func (t *offsetTurn) warning(cal *calibrate.Calibration) string {
	if t.n < 60 {
		return ""
	}
	inv, ok := inverse3(t.ata)
	if !ok {
		return ""
	}
	var o [3]float64
	for j := 0; j < 3; j++ {
		for l := 0; l < 3; l++ {
			o[j] += inv[j][l] * t.atb[l]
		}
	}
	explained := o[0]*t.atb[0] + o[1]*t.atb[1] + o[2]*t.atb[2]
	rss := math.Max(t.btb-explained, 0)
	s2 := rss / float64(max(t.n-3, 1))
	size := norm(o)
	// The standard error of |o| along o's direction.
	var se float64
	if size > 0 {
		u := [3]float64{o[0] / size, o[1] / size, o[2] / size}
		var q float64
		for j := 0; j < 3; j++ {
			for l := 0; l < 3; l++ {
				q += u[j] * inv[j][l] * u[l]
			}
		}
		se = math.Sqrt(math.Max(q*s2, 0))
	}
	if size < minOffsetTurnNT || size < 5*se || explained < 0.05*t.btb {
		return ""
	}
	var why string
	switch {
	case cal == nil:
		why = "no --calibration was given, so the sensor's hard-iron offset is left in the readings; calibrate the sensor (undercurrent calibrate --spin, with --reference) and give --calibration"
	case cal.Method != calibrate.MethodEllipsoid:
		why = fmt.Sprintf("the %s calibration given fits offsets only (no soft iron%s), which cannot serve a sensor whose attitude changes; calibrate it with undercurrent calibrate --spin", cal.Method, undeterminedText(cal))
	default:
		why = "the calibration given does not take out this sensor's offset (made for another sensor, or the sensor changed since)"
	}
	rms := math.Sqrt(explained / float64(t.n))
	return fmt.Sprintf("%s: the readings are in the sensor's axes, turned to east, north, up by the attitude columns, and hold an offset that turns with the sensor: roughly (%.0f, %.0f, %.0f) nT in the sensor's x, y, z (± %.0f nT, with any soft iron, which turns with it too, in it), fitted from how the field follows the attitude, %.0f nT RMS of the field's spread within the traverses; %s. The fits take it for the conductors' field: misfits, phantom or missing conductors, currents and depths off, which the misfit warning may blame on conductors closer together than the fit can part",
		strings.Join(t.logs, ", "), o[0], o[1], o[2], se, rms, why)
}

// undeterminedText names the axes an offset-only calibration left at 0.
func undeterminedText(cal *calibrate.Calibration) string {
	if len(cal.Undetermined) == 0 {
		return ""
	}
	return fmt.Sprintf("; its %s offset not determined, left at 0", strings.Join(cal.Undetermined, ", "))
}

// inverse3 inverts a symmetric 3x3 matrix; false when it is near
// singular.
func inverse3(a [3][3]float64) ([3][3]float64, bool) {
	var inv [3][3]float64
	det := a[0][0]*(a[1][1]*a[2][2]-a[1][2]*a[2][1]) - a[0][1]*(a[1][0]*a[2][2]-a[1][2]*a[2][0]) + a[0][2]*(a[1][0]*a[2][1]-a[1][1]*a[2][0])
	scale := math.Abs(a[0][0]*a[1][1]*a[2][2]) + 1e-300
	if math.Abs(det) < 1e-9*scale {
		return inv, false
	}
	inv[0][0] = (a[1][1]*a[2][2] - a[1][2]*a[2][1]) / det
	inv[0][1] = (a[0][2]*a[2][1] - a[0][1]*a[2][2]) / det
	inv[0][2] = (a[0][1]*a[1][2] - a[0][2]*a[1][1]) / det
	inv[1][0] = (a[1][2]*a[2][0] - a[1][0]*a[2][2]) / det
	inv[1][1] = (a[0][0]*a[2][2] - a[0][2]*a[2][0]) / det
	inv[1][2] = (a[0][2]*a[1][0] - a[0][0]*a[1][2]) / det
	inv[2][0] = (a[1][0]*a[2][1] - a[1][1]*a[2][0]) / det
	inv[2][1] = (a[0][1]*a[2][0] - a[0][0]*a[2][1]) / det
	inv[2][2] = (a[0][0]*a[1][1] - a[0][1]*a[1][0]) / det
	return inv, true
}

// swing counts the groups whose field turned rather than changed.
type swing struct {
	groups, turned int
	// worst example: the group, its components' and |B|'s robust spread
	name  string
	comp  [3]float64
	mag   float64
	angle float64
	logs  []string
}

// minSwingDeg is the least angle (the robust spread of the field's
// direction within a group) swingCheck takes for a turning sensor: 1°,
// 870 nT across a 50 000 nT field, more than the anomaly of most of a
// traverse's readings.
const minSwingDeg = 1.0

// swingRatio is how many times |B|'s spread the components' must be: a
// conductor's field, circling the conductor, changes |B| by a share of
// its size set by the main field's part across the conductor (at least
// the cosine of the inclination's complement for a level line), so its
// components and |B| swing alike; a turn changes no |B| at all.
const swingRatio = 5.0

// robustScale is 1.4826 times the median absolute deviation of x.
func robustScale(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	m := finiteMedian(x)
	d := make([]float64, 0, len(x))
	for _, v := range x {
		if finite(v) {
			d = append(d, math.Abs(v-m))
		}
	}
	sort.Float64s(d)
	return 1.4826 * finiteMedian(d)
}

// add notes s, in east, north, up, among the logs checked when it holds
// a group of Earth-sized field; the groups themselves are checked once
// they are fitted (fitted).
func (w *swing) add(path string, s *ingest.Samples) {
	for _, r := range groupRuns(s) {
		lo, hi := r[0], r[1]
		if hi-lo < 20 {
			continue
		}
		mag := make([]float64, 0, hi-lo)
		for i := lo; i < hi; i++ {
			mag = append(mag, math.Sqrt(s.Bx[i]*s.Bx[i]+s.By[i]*s.By[i]+s.Bz[i]*s.Bz[i]))
		}
		if f := finiteMedian(mag); f >= calibrate.MinEarthField && f <= calibrate.MaxEarthField {
			w.logs = append(w.logs, path)
			return
		}
	}
}

// swingExplained is the share of the components' spread the fitted lines
// must leave unexplained for a group to count as turned: where the
// Earth's field is nearly level (near the magnetic equator) a conductor's
// field, in the plane across the conductor, is largely at right angles to
// it and swings the components with little change of |B|, as a turn
// does; but the fitted lines then explain it, and their residuals are
// the noise. A sensor rocking or turning along the traverse leaves most
// of its swing in the residuals (no line's field follows it).
const swingExplained = 0.5

// fitted checks the fitted DC groups: a group turned when its field's
// components spread by at least minSwingDeg, by more than swingRatio
// times |B|'s spread, and the fitted lines leave at least swingExplained
// of that spread in their residuals.
func (w *swing) fitted(groups []*group) {
	if len(w.logs) == 0 {
		return
	}
	for _, g := range groups {
		n := len(g.fields)
		if n < 20 {
			continue
		}
		mag := make([]float64, n)
		var c [3][]float64
		for k := range 3 {
			c[k] = make([]float64, n)
		}
		for i, b := range g.fields {
			mag[i] = math.Sqrt(b[0]*b[0] + b[1]*b[1] + b[2]*b[2])
			c[0][i], c[1][i], c[2][i] = b[0], b[1], b[2]
		}
		f := finiteMedian(mag)
		if !(f >= calibrate.MinEarthField && f <= calibrate.MaxEarthField) {
			continue
		}
		w.groups++
		comp := [3]float64{robustScale(c[0]), robustScale(c[1]), robustScale(c[2])}
		sm := robustScale(mag)
		total := norm(comp)
		angle := math.Asin(math.Min(1, total/f)) * 180 / math.Pi
		if !(angle >= minSwingDeg && total > swingRatio*sm) {
			continue
		}
		if r := g.res; g.err == nil && r != nil && len(r.Residuals) == n {
			var e [3][]float64
			for k := range 3 {
				e[k] = make([]float64, n)
			}
			for i, d := range r.Residuals {
				e[0][i], e[1][i], e[2][i] = d[0], d[1], d[2]
			}
			left := norm([3]float64{robustScale(e[0]), robustScale(e[1]), robustScale(e[2])})
			if left < swingExplained*total {
				continue // the conductors' own field
			}
		}
		w.turned++
		if angle > w.angle {
			w.name, w.comp, w.mag, w.angle = g.key, comp, sm, angle
		}
	}
}

// warning returns the warning when at least a third of the groups turned.
func (w *swing) warning() string {
	if w.turned == 0 || 3*w.turned < w.groups {
		return ""
	}
	ex := "the components' spread"
	if w.name != "" {
		ex = "on " + w.name + " the components' spread"
	}
	return fmt.Sprintf("%s: the field turned within %d of %d groups rather than changed: its components swing by far more than |B| does (%s is %.0f, %.0f, %.0f nT east, north, up against %.0f nT of |B|, a turn of about %.1f°) that the fitted lines do not explain. The sensor was turning (rocking, swaying or turned on its pole) and its attitude is not logged, not read (a sensor-frame log needs --frame sensor and attitude columns) or not right; the fits take the turned Earth's field for conductors, and the misfit warning may blame conductors closer together than the fit can part. Log the attitude and read it, or hold the sensor level and steady; check its calibration",
		strings.Join(w.logs, ", "), w.turned, w.groups, ex, w.comp[0], w.comp[1], w.comp[2], w.mag, w.angle)
}

// residualSwing returns the robust spread of the DC group g's fit
// residuals, nT: per field component (the root-mean-square of the three
// components' robust scales) and of |B| (the readings' magnitude less the
// fitted model's); 0, 0 without a fit or with under 20 readings. A sensor
// that tilts with no attitude logged turns the Earth's field between its
// axes, |B| unchanged: a tenth of a degree moves the components of a
// 52 400 nT field by up to 90 nT, which no line's field follows, while
// |B| keeps to the noise; a wrong model (conductors closer together than
// the fit can part, an object) leaves a field that changes |B| by its part
// along the Earth's field, as much as a component (where the strongest
// line runs near the field's direction, blindShare under minBlindShare,
// |B| hardly sees its field and nothing is measured). swing.fitted's 1°
// test on the readings themselves cannot see a turn this small under a
// line's field; the residuals, with the lines taken out, can, and report
// sharedMisfit compares the two spreads against the noise.
func residualSwing(g *group) (comp, mag float64) {
	r := g.res
	n := len(g.fields)
	if g.err != nil || r == nil || n < 20 || len(r.Residuals) != n {
		return 0, 0
	}
	var e [3][]float64
	for k := range 3 {
		e[k] = make([]float64, 0, n)
	}
	m := make([]float64, 0, n)
	for i, b := range g.fields {
		d := r.Residuals[i]
		if !finite(d[0]) || !finite(d[1]) || !finite(d[2]) || !finite(b[0]) || !finite(b[1]) || !finite(b[2]) {
			continue
		}
		for k := range 3 {
			e[k] = append(e[k], d[k])
		}
		model := [3]float64{b[0] - d[0], b[1] - d[1], b[2] - d[2]}
		m = append(m, norm(b)-norm(model))
	}
	if len(m) < 20 || !(blindShare(r) >= minBlindShare) {
		return 0, 0
	}
	comp = norm([3]float64{robustScale(e[0]), robustScale(e[1]), robustScale(e[2])}) / math.Sqrt(3)
	return comp, robustScale(m)
}

// minBlindShare is the least share of the Earth's field's direction across
// the strongest fitted line (blindShare) for residualSwing to measure: a
// field a wrong model leaves circles the line, so |B| follows its part
// along the Earth's field, s of it on average, and its components' spread
// per axis against |B|'s is about √2/(√3 s), 1.4 at s = 0.6, under report
// sharedMisfit's tiltRatio; a tilt's is as large as the fit leaves it.
const minBlindShare = 0.6

// blindShare returns the sine of the angle between the fit r's background
// field (the Earth's) and its strongest line; NaN without either.
func blindShare(r *inverse.Result) float64 {
	var src *inverse.SourceEstimate
	for i := range r.Sources {
		s := &r.Sources[i]
		if s.Kind == "line" && (src == nil || math.Abs(s.Current) > math.Abs(src.Current)) {
			src = s
		}
	}
	if src == nil {
		return math.NaN()
	}
	bg := r.Background
	nb, nd := norm(bg), norm(src.Dir)
	if !(nb > 0) || !(nd > 0) {
		return math.NaN()
	}
	c := [3]float64{bg[1]*src.Dir[2] - bg[2]*src.Dir[1], bg[2]*src.Dir[0] - bg[0]*src.Dir[2], bg[0]*src.Dir[1] - bg[1]*src.Dir[0]}
	return norm(c) / (nb * nd)
}
