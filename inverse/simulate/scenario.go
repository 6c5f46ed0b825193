package simulate

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"
)

// Scenario describes a site, its conductors and a survey over it. The TOML
// key of each field is given in its tag; the package comment describes the
// file format. Load or Parse build one and check it; a Scenario built in code
// must be checked with Validate before use.
type Scenario struct {
	// Name is a short name, used for output file names ("fenwick-lane").
	Name string `toml:"name"`
	// Site is free text naming the place ("Harrow Fen substation").
	Site string `toml:"site"`
	// Description is free text.
	Description string `toml:"description"`
	// Seed seeds the noise generator; the same scenario and seed give the
	// same log, byte for byte.
	Seed int64 `toml:"seed"`
	// Start is the RFC 3339 time of the first reading; empty means
	// 2026-01-01T00:00:00Z.
	Start string `toml:"start"`

	// Origin, when present, geo-references the local frame: local (0, 0, 0)
	// is this WGS84 point.
	Origin *Origin `toml:"origin"`
	// Earth is the steady background field and its drift.
	Earth Earth `toml:"earth"`
	// Sensor describes the magnetometer.
	Sensor Sensor `toml:"sensor"`
	// Survey describes where the sensor is carried.
	Survey Survey `toml:"survey"`
	// Base, when present, describes a base station (see SimulateBase).
	Base *Base `toml:"base"`
	// Conductors are the sources: buried below a walked survey, anywhere
	// clear of the sensors of pattern "fixed".
	Conductors []Conductor `toml:"conductor"`

	// Source is the file the scenario came from, for messages; set by Load
	// and Parse.
	Source string `toml:"-"`

	start float64 // Start as Unix seconds, set by Validate
	lines []Line  // survey lines, set by Validate
	text  []byte  // the TOML text, for locating keys in messages
}

// Origin is a WGS84 point.
type Origin struct {
	Lat    float64 `toml:"lat_deg"`
	Lon    float64 `toml:"lon_deg"`
	Height float64 `toml:"height_m"`
}

// Earth is the steady background field, as seen by a sensor free of local
// anomalies, with an optional linear drift standing for the daily variation.
type Earth struct {
	// Field is the constant field, nT east, north, up.
	Field [3]float64 `toml:"field_nt"`
	// Drift is the rate of change of the field, nT per hour east, north, up.
	Drift [3]float64 `toml:"drift_nt_per_hour"`
}

// Sensor describes the magnetometer carried over the site.
type Sensor struct {
	// Height is the sensor's height above the ground, m. Zero is allowed
	// (a sensor lying on the ground).
	Height float64 `toml:"height_m"`
	// Noise is the one-sigma white noise per axis, nT.
	Noise float64 `toml:"noise_nt"`
	// SampleRate is readings per second. Give it or Survey.SampleSpacing,
	// not both.
	SampleRate float64 `toml:"sample_rate_hz"`
	// Offset is the hard-iron offset added to every reading, nT.
	Offset [3]float64 `toml:"offset_nt"`
	// Matrix is the soft-iron matrix applied to the true field; nil means
	// the identity. Rows are output axes.
	Matrix *[3][3]float64 `toml:"matrix"`
	// Attitude is how the sensor is held. "" or "level": its axes are
	// east, north and up. "walking": it faces along the survey line (body
	// axes x forward, y right, z down) and sways as it is carried; the log
	// then holds the field in the sensor frame with roll, pitch and yaw
	// columns (aerospace Z-Y-X convention, see attitude.go), for the tilt
	// correction of the calibrate package. Offset and Matrix act in the
	// sensor frame either way.
	Attitude string `toml:"attitude"`
	// Sway is the amplitude of the walking sway in roll, degrees (pitch
	// sways by 0.7 and heading by 0.5 of it).
	Sway float64 `toml:"sway_deg"`
}

