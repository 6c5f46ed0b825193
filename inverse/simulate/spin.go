package simulate

import (
	"math"
)

// The spin pattern is the calibration log of the calibrate package's
// ellipsoid fit: the sensor held at one place in a steady field and turned
// through many orientations. The turning is modelled as the surveyor
// spinning the sensor about its own z axis while slowly tipping that axis
// over, from pointing along the Earth's field to pointing against it. Seen
// in the sensor's axes, the direction of the field then runs along a
// spiral from the sensor's +z pole to its -z pole,
//
//	d(s) = (sqrt(1 - c^2) cos phi, sqrt(1 - c^2) sin phi, c),
//	c = 1 - 2 s,  phi = 2 pi N s,  s = (t - t0) / T in [0, 1],
//
// with N the number of turns and T the duration. Because c falls at a
// constant rate, equal times cover equal areas of the sphere of directions
// (Archimedes' hat-box theorem), so the readings cover the orientations
// evenly. The rotation R(t) from the sensor's axes to east-north-up is
// R = A(e0) B(d)^T, where e0 is the unit Earth field at the first reading
// and A(v), B(v) are orthonormal bases with v as their third column; it
// takes d to e0, so a steady field E reads R^T E = |E| d in the sensor's
// axes, and the drift and any conductor's field are turned the same way.

// Spin defaults.
const (
	defaultSpinDuration = 240 // s
	defaultSpinTurns    = 16
)

// spinDuration is the length of a spin log, s.
func (sc *Scenario) spinDuration() float64 {
	if sc.Survey.Duration > 0 {
		return sc.Survey.Duration
	}
	return defaultSpinDuration
}

// spinTurns is the number of turns of the spin spiral.
func (sc *Scenario) spinTurns() float64 {
	if sc.Survey.Turns > 0 {
		return sc.Survey.Turns
	}
	return defaultSpinTurns
}

// spinLine is the single "line" of a spin log: the sensor standing at At.
func (sc *Scenario) spinLine() ([]Line, error) {
	sv := &sc.Survey
	if !finite(sv.At[:]...) {
		return nil, sc.errAt("survey", 0, "at", "spin position %v must be finite", sv.At)
	}
	if d := sv.Duration; !finite(d) || d < 0 || d > 86400 {
		return nil, sc.errAt("survey", 0, "duration_s", "spin duration %g s must be in (0, 86400]", d)
	}
	if n := sv.Turns; !finite(n) || n < 0 || n > 1e4 {
		return nil, sc.errAt("survey", 0, "turns", "spin turns %g must be in (0, 10000]", n)
	}
	if sc.Sensor.Attitude == "walking" {
		return nil, sc.errAt("sensor", 0, "attitude", "a spin sets the sensor's attitude itself: drop attitude = \"walking\"")
	}
	if sv.SampleSpacing != 0 {
		return nil, sc.errAt("survey", 0, "sample_spacing_m", "a spin does not move: give sensor.sample_rate_hz instead of survey.sample_spacing_m")
	}
	return []Line{{Key: "S01", From: sv.At, To: sv.At}}, nil
}

// spinRows is the number of readings of a spin log.
func (sc *Scenario) spinRows() int {
	return int(math.Floor(sc.spinDuration()*sc.rate()+1e-9)) + 1
}

// spinRotation returns the rotation from the sensor's axes to east-north-up
// at time t of a spin (see the comment at the top of this file).
func (sc *Scenario) spinRotation(t float64) [3][3]float64 {
	s := (t - sc.start) / sc.spinDuration()
	s = math.Min(math.Max(s, 0), 1)
	c := 1 - 2*s
	phi := 2 * math.Pi * sc.spinTurns() * s
	r := math.Sqrt(math.Max(0, 1-c*c))
	sp, cp := math.Sincos(phi)
	b := basis([3]float64{r * cp, r * sp, c}, [3]float64{c * cp, c * sp, -r}, [3]float64{-sp, cp, 0})
	e := sc.earth(sc.start)
	a := frameAbout(e)
	// R = A B^T.
	var out [3][3]float64
	for i := range 3 {
		for j := range 3 {
			out[i][j] = a[i][0]*b[j][0] + a[i][1]*b[j][1] + a[i][2]*b[j][2]
		}
	}
	return out
}

// basis returns the matrix whose columns are p, q and v, in that order
// (third column v).
func basis(v, p, q [3]float64) [3][3]float64 {
	return [3][3]float64{
		{p[0], q[0], v[0]},
		{p[1], q[1], v[1]},
		{p[2], q[2], v[2]},
	}
}

// frameAbout returns a right-handed orthonormal basis (as columns) whose
// third column is the unit vector along v; up when v is zero.
func frameAbout(v [3]float64) [3][3]float64 {
	n := norm(v)
	if n == 0 {
		v, n = [3]float64{0, 0, 1}, 1
	}
	w := [3]float64{v[0] / n, v[1] / n, v[2] / n}
	// Any vector not parallel to w, made orthogonal to it.
	h := [3]float64{1, 0, 0}
	if math.Abs(w[0]) > 0.9 {
		h = [3]float64{0, 1, 0}
	}
	k := h[0]*w[0] + h[1]*w[1] + h[2]*w[2]
	p := [3]float64{h[0] - k*w[0], h[1] - k*w[1], h[2] - k*w[2]}
	pn := norm(p)
	p = [3]float64{p[0] / pn, p[1] / pn, p[2] / pn}
	q := cross(w, p) // p, q, w right-handed
	return basis(w, p, q)
}

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// toSensor expresses an east-north-up vector in the axes of a sensor whose
// rotation to east-north-up is r: r^T v.
func toSensor(v [3]float64, r [3][3]float64) [3]float64 {
	var out [3]float64
	for j := range 3 {
		out[j] = r[0][j]*v[0] + r[1][j]*v[1] + r[2][j]*v[2]
	}
	return out
}
