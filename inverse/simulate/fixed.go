package simulate

import (
	"fmt"
	"math"
)

// The fixed pattern is the log of magnetometers held in place beside a
// conductor, as the continuous pipeline of the serve command reads them:
// every sensor logs at the sensor's sample rate for the survey's duration,
// in its own axes, under its own name in the group column. A sensor's
// orientation is given as in the serve command's site file, yaw, pitch and
// roll in degrees taking the sensor axes to east-north-up,
//
//	b_ENU = R b_sensor,  R = Rz(yaw) Ry(pitch) Rx(roll),
//
// right-handed rotations about the up, north and east axes, so the sensor
// reads b_sensor = R^T b_ENU and the pipeline's rotation undoes it exactly.
// Rows are interleaved in time: the readings of all sensors at the first
// time, in the order the sensors are listed, then at the second, and so on.

// defaultFixedDuration is how long fixed sensors log when the scenario
// gives no duration_s, s.
const defaultFixedDuration = 60

// maxDuration bounds a spin or a fixed log, s (one day).
const maxDuration = 86400

// fixedDuration is the length of a fixed log, s.
func (sc *Scenario) fixedDuration() float64 {
	if sc.Survey.Duration > 0 {
		return sc.Survey.Duration
	}
	return defaultFixedDuration
}

// fixedRows is the number of readings of each fixed sensor: times
// start + k/rate for 0 <= k < duration*rate, so that a log of whole
// seconds fills whole windows of the pipeline and no more.
func (sc *Scenario) fixedRows() int {
	return max(1, int(math.Floor(sc.fixedDuration()*sc.rate()+1e-9)))
}

// fixedLines checks the fixed sensors and returns one "line" per sensor,
// standing at its plan position, keyed by its name.
func (sc *Scenario) fixedLines() ([]Line, error) {
	sv := &sc.Survey
	if d := sv.Duration; !finite(d) || d < 0 || d > maxDuration {
		return nil, sc.errAt("survey", 0, "duration_s", "duration %g s must be in (0, %d]", d, maxDuration)
	}
	if sc.Sensor.Attitude == "walking" {
		return nil, sc.errAt("sensor", 0, "attitude", "fixed sensors have their own orientation: drop attitude = \"walking\"")
	}
	if sc.Sensor.Height != 0 {
		return nil, sc.errAt("sensor", 0, "height_m", "a fixed sensor's height is the up coordinate of its position: drop sensor.height_m")
	}
	if sv.SampleSpacing != 0 {
		return nil, sc.errAt("survey", 0, "sample_spacing_m", "fixed sensors do not move: give sensor.sample_rate_hz instead of survey.sample_spacing_m")
	}
	if len(sv.Sensors) == 0 {
		return nil, sc.errAt("survey", 0, "pattern", "pattern \"fixed\" needs at least one [[survey.sensor]] table (name, position, orientation)")
	}
	seen := map[string]int{}
	lines := make([]Line, len(sv.Sensors))
	for i, s := range sv.Sensors {
		bad := func(key, format string, a ...any) error {
			return sc.errAt("survey.sensor", i, key, "sensor %d (%q): %s", i+1, s.Name, fmt.Sprintf(format, a...))
		}
		if err := checkSensorName(s.Name); err != nil {
			return nil, bad("name", "%v", err)
		}
		if j, ok := seen[s.Name]; ok {
			return nil, bad("name", "name %q is also sensor %d's: each sensor needs its own name (the group column tells them apart)", s.Name, j+1)
		}
		seen[s.Name] = i
		if !finite(s.Position[:]...) {
			return nil, bad("position", "position %v must be finite (east, north, up in m)", s.Position)
		}
		for k, a := range s.Orientation {
			if !finite(a) || math.Abs(a) > 360 {
				return nil, bad("orientation", "%s %g degrees must be a number in [-360, 360] (orientation is yaw, pitch, roll in degrees)", [3]string{"yaw", "pitch", "roll"}[k], a)
			}
		}
		p := [2]float64{s.Position[0], s.Position[1]}
		lines[i] = Line{Key: s.Name, From: p, To: p}
	}
	return lines, nil
}