// Survey is where the sensor goes: traverses across a route, or a grid of
// parallel lines.
type Survey struct {
	// Pattern is "traverses" (the default), "grid", "spin" (the sensor
	// held at At and turned through many orientations for Duration
	// seconds: a calibration log in the sensor's own axes, see spin.go) or
	// "fixed" (the sensors listed in Sensors, each logging in its own axes
	// for Duration seconds, see fixed.go).
	Pattern string `toml:"pattern"`

	// Route is the plan path (east, north) the traverses cross. When empty
	// it is the plan view of the first line or polyline conductor.
	Route [][2]float64 `toml:"route"`
	// Count is the number of traverses.
	Count int `toml:"count"`
	// Spacing is the distance along the route between traverses, m.
	Spacing float64 `toml:"spacing_m"`
	// FirstAt is the chainage along the route of the first traverse, m.
	FirstAt float64 `toml:"first_at_m"`
	// Length is the length of each traverse, centred on the route, m.
	Length float64 `toml:"length_m"`

	// Corner is the grid's first corner (east, north), m.
	Corner [2]float64 `toml:"corner"`
	// Size is the grid's extent along and across its lines, m.
	Size [2]float64 `toml:"size_m"`
	// Azimuth is the direction of the grid lines, degrees clockwise from
	// north; lines are stacked to the right of the first one.
	Azimuth float64 `toml:"azimuth_deg"`
	// LineSpacing is the distance between grid lines, m.
	LineSpacing float64 `toml:"line_spacing_m"`

	// At is where a spin is done (east, north), m; the sensor is at its
	// height above the ground.
	At [2]float64 `toml:"at"`
	// Duration is how long a spin lasts, s, zero meaning 240; or how long
	// fixed sensors log, s, zero meaning 60.
	Duration float64 `toml:"duration_s"`
	// Turns is how many times the sensor is turned about its own z axis
	// during a spin while that axis tips over; zero means 16.
	Turns float64 `toml:"turns"`

	// Sensors are the fixed sensors of pattern "fixed" ([[survey.sensor]]
	// tables), logged side by side at Sensor.SampleRate.
	Sensors []FixedSensor `toml:"sensor"`

	// Speed is the walking speed, m/s; zero means 1 m/s.
	Speed float64 `toml:"speed_m_s"`
	// SampleSpacing is the distance between readings along a line, m; an
	// alternative to Sensor.SampleRate (rate = speed / spacing).
	SampleSpacing float64 `toml:"sample_spacing_m"`
	// Turn is the time between the end of one line and the start of the
	// next, s.
	Turn float64 `toml:"turn_s"`
	// Zigzag walks every other line in the opposite direction; nil means
	// true.
	Zigzag *bool `toml:"zigzag"`
}

// FixedSensor is one magnetometer held in place (pattern "fixed"), given as
// the site file of the serve command gives it, so that an asset's sensors
// can be copied between the two.
type FixedSensor struct {
	// Name is the sensor's name, written in the group column: 1 to 64
	// letters, digits, '-' or '_' (the names the broker accepts).
	Name string `toml:"name"`
	// Position is east, north, up, m; up is height above the ground.
	Position [3]float64 `toml:"position"`
	// Orientation is yaw, pitch, roll in degrees taking the sensor axes to
	// east-north-up: b_ENU = Rz(yaw) Ry(pitch) Rx(roll) b_sensor, right-
	// handed rotations about the up, north and east axes. Zero is a sensor
	// with its x, y, z axes along east, north, up.
	Orientation [3]float64 `toml:"orientation"`
}

// Base describes a base station: a fixed sensor away from the conductors
// logging the Earth field and its drift for the whole survey.
type Base struct {
	// SampleRate is readings per second; zero means 1.
	SampleRate float64 `toml:"sample_rate_hz"`
	// Noise is the one-sigma white noise per axis, nT.
	Noise float64 `toml:"noise_nt"`
	// Offset is a constant difference from the field the rover sees (local
	// geology, the station's own sensor offset), nT.
	Offset [3]float64 `toml:"offset_nt"`
	// Margin is how long the station logs before the first and after the
	// last rover reading, s; zero means 60.
	Margin float64 `toml:"margin_s"`
}

