// Package simulate forward-models magnetometer logs from scenario files: a
// site with buried conductors, the currents they carry, a survey pattern
// walked by a sensor, the sensor's noise and distortion, and the Earth's
// field with its slow daily drift. It serves survey planning (will this
// current be detectable at this depth with this sensor?), the demo, and the
// end-to-end tests that check the inverse stages recover what was put in.
//
// # Model
//
// Every reading is the sum, in nanotesla and local east/north/up axes, of
//
//	b(t, r) = E + D (t - t0) / 3600
//	        + sum over DC conductors  G_k(r) I_k
//	        + sum over AC conductors  G_k(r) sqrt(2) I_k cos(2 pi f_k t + phi_k)
//	        + sum over dipoles        F_j(r) m_j
//
// where E is the Earth field, D its linear drift per hour, t0 the time of the
// first reading, I_k the current (RMS for AC) and G_k, F_j the Biot-Savart
// field per unit strength from the inverse package's forward models
// (inverse.Line for infinite straight filaments; inverse.Polyline, built on
// the finite-segment formula of Hanson & Hirshman, Phys. Plasmas 9(10), 4410
// (2002), with one current per segment; inverse.Dipole for point dipoles).
// Time t is absolute (Unix seconds), so the AC phasor convention matches the
// calibrate package's demodulation: a conductor with RMS current I and phase
// phi produces the complex RMS field G I exp(i phi).
//
// The sensor then adds white Gaussian noise of the given standard deviation
// to each axis and, when a distortion is given, reports
//
//	reading = M (b + noise) + offset
//
// which is the hard- and soft-iron model the calibrate package inverts.
// With pattern = "spin" the sensor does not walk: it is held at one place
// and turned through many orientations, the log a calibration by ellipsoid
// fit needs (the calibrate package's FitEllipsoid). The turning is the
// sensor spun about its own z axis while that axis tips over from along the
// Earth field to against it; seen in the sensor's axes the field's
// direction runs along the spiral
//
//	d(s) = (sqrt(1 - c^2) cos(2 pi N s), sqrt(1 - c^2) sin(2 pi N s), c),
//	c = 1 - 2 s,  s = (t - t0) / T,
//
// over the whole sphere, equal times covering equal areas (c falls at a
// constant rate; Archimedes' hat-box theorem), for N turns in T seconds.
// The field (Earth, drift and any conductors) is rotated into the sensor's
// axes by the rotation R(t) that takes d(s) to the Earth field's direction,
// and the noise and distortion are then added in those axes, so the log is
// in the sensor frame with no attitude columns, one group "S01".
//
// With pattern = "fixed" several sensors are held in place, as the serve
// command's continuous pipeline reads them, and all log at once. Each has
// an orientation (yaw, pitch, roll in degrees taking the sensor axes to
// east-north-up, as in the serve command's site file), and reads
//
//	b_sensor = R^T b_ENU,  R = Rz(yaw) Ry(pitch) Rx(roll),
//
// with Rz, Ry, Rx right-handed rotations about the up, north and east
// axes; the pipeline applies R to turn the readings back to east-north-up.
// Noise and distortion are added in the sensor's axes. The log has no
// positions: its group column names the sensor of each row (the replay
// command publishes each group as that sensor's data), and the rows
// interleave the sensors in time.
//
// A line or polyline conductor may change its current at a given time
// (change_at_s, current_after_a): the current steps from current_a to
// current_after_a at that many seconds after the first reading, the same
// frequency and phase, so a log can show an imbalance or a step that the
// pipeline's alarms should catch.
//
// With attitude = "walking" the field is first expressed in the axes of a
// sensor facing along the survey line and swaying (aerospace Z-Y-X roll,
// pitch and yaw, logged beside it), so that the calibrate package's tilt
// correction has something to undo.
//
// A polyline may carry a different current on each segment. Current that
// "leaves" the conductor at a vertex is not given a return path: the step is
// modelled as the field of the conductor alone, which is what a survey over
// the conductor sees of current leaking to ground spread over a large volume.
// So are a polyline's two ends: its current stops there. A cable stopped
// short a few tens of metres beyond the survey has an end no real cable
// has, and its field biases the end traverses' currents by many sigmas
// (0.02-0.11 A of 42 A on the demo's for an end 25 m beyond the first
// traverse). Run a conductor hundreds of metres beyond the survey unless it
// truly ends there, as the demo's cables do.
//
// # Scenario files
//
// Scenarios are TOML (https://toml.io), so they carry comments. Lengths are
// metres, fields nanotesla, currents amperes, angles degrees, frequencies
// hertz; key names carry their unit. Positions are local east, north, up
// (ENU) with the ground surface at up = 0, so buried conductors have negative
// up coordinates. A commented example covering every key is
// testdata/demo/fenwick-lane.toml in the repository; in short:
//
//	name  = "fenwick-lane"            # short name, used for output files
//	site  = "Harrow Fen substation"   # free text
//	seed  = 7                         # random seed for the noise
//	start = "2026-03-14T09:30:00Z"    # RFC 3339 time of the first reading
//
//	[origin]                          # optional: geo-reference the log
//	lat_deg = 52.41                   # WGS84 latitude of local (0, 0, 0)
//	lon_deg = 0.27
//	height_m = 2.0
//
//	[earth]
//	field_nt = [400, 19100, -45300]   # east, north, up
//	drift_nt_per_hour = [1.5, -6, 3]  # optional linear drift
//
//	[sensor]
//	height_m = 0.3                    # sensor height above ground
//	noise_nt = 1.5                    # one-sigma white noise per axis
//	sample_rate_hz = 10               # or give survey.sample_spacing_m
//	offset_nt = [0, 0, 0]             # optional hard-iron offset
//	matrix = [[1,0,0],[0,1,0],[0,0,1]]  # optional soft-iron matrix
//	attitude = "walking"              # optional: log in the sensor frame,
//	sway_deg = 5                      #   facing along the line, swaying
//
//	[survey]
//	pattern = "traverses"             # or "grid", "spin" or "fixed" (below)
//	route = [[0, 0], [80, 10]]        # plan path the traverses cross
//	count = 31                        # traverses
//	spacing_m = 5                     # along the route
//	first_at_m = 0                    # chainage of the first traverse
//	length_m = 8                      # traverse length, centred on the route
//	speed_m_s = 1                     # walking speed
//	turn_s = 10                       # pause between traverses
//	zigzag = true                     # alternate walking direction
//
//	[[conductor]]
//	name = "feeder"
//	kind = "polyline"                 # "line", "polyline" or "dipole"
//	vertices = [[-5, 0, -0.9], [85, 11, -0.9]]
//	current_a = 40                    # or currents_a = [...] per segment
//	frequency_hz = 50                 # optional: AC, current_a is RMS
//	phase_deg = 0
//	harmonics = [{frequency_hz = 250, current_a = 6, phase_deg = 30}]
//	                                  # optional: further tones, steady
//	                                  #   (line, or polyline with current_a)
//	change_at_s = 30                  # optional: from 30 s after the first
//	current_after_a = 32              #   reading on, 32 A (one current_a only)
//
// A spin replaces the traverse keys of [survey] with
//
//	[survey]
//	pattern = "spin"                  # calibration log, sensor frame
//	at = [-20, 60]                    # where (east, north), m; the sensor
//	                                  #   is at sensor.height_m
//	duration_s = 240                  # how long it turns (default 240)
//	turns = 16                        # turns about its z axis (default 16)
//
// and needs no [[conductor]] table; the distortion keys of [sensor]
// (offset_nt, matrix) are the ones to calibrate away, and the sample rate
// must be given as sensor.sample_rate_hz. The repository's
// testdata/scenarios/kestrel-moor-spin.toml is a commented example: the
// spin of the sensor used for kestrel-moor-step.toml.
//
// Fixed sensors replace the traverse keys of [survey] with
//
//	[survey]
//	pattern = "fixed"                 # sensors held in place, own axes
//	duration_s = 60                   # how long they log (default 60)
//
//	[[survey.sensor]]                 # one table per sensor
//	name = "fl-n1"                    # group column value; letters,
//	                                  #   digits, '-' and '_'; unique
//	position = [0.0, 4.0, 0.3]        # east, north, up, m
//	orientation = [90.0, 0.0, 0.0]    # yaw, pitch, roll, degrees (optional)
//
// Each sensor logs at sensor.sample_rate_hz (which must be given; there
// is no walking speed), at times start + k / rate for
// 0 <= k < duration_s * rate, so that a whole number of seconds fills
// whole windows of the pipeline. A sensor's height is the up coordinate of
// its position, so sensor.height_m is not given. Fixed sensors may stand
// below, level with or above the conductors (wall and tray sensors around
// busbars in a plant room); a conductor is refused only where it passes
// through or within 1 cm of a sensor (a line, a polyline segment or a
// dipole: the field is singular there), the error naming both. The
// conductors of walked surveys and spins must lie below the sensor's
// height. The [[survey.sensor]]
// tables take the same keys as an asset's [[asset.sensor]] tables in the
// serve command's site file (less calibration), so sensors can be copied
// from one to the other; the repository's
// testdata/scenarios/harrow-fen-fixed.toml reproduces the site file's
// fenwick-lane asset with 20 A of return current lost half way through.
//
// Each traverse (or grid line) is written with its own value in the group
// column ("T01", "T02", ..., or "L01", ... for a grid), so the locate command
// can fit them one by one with --group-by group; each fixed sensor with its
// name.
//
// An optional [base] table adds a base station: a fixed magnetometer away from
// the conductors that sees the same Earth field and drift, for the base
// correction of the calibrate package (SimulateBase).
package simulate