// checkSensorName checks that a fixed sensor's name is one the broker
// accepts as a subject token (ingest/broker.ValidToken): 1 to 64 letters,
// digits, '-' or '_'.
func checkSensorName(name string) error {
	if name == "" || len(name) > 64 {
		return fmt.Errorf("name %q: want 1 to 64 letters, digits, '-' or '_'", name)
	}
	for i, r := range name {
		if !(r == '-' || r == '_' || (r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')) {
			return fmt.Errorf("name %q: character %d (%q) is not a letter, digit, '-' or '_'", name, i+1, r)
		}
	}
	return nil
}

// fixedRotation returns R with b_ENU = R b_sensor for an orientation yaw,
// pitch, roll in degrees: R = Rz(yaw) Ry(pitch) Rx(roll). The matrix is the
// one bodyToNED builds from the same three angles; here it acts on
// east-north-up vectors.
func fixedRotation(o [3]float64) [3][3]float64 {
	return bodyToNED(o[2], o[1], o[0])
}

// minFixedClearance is how near a conductor may come to a fixed sensor, m.
// The field of a line or a segment grows as 1/r and is singular on it, a
// dipole's as 1/r^3; a sensor cannot sit inside the conductor a filament
// stands for. One centimetre is below any real mounting (a sensor package
// on the insulation of a cable or a busbar keeps its sensing element that
// far from the copper's centre line or further, and the filament's field is
// exact outside a round conductor, by Ampère's law), so no site is refused,
// and far above the rounding of typed coordinates, so a conductor typed
// through a sensor is caught: at 1 cm a line gives 2e4 nT per ampere.
const minFixedClearance = 0.01

// fixedClearance refuses conductor i when it passes through or within
// minFixedClearance of a fixed sensor, naming both; the conductor's
// geometry key is pointed at, the sensor by its name and line.
func (sc *Scenario) fixedClearance(i int) error {
	c := &sc.Conductors[i]
	key, what := "point", "the line passes"
	switch c.Kind {
	case "polyline":
		key = "vertices"
	case "dipole":
		key, what = "position", "the dipole lies"
	}
	for j, s := range sc.Survey.Sensors {
		p := s.Position
		dist, seg := math.Inf(1), 0
		switch c.Kind {
		case "line":
			dist = lineDistance(p, *c.Point, *c.Direction)
		case "polyline":
			for k := 0; k+1 < len(c.Vertices); k++ {
				if d := segmentDistance(p, c.Vertices[k], c.Vertices[k+1]); d < dist {
					dist, seg = d, k+1
				}
			}
			what = fmt.Sprintf("segment %d (vertices %d to %d) passes", seg, seg, seg+1)
		case "dipole":
			dist = norm(sub3(p, *c.Position))
		}
		if dist >= minFixedClearance {
			continue
		}
		at := ""
		if line, _ := findKey(sc.text, "survey.sensor", j, "position"); line > 0 {
			at = fmt.Sprintf(", line %d", line)
		}
		return sc.errAt("conductor", i, key, "conductor %d (%q): %s %g m from fixed sensor %d (%q at [%g, %g, %g]%s), within %g m: the field is singular on the conductor and a sensor cannot sit inside it; move the conductor or the sensor",
			i+1, c.Name, what, math.Round(dist*1e6)/1e6, j+1, s.Name, p[0], p[1], p[2], at, minFixedClearance)
	}
	return nil
}

// lineDistance is the distance from p to the infinite line through q along
// direction d (non-zero).
func lineDistance(p, q, d [3]float64) float64 {
	n := norm(d)
	u := [3]float64{d[0] / n, d[1] / n, d[2] / n}
	v := sub3(p, q)
	t := v[0]*u[0] + v[1]*u[1] + v[2]*u[2]
	return norm([3]float64{v[0] - t*u[0], v[1] - t*u[1], v[2] - t*u[2]})
}

// segmentDistance is the distance from p to the segment from a to b.
func segmentDistance(p, a, b [3]float64) float64 {
	ab, ap := sub3(b, a), sub3(p, a)
	t := (ap[0]*ab[0] + ap[1]*ab[1] + ap[2]*ab[2]) / (ab[0]*ab[0] + ab[1]*ab[1] + ab[2]*ab[2])
	t = math.Max(0, math.Min(1, t))
	return norm([3]float64{ap[0] - t*ab[0], ap[1] - t*ab[1], ap[2] - t*ab[2]})
}

func sub3(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