// Conductor is one buried source.
type Conductor struct {
	// Name is free text for messages.
	Name string `toml:"name"`
	// Kind is "line" (infinite straight filament), "polyline" (connected
	// finite segments) or "dipole" (a magnetised object such as a buried
	// steel drum).
	Kind string `toml:"kind"`

	// Point and Direction define a line: a point on it, m ENU, and its
	// direction (normalised on use). Current flows along Direction.
	Point     *[3]float64 `toml:"point"`
	Direction *[3]float64 `toml:"direction"`
	// Vertices define a polyline, m ENU; current flows from the first
	// vertex to the last.
	Vertices [][3]float64 `toml:"vertices"`
	// Position and Moment define a dipole: where it is, m ENU, and its
	// moment, A m^2 east, north, up. A dipole with a Frequency alternates
	// (an object magnetised by a cable's alternating field) and Moment is
	// then RMS; without one it is static (magnetised by the Earth's field).
	Position *[3]float64 `toml:"position"`
	Moment   *[3]float64 `toml:"moment_a_m2"`

	// Current is the current in a line, or in every segment of a polyline,
	// A (RMS when Frequency > 0).
	Current float64 `toml:"current_a"`
	// Currents gives a polyline one current per segment, A; it overrides
	// Current.
	Currents []float64 `toml:"currents_a"`
	// Frequency is the AC frequency, Hz; zero means DC.
	Frequency float64 `toml:"frequency_hz"`
	// Phase is the AC phase at Unix time zero, degrees.
	Phase float64 `toml:"phase_deg"`
	// Harmonics are further tones a line or polyline carries besides its
	// current_a at frequency_hz (mains harmonics: a supply core's 5th, a
	// neutral's 3rd), each in every segment and steady through a
	// change_at_s; the field is the sum.
	Harmonics []Tone `toml:"harmonics"`

	// ChangeAt, when set, is when the current changes, s after the first
	// reading; from then on the conductor carries CurrentAfter (RMS for
	// AC, same frequency and phase). Lines and polylines with one current
	// only. Both keys are given or neither.
	ChangeAt     *float64 `toml:"change_at_s"`
	CurrentAfter *float64 `toml:"current_after_a"`

	// Overhead marks a line above a walked survey (an overhead line, a
	// cable tray over a walkway): a horizontal line at least 0.5 m above
	// the sensor height, which walked surveys otherwise refuse.
	Overhead bool `toml:"overhead"`
}

// Tone is one further frequency a conductor carries (Conductor.Harmonics).
type Tone struct {
	// Frequency is the tone's frequency, Hz, above zero.
	Frequency float64 `toml:"frequency_hz"`
	// Current is its RMS current, A, along the conductor's direction.
	Current float64 `toml:"current_a"`
	// Phase is its phase at Unix time zero, degrees.
	Phase float64 `toml:"phase_deg"`
}

// Limits on what a scenario may ask for, so that a typing slip cannot fill
// the disk or the memory.
const (
	// MaxRows is the most readings Simulate produces (about 0.6 GB of
	// columns in memory).
	MaxRows = 10_000_000
	// maxLines bounds the number of traverses or grid lines.
	maxLines = 10_000
	// minSpeed and maxSpeed bound survey.speed_m_s, m/s.
	minSpeed, maxSpeed = 1e-6, 100.0
	// maxWalk bounds a walked survey's duration, s (about three years).
	maxWalk = 1e8
	// maxTurn bounds survey.turn_s, s.
	maxTurn = 86400.0
)

// decodeErrRE matches the decoder's type errors.
var decodeErrRE = regexp.MustCompile(`^toml: line (\d+) \(last key "([^"]*)"\): (.*)$`)

// defaultStart is the time of the first reading when Start is empty.
var defaultStart = time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)

// Load reads and checks a scenario file.
func Load(path string) (*Scenario, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("simulate: %w", err)
	}
	return Parse(data, path)
}

// Parse decodes and checks a scenario from TOML text; name is the file name
// used in messages. Unknown keys are errors, so that a misspelt key is not
// silently ignored.
func Parse(data []byte, name string) (*Scenario, error) {
	sc := &Scenario{Source: name, text: data}
	md, err := toml.Decode(string(data), sc)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, fmt.Errorf("simulate: %s:%d:%d: %s", name, pe.Position.Line, pe.Position.Col, pe.Message)
		}
		// Type mismatches come as "toml: line N (last key "a.b"): msg".
		if m := decodeErrRE.FindStringSubmatch(err.Error()); m != nil {
			line, col := m[1], "1"
			k := strings.Split(m[2], ".")
			if l, c := findKey(data, strings.Join(k[:len(k)-1], "."), -1, k[len(k)-1]); l > 0 {
				line, col = strconv.Itoa(l), strconv.Itoa(c)
			}
			return nil, fmt.Errorf("simulate: %s:%s:%s: key %s: %s", name, line, col, m[2], TOMLWords(m[3]))
		}
		return nil, fmt.Errorf("simulate: %s: %w", name, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, sc.keyErr(k, "unknown key %q (misspelt? see the scenario format in the package documentation)", k.String())
	}
	if err := sc.Validate(); err != nil {
		return nil, err
	}
	return sc, nil
}

// Validate checks the scenario and fills in defaults. Errors name the file,
// the line when it can be found, and the key.
func (sc *Scenario) Validate() error {
	if sc.Name == "" {
		base := filepath.Base(sc.Source)
		sc.Name = strings.TrimSuffix(base, filepath.Ext(base))
		if sc.Name == "" || sc.Name == "." {
			sc.Name = "scenario"
		}
	}
	sc.start = float64(defaultStart.Unix())
	if sc.Start != "" {
		t, err := time.Parse(time.RFC3339Nano, sc.Start)
		if err != nil {
			return sc.errAt("", 0, "start", "%q is not an RFC 3339 time such as 2026-03-14T09:30:00Z", sc.Start)
		}
		sc.start = float64(t.UnixNano()) / 1e9
	}
	if o := sc.Origin; o != nil {
		if !finite(o.Lat, o.Lon, o.Height) || math.Abs(o.Lat) > 90 || math.Abs(o.Lon) > 180 {
			return sc.errAt("origin", 0, "lat_deg", "origin (%g, %g, %g) is not a WGS84 latitude, longitude and height", o.Lat, o.Lon, o.Height)
		}
	}
	if !finite(sc.Earth.Field[:]...) || !finite(sc.Earth.Drift[:]...) {
		return sc.errAt("earth", 0, "field_nt", "earth field and drift must be finite numbers")
	}
	if err := sc.validateSensor(); err != nil {
		return err
	}
	// A spin (a calibration log) is done away from conductors; an unknown
	// pattern is reported by planLines.
	walked := sc.Survey.Pattern == "" || sc.Survey.Pattern == "traverses" || sc.Survey.Pattern == "grid"
	if len(sc.Conductors) == 0 && walked {
		return fmt.Errorf("simulate: %s: no [[conductor]] tables: a scenario needs at least one source", sc.Source)
	}
	// Fixed sensors are checked first: the conductors must keep clear of
	// them.
	if sc.Survey.Pattern == "fixed" {
		if _, err := sc.fixedLines(); err != nil {
			return err
		}
	} else if len(sc.Survey.Sensors) > 0 && (walked || sc.Survey.Pattern == "spin") {
		return sc.errAt("survey.sensor", 0, "", "[[survey.sensor]] tables are for pattern = \"fixed\"")
	}
	for i := range sc.Conductors {
		if err := sc.validateConductor(i); err != nil {
			return err
		}
	}
	if err := sc.validateBase(); err != nil {
		return err
	}
	lines, err := sc.planLines()
	if err != nil {
		return err
	}
	sc.lines = lines
	rows := 0
	for _, l := range lines {
		rows += sc.lineSamples(l)
		if rows > MaxRows {
			return sc.errAt("survey", 0, "", "the survey would log more than %d readings: lower the sample rate, the line length, the number of lines or the spin duration", MaxRows)
		}
	}
	if walked {
		dur := sc.Survey.Turn * float64(len(lines))
		for _, l := range lines {
			dur += l.Length() / sc.speed()
		}
		if !(dur <= maxWalk) {
			return sc.errAt("survey", 0, "speed_m_s", "the survey would take %.3g s, more than %g s (about three years): raise the speed or shorten the lines", dur, maxWalk)
		}
	}
	return nil
}

func (sc *Scenario) validateSensor() error {
	s := &sc.Sensor
	if !finite(s.Height, s.Noise, s.SampleRate) || s.Height < 0 {
		return sc.errAt("sensor", 0, "height_m", "sensor height %g m must be a number >= 0 (height above ground)", s.Height)
	}
	if s.Noise < 0 {
		return sc.errAt("sensor", 0, "noise_nt", "noise %g nT must be >= 0", s.Noise)
	}
	switch s.Attitude {
	case "", "level", "walking":
	default:
		return sc.errAt("sensor", 0, "attitude", "unknown attitude %q: want \"level\" or \"walking\"", s.Attitude)
	}
	if !finite(s.Sway) || s.Sway < 0 || s.Sway > 45 {
		return sc.errAt("sensor", 0, "sway_deg", "sway %g degrees must be in [0, 45]", s.Sway)
	}
	if s.Sway > 0 && s.Attitude != "walking" {
		return sc.errAt("sensor", 0, "sway_deg", "sway needs attitude = \"walking\"")
	}
	if !finite(s.Offset[:]...) {
		return sc.errAt("sensor", 0, "offset_nt", "offset must be finite")
	}
	if s.Matrix != nil {
		for i := range s.Matrix {
			if !finite(s.Matrix[i][:]...) {
				return sc.errAt("sensor", 0, "matrix", "matrix must be finite")
			}
		}
	}
	hasRate, hasSpacing := s.SampleRate != 0, sc.Survey.SampleSpacing != 0
	switch {
	case hasRate && hasSpacing:
		return sc.errAt("sensor", 0, "sample_rate_hz", "give sensor.sample_rate_hz or survey.sample_spacing_m, not both")
	case !hasRate && !hasSpacing:
		return sc.errAt("sensor", 0, "sample_rate_hz", "missing: give sensor.sample_rate_hz (readings per second) or survey.sample_spacing_m")
	case hasRate && (s.SampleRate < 0 || s.SampleRate > 1e6):
		return sc.errAt("sensor", 0, "sample_rate_hz", "sample rate %g Hz must be in (0, 1e6]", s.SampleRate)
	case hasSpacing && !(sc.Survey.SampleSpacing > 0) || !finite(sc.Survey.SampleSpacing):
		return sc.errAt("survey", 0, "sample_spacing_m", "sample spacing %g m must be > 0", sc.Survey.SampleSpacing)
	}
	// A speed or a turn time far out of range gives times past any clock
	// (turn_s = 1e300 wrote a log of times near 1e300 s).
	if sp := sc.Survey.Speed; !finite(sp) || sp < 0 || sp > 0 && (sp < minSpeed || sp > maxSpeed) {
		return sc.errAt("survey", 0, "speed_m_s", "speed %g m/s must be in [%g, %g]", sp, minSpeed, maxSpeed)
	}
	if t := sc.Survey.Turn; !finite(t) || t < 0 || t > maxTurn {
		return sc.errAt("survey", 0, "turn_s", "turn time %g s must be in [0, %g] (a day)", t, maxTurn)
	}
	return nil
}

// validateHarmonics checks conductor i's further tones: each at its own
// frequency, above zero and below half the sample rate, on a line or a
// polyline with one current in every segment.
func (sc *Scenario) validateHarmonics(i int) error {
	c := &sc.Conductors[i]
	if len(c.Harmonics) == 0 {
		return nil
	}
	bad := func(format string, a ...any) error {
		return sc.errAt("conductor", i, "harmonics", "conductor %d (%q): %s", i+1, c.Name, fmt.Sprintf(format, a...))
	}
	if c.Kind != "line" && c.Kind != "polyline" {
		return bad("harmonics are for a line or a polyline")
	}
	if len(c.Currents) > 0 {
		return bad("harmonics are for a conductor with one current in every segment (no currents_a)")
	}
	for j, h := range c.Harmonics {
		if !finite(h.Frequency, h.Current, h.Phase) {
			return bad("harmonic %d: frequency, current and phase must be finite numbers", j+1)
		}
		if h.Frequency <= 0 || h.Frequency >= sc.rate()/2 {
			return bad("harmonic %d: %g Hz must be above 0 and below half the sample rate (%g Hz)", j+1, h.Frequency, sc.rate()/2)
		}
		if h.Frequency == c.Frequency {
			return bad("harmonic %d: %g Hz is the conductor's own frequency_hz (give one current per frequency)", j+1, h.Frequency)
		}
		for k := range j {
			if c.Harmonics[k].Frequency == h.Frequency {
				return bad("harmonics %d and %d are both at %g Hz", k+1, j+1, h.Frequency)
			}
		}
	}
	return nil
}

func (sc *Scenario) validateConductor(i int) error {
	c := &sc.Conductors[i]
	bad := func(key, format string, a ...any) error {
		return sc.errAt("conductor", i, key, "conductor %d (%q): %s", i+1, c.Name, fmt.Sprintf(format, a...))
	}
	if !finite(c.Current, c.Frequency, c.Phase) || !finite(c.Currents...) {
		return bad("current_a", "currents, frequency and phase must be finite numbers")
	}
	if c.Frequency < 0 {
		return bad("frequency_hz", "frequency %g Hz must be >= 0 (0 means DC)", c.Frequency)
	}
	if c.Frequency > 0 && c.Frequency >= sc.rate()/2 {
		return bad("frequency_hz", "%g Hz is not below half the sample rate (%g Hz): the log could not resolve it", c.Frequency, sc.rate()/2)
	}
	if err := sc.validateHarmonics(i); err != nil {
		return err
	}
	switch c.Kind {
	case "line":
		if c.Point == nil || c.Direction == nil {
			return bad("kind", "a line needs point and direction")
		}
		if !finite(c.Point[:]...) || !finite(c.Direction[:]...) || norm(*c.Direction) == 0 {
			return bad("direction", "direction %v must be a finite non-zero vector", *c.Direction)
		}
		if len(c.Currents) > 0 {
			return bad("currents_a", "currents_a is for polylines; a line takes current_a")
		}
	case "polyline":
		if len(c.Vertices) < 2 {
			return bad("vertices", "a polyline needs at least 2 vertices, has %d", len(c.Vertices))
		}
		for j, v := range c.Vertices {
			if !finite(v[:]...) {
				return bad("vertices", "vertex %d is not finite", j+1)
			}
			if j > 0 && v == c.Vertices[j-1] {
				return bad("vertices", "vertices %d and %d coincide", j, j+1)
			}
		}
		if n := len(c.Vertices) - 1; len(c.Currents) > 0 && len(c.Currents) != n {
			return bad("currents_a", "%d currents for %d segments (one per segment)", len(c.Currents), n)
		}
	case "dipole":
		if c.Position == nil || c.Moment == nil {
			return bad("kind", "a dipole needs position and moment_a_m2")
		}
		if !finite(c.Position[:]...) || !finite(c.Moment[:]...) {
			return bad("moment_a_m2", "position and moment must be finite")
		}
		if c.Current != 0 || len(c.Currents) > 0 {
			return bad("kind", "a dipole takes moment_a_m2, not currents")
		}
	case "":
		return bad("kind", "missing kind: \"line\", \"polyline\" or \"dipole\"")
	default:
		return bad("kind", "unknown kind %q: want \"line\", \"polyline\" or \"dipole\"", c.Kind)
	}
	// A reading on a conductor is singular. Fixed sensors stand where they
	// are mounted, beside, below or above the conductors (wall and tray
	// sensors around busbars): only a source through or next to one of
	// them is refused. Walked surveys keep the sources below the sensor.
	if sc.Survey.Pattern == "fixed" {
		if err := sc.fixedClearance(i); err != nil {
			return err
		}
		return sc.validateChange(i)
	}
	if c.Overhead {
		if c.Kind != "line" || math.Abs((*c.Direction)[2]) >= 1e-12*norm(*c.Direction) {
			return bad("overhead", "overhead = true is for a horizontal line (kind \"line\", direction with no up component)")
		}
		if low := sc.Sensor.Height + 0.5; c.Point[2] < low {
			return bad("overhead", "an overhead line at %g m is not at least 0.5 m above the sensor height %g m", c.Point[2], sc.Sensor.Height)
		}
		return sc.validateChange(i)
	}
	top := math.Inf(-1)
	switch c.Kind {
	case "line":
		if d := *c.Direction; math.Abs(d[2]) < 1e-12*norm(d) {
			top = c.Point[2]
		} else {
			top = math.Inf(1)
		}
	case "polyline":
		for _, v := range c.Vertices {
			top = math.Max(top, v[2])
		}
	case "dipole":
		top = c.Position[2]
	}
	if low := sc.Sensor.Height; top >= low {
		return bad("kind", "the source reaches up to %g m, not below the sensor height %g m (buried sources have up < 0)", top, low)
	}
	return sc.validateChange(i)
}

// validateChange checks a conductor's change of current.
func (sc *Scenario) validateChange(i int) error {
	c := &sc.Conductors[i]
	bad := func(key, format string, a ...any) error {
		return sc.errAt("conductor", i, key, "conductor %d (%q): %s", i+1, c.Name, fmt.Sprintf(format, a...))
	}
	switch {
	case c.ChangeAt == nil && c.CurrentAfter == nil:
		return nil
	case c.ChangeAt == nil:
		return bad("current_after_a", "current_after_a needs change_at_s (when the current changes, s after the first reading)")
	case c.CurrentAfter == nil:
		return bad("change_at_s", "change_at_s needs current_after_a (the current after the change, A)")
	}
	if at := *c.ChangeAt; !finite(at) || at < 0 {
		return bad("change_at_s", "change time %g s must be a number >= 0 (s after the first reading)", at)
	}
	if !finite(*c.CurrentAfter) {
		return bad("current_after_a", "current after the change must be a finite number")
	}
	switch {
	case c.Kind == "dipole":
		return bad("change_at_s", "a dipole has no current to change")
	case len(c.Currents) > 0:
		return bad("change_at_s", "a change of current needs one current_a, not currents_a per segment")
	}
	return nil
}

func (sc *Scenario) validateBase() error {
	b := sc.Base
	if b == nil {
		return nil
	}
	if !finite(b.Offset[:]...) || !finite(b.SampleRate, b.Noise, b.Margin) {
		return sc.errAt("base", 0, "", "base station values must be finite")
	}
	if b.SampleRate < 0 || b.SampleRate > 1e4 {
		return sc.errAt("base", 0, "sample_rate_hz", "base sample rate %g Hz must be in (0, 1e4]", b.SampleRate)
	}
	if b.Noise < 0 || b.Margin < 0 {
		return sc.errAt("base", 0, "noise_nt", "base noise and margin must be >= 0")
	}
	return nil
}

// rate is the sensor's sample rate, from the sensor or from the spacing.
func (sc *Scenario) rate() float64 {
	if sc.Sensor.SampleRate > 0 {
		return sc.Sensor.SampleRate
	}
	if sc.Survey.SampleSpacing > 0 {
		return sc.speed() / sc.Survey.SampleSpacing
	}
	return 1
}

// speed is the walking speed, m/s.
func (sc *Scenario) speed() float64 {
	if sc.Survey.Speed > 0 {
		return sc.Survey.Speed
	}
	return 1
}

// StartTime is the time of the first reading, Unix seconds.
func (sc *Scenario) StartTime() float64 { return sc.start }

// keyErr reports an error about a TOML key (from the decoder's metadata),
// with its line and column when the key can be found in the text.
func (sc *Scenario) keyErr(k toml.Key, format string, a ...any) error {
	table, key := "", ""
	if n := len(k); n > 0 {
		key = k[n-1]
		table = strings.Join(k[:n-1], ".")
	}
	// A toml.Key does not number the entries of an array of tables, so
	// accept the key in any of them.
	line, col := findKey(sc.text, table, -1, key)
	// A dotted key (nope.name = "x" at the top, or in the table of a
	// shorter prefix).
	for i := len(k) - 2; line == 0 && i >= 0; i-- {
		line, col = findKey(sc.text, strings.Join(k[:i], "."), -1, strings.Join(k[i:], "."))
	}
	if line == 0 && len(k) > 0 {
		// A table of that name, [nope] or [[nope]] (or [sensor.nope]):
		// point at its header.
		line, col = findKey(sc.text, strings.Join(k, "."), -1, "")
	}
	if line > 0 {
		return fmt.Errorf("simulate: %s:%d:%d: %s", sc.Source, line, col, fmt.Sprintf(format, a...))
	}
	return fmt.Errorf("simulate: %s: %s", sc.Source, fmt.Sprintf(format, a...))
}

// errAt reports an error about key in table (the index-th [[table]] for
// arrays of tables), with its line and column when the key is in the text.
func (sc *Scenario) errAt(table string, index int, key, format string, a ...any) error {
	msg := fmt.Sprintf(format, a...)
	if line, col := findKey(sc.text, table, index, key); line > 0 {
		return fmt.Errorf("simulate: %s:%d:%d: %s", sc.Source, line, col, msg)
	}
	where := key
	if table != "" {
		where = table + "." + key
		if key == "" {
			where = table
		}
	}
	if where == "" {
		return fmt.Errorf("simulate: %s: %s", sc.Source, msg)
	}
	return fmt.Errorf("simulate: %s: %s: %s", sc.Source, where, msg)
}

// findKey returns the 1-based line and column of the value of key in the
// given table of TOML text: the index-th [[table]] for arrays of tables (any
// occurrence when index < 0), the table header itself when key is empty. It
// understands the plain layout scenario files use (one key per line, tables
// introduced by [name] or [[name]] headers) and returns 0, 0 when it cannot
// find the key; it is only used to point at the right line in messages.
func findKey(text []byte, table string, index int, key string) (line, col int) {
	cur, count := "", map[string]int{}
	seen := -1
	for n, raw := range bytes.Split(text, []byte("\n")) {
		s := strings.TrimSpace(string(raw))
		if strings.HasPrefix(s, "[") {
			name := strings.Trim(strings.SplitN(s, "#", 2)[0], "[] \t")
			cur = name
			if strings.HasPrefix(s, "[[") {
				seen = count[name]
				count[name]++
			} else {
				seen = 0
			}
			if key == "" && cur == table && (index < 0 || seen == index) {
				return n + 1, strings.Index(string(raw), "[") + 1
			}
			continue
		}
		if cur != table || (index >= 0 && seen != index && table != "") || key == "" {
			continue
		}
		eq := strings.Index(s, "=")
		if eq < 0 {
			continue
		}
		if strings.Trim(strings.TrimSpace(s[:eq]), `"'`) == key {
			c := strings.Index(string(raw), "=") + 1
			for c < len(raw) && (raw[c] == ' ' || raw[c] == '\t') {
				c++
			}
			return n + 1, c + 1
		}
	}
	return 0, 0
}

func finite(v ...float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

func norm(v [3]float64) float64 { return math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2]) }

// tomlTypeRE and tomlLengthRE match the TOML decoder's messages for a value
// of the wrong type ("incompatible types: TOML value has type string;
// destination has type float") or an array of the wrong length.
var (
	tomlTypeRE   = regexp.MustCompile(`incompatible types: TOML value has type (\w+); destination has type (\S+)`)
	tomlLengthRE = regexp.MustCompile(`expected array length (\d+); got TOML array of length (\d+)`)
)

// TOMLWords rewords the TOML decoder's messages for a file's author ("want a
// number, found a string (in quotes)", "want 3 values, found 2") in place of
// the library's Go type names; other messages pass unchanged. Scenario files
// here and the live pipeline's site files (report/live) share it.
func TOMLWords(msg string) string {
	if m := tomlLengthRE.FindStringSubmatch(msg); m != nil {
		return fmt.Sprintf("want %s values, found %s", m[1], m[2])
	}
	m := tomlTypeRE.FindStringSubmatch(msg)
	if m == nil {
		return msg
	}
	name := func(t string) string {
		switch {
		case strings.HasPrefix(t, "float"), strings.HasPrefix(t, "int"), strings.HasPrefix(t, "uint"):
			return "a number"
		case t == "string":
			return "a string (in quotes)"
		case t == "bool":
			return "true or false"
		case strings.HasPrefix(t, "[]"), t == "slice", t == "array":
			return "a list"
		case t == "map", t == "struct", strings.HasPrefix(t, "map"):
			return "a table"
		}
		return t
	}
	return "want " + name(m[2]) + ", found " + name(m[1])
}
