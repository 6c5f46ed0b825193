package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/pflag"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

func init() {
	var (
		spin, zero, flip0, flip180, flipAxis, out, show string
		reference                                       float64
		refine, asJSON                                  bool
		rf                                              readFlags
	)
	register(&command{
		name:    "calibrate",
		usage:   "(--spin FILE | --flip0 FILE --flip180 FILE | --zero FILE | --show CAL.json) [-o CAL.json] [flags]",
		summary: "make a sensor calibration file (offset and soft-iron matrix) from a calibration log",
		long: `Calibrate works out the sensor's own errors from a log taken for the purpose
and writes them to a versioned JSON calibration file, which other commands
apply with --calibration CAL.json. The file records the method, the date it
was made, when the logs were taken (their first and last reading, for logs
with times), the input files with their SHA-256 checksums and the residual
statistics. locate warns when a survey ends more than a day before the logs
were taken, or more than a year after them (a rule of thumb: sensors are
commonly recalibrated yearly, and a knock moves the offsets).

Methods (give exactly one):
  --spin FILE      turn the sensor through as many orientations as possible in
                   a steady field (away from steel and traffic). An ellipsoid is
                   fitted to the readings: hard-iron offset and a symmetric
                   soft-iron / scale / non-orthogonality matrix. The spread of
                   |B| before and after is printed. A log that does not cover
                   enough orientations is refused with what is missing.
  --flip0 FILE --flip180 FILE
                   readings at 0 and 180 degrees of rotation about one axis
                   (--flip-axis, default z): offsets of the two other axes.
                   A flip leaves the field along its axis times the sensor's
                   cross-axis coupling (soft iron, axes not at right angles,
                   a turn axis off the sensor's) in those offsets, which flips
                   alone cannot tell apart: their standard errors allow 1% of
                   that field, with a warning when it is large. Flip about an
                   axis at right angles to the field (horizontal, magnetic
                   east-west), or use --spin, which fits the coupling.
  --zero FILE      readings inside a magnetic shield: offsets of all axes.
                   Near zero in any unit, so the field's unit must be stated:
                   by --unit, in the column names (Bx_nT), by the format
                   (IAGA-2002) or by undercurrent's own metadata (nT, for
                   its own columns bx, by, bz, not for columns mapped by
                   --column).
  --show CAL.json  print a saved calibration file.

Logs are any format undercurrent reads (CSV, Arrow, Parquet), with the same
input flags as the other commands (--column, --unit, --delimiter, ...); only
bx, by, bz are used, in the sensor's own axes, and a log needs no time
column. The x, y, z axes must form a right-handed set (x × y = z), which
no spin can check (a mirrored axis fits as well): held level with x to
magnetic north the sensor reads bx ≈ H (the horizontal field), and turned
so that y points north (x to the west if z points down, to the east if z
points up) by reads the same; if not, negate that axis's column in the log. A spin or flip log whose median |B| is far from the Earth's field
gets a warning (a unit is probably wrong), and one impossibly far (below
1 pT or above 0.1 T), or 1000 or 100000 times below it (uT or gauss read
as nT), is refused unless --unit gives the field's unit.

In the examples, spin.csv and cal.json are the spin log and the
calibration of the walk-through in README.md; the logs in
testdata/examples are small invented ones of the same site (a logger's
spin in uT under its own column names, a flip pair, a shielded log).

Examples:
  undercurrent calibrate --spin spin.csv -o cal.json
  undercurrent calibrate --spin spin.csv --reference 50095.4 --refine -o cal-refined.json
  undercurrent calibrate --spin testdata/examples/kestrel-moor-spin-uT.csv --column bx=magX,by=magY,bz=magZ --unit bx=uT,by=uT,bz=uT -o cal-uT.json
  undercurrent calibrate --flip0 testdata/examples/kestrel-moor-flip0.csv --flip180 testdata/examples/kestrel-moor-flip180.csv -o cal-flip.json
  undercurrent calibrate --zero testdata/examples/kestrel-moor-shield.csv -o cal-zero.json --json
  undercurrent calibrate --show cal.json`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.StringVar(&spin, "spin", "", "spin log for the ellipsoid fit")
			fs.StringVar(&flip0, "flip0", "", "log at 0 degrees for the flip method")
			fs.StringVar(&flip180, "flip180", "", "log at 180 degrees for the flip method")
			fs.StringVar(&flipAxis, "flip-axis", "z", "axis the sensor was turned about for the flip method (x, y or z)")
			fs.StringVar(&zero, "zero", "", "zero-field log (inside a magnetic shield)")
			fs.StringVar(&show, "show", "", "print a saved calibration file and exit")
			fs.StringVarP(&out, "output", "o", "", "calibration file to write (JSON); omit to only print the statistics")
			fs.Float64Var(&reference, "reference", 0, "field magnitude at the site, nT, for the spin method (0: keep the fitted ellipsoid's volume)")
			fs.BoolVar(&refine, "refine", false, "refine the ellipsoid fit by least squares on |B| (spin method)")
			fs.BoolVar(&asJSON, "json", false, "print the calibration as JSON instead of text")
			rf.add(fs)
			rf.addMissing(fs)
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 0 {
				return usageErrorf("unexpected argument %q: give the logs with --spin, --flip0/--flip180 or --zero", args[0])
			}
			methods := 0
			for _, s := range []string{spin, zero, show} {
				if s != "" {
					methods++
				}
			}
			if flip0 != "" || flip180 != "" {
				methods++
				if flip0 == "" || flip180 == "" {
					return usageErrorf("the flip method needs both --flip0 and --flip180")
				}
			}
			if methods != 1 {
				return usageErrorf("give exactly one of --spin, --flip0/--flip180, --zero or --show")
			}
			// Flag values are checked before any log is read.
			if reference < 0 || math.IsNaN(reference) || math.IsInf(reference, 0) {
				return usageErrorf("--reference %g: want the site's field magnitude in nT (> 0), or 0 to keep the fitted ellipsoid's volume", reference)
			}
			if reference > 0 && (reference < calibrate.MinEarthField || reference > calibrate.MaxEarthField) {
				hint := ""
				if reference < 100 {
					hint = fmt.Sprintf(" (in µT? %g µT is %g nT)", reference, reference*1000)
				}
				return usageErrorf("--reference %g nT: the Earth's field at the surface is %g-%g nT%s; give the site's field magnitude in nT", reference, calibrate.MinEarthField, calibrate.MaxEarthField, hint)
			}
			if fs.Changed("reference") && spin == "" {
				return usageErrorf("--reference is for the spin method (--spin)")
			}
			if a := strings.ToLower(flipAxis); len(a) != 1 || !strings.Contains("xyz", a) {
				return usageErrorf("--flip-axis %q: want x, y or z", flipAxis)
			}
			if fs.Changed("flip-axis") && flip0 == "" {
				return usageErrorf("--flip-axis is for the flip method (--flip0 and --flip180)")
			}
			if fs.Changed("refine") && spin == "" {
				return usageErrorf("--refine is for the spin method (--spin)")
			}
			if show != "" {
				// --show reads a calibration file, not a log, and writes
				// nothing: only --json applies.
				var extra string
				fs.Visit(func(f *pflag.Flag) {
					if extra == "" && f.Name != "show" && f.Name != "json" {
						extra = "--" + f.Name
						if f.Shorthand != "" {
							extra = "-" + f.Shorthand + " (" + extra + ")"
						}
					}
				})
				if extra != "" {
					return usageErrorf("%s does not apply to --show, which prints a saved calibration file (with --json as JSON) and writes nothing", extra)
				}
			}
			if out != "" {
				if fi, err := os.Stat(out); err == nil && fi.IsDir() {
					return usageErrorf("-o %s: is a directory: give the calibration file's name (-o %s)", out, filepath.Join(out, "cal.json"))
				}
				if err := checkOutFile("-o", out, false); err != nil {
					return err
				}
			}
			if err := checkCalibrationOut(out, [2]string{"--spin", spin}, [2]string{"--flip0", flip0}, [2]string{"--flip180", flip180}, [2]string{"--zero", zero}, [2]string{"--show", show}); err != nil {
				return err
			}
			// A calibration belongs to the sensor's own axes, the columns as
			// the file has them; locate applies it there, before it turns a
			// log read with --frame ned to east, north, up. Made from a spin
			// log turned by --frame ned it would be turned twice.
			if fs.Changed("frame") && strings.EqualFold(strings.TrimSpace(rf.frame), "ned") {
				return usageErrorf("--frame ned: a calibration is made in the sensor's own axes, the bx, by, bz columns as the file has them, and locate --frame ned applies it in those axes before turning them; leave --frame out here")
			}
			opts, err := rf.options(fs)
			if err != nil {
				return err
			}
			// No method uses time: a log may have no time column, and
			// the order of one it has is not checked.
			opts = append(opts, ingest.WithTimeOptional(true))
			if !fs.Changed("time-order") {
				opts = append(opts, ingest.WithTimeOrder(ingest.TimeAnyOrder))
			}
			// sensor is the sensor the logs name in their metadata, kept in
			// the calibration file so that locate can tell a log of another
			// sensor (Calibration.Check).
			var sensor string
			var span float64             // the time the spin log spans, s (spinDriftNote)
			var logTimes [][]float64     // the logs' times, for Calibration.LogsTaken
			var where func(j int) string // names reading j of the last log read
			read := func(role, path string) ([][3]float64, calibrate.Input, error) {
				if err := rf.checkIAGA("--"+role, path); err != nil {
					return nil, calibrate.Input{}, err
				}
				// A zero-field log is near zero by design: no unit check.
				r, in, w, err := readCalibrationLog(ctx, &rf, opts, role, path, role != "zero", &sensor, &span, &logTimes, stderr)
				where = w
				return r, in, err
			}
			if show != "" {
				cal, err := calibrate.Load(show)
				if err != nil {
					return err
				}
				return printCalibration(stdout, cal, asJSON)
			}
			var cal *calibrate.Calibration
			switch {
			case spin != "":
				r, in, err := read("spin", spin)
				if err != nil {
					return err
				}
				res, err := calibrate.FitEllipsoid(r, &calibrate.EllipsoidSettings{Reference: reference, Refine: refine})
				if err != nil {
					return inFile(spin, err)
				}
				// A sensor's own scale is off by a percent or so, not by a
				// tenth: a reference that far from the fitted size is a
				// mistyped value (5009.5 for 50095 made every current ten
				// times too small, with every fit sound; found in review).
				// The sensor's own size of the field: W = radius·S with the
				// ellipsoid's shape S of determinant own⁻³.
				m := res.Matrix
				det := m[0][0]*(m[1][1]*m[2][2]-m[1][2]*m[2][1]) - m[0][1]*(m[1][0]*m[2][2]-m[1][2]*m[2][0]) + m[0][2]*(m[1][0]*m[2][1]-m[1][1]*m[2][0])
				if own := res.Radius / math.Cbrt(det); reference > 0 && own > 0 && math.Abs(reference-own) > maxReferenceScale*own {
					return usageErrorf("--reference %g nT is %+.0f%% from the %.0f nT the sensor reads the spin's field as: a magnetometer's scale is not that far out; check the value (the site's field magnitude in nT)", reference, 100*(reference-own)/own, own)
				}
				cal = calibrate.FromEllipsoid(res, in)
				spinNotes(cal, res, where, reference, stderr, spin)
				if n := spinDriftNote(span); n != "" {
					cal.Notes = append(cal.Notes, n)
				}
			case zero != "":
				r, in, err := read("zero", zero)
				if err != nil {
					return err
				}
				res, err := calibrate.ZeroOffset(r)
				if err != nil {
					return inFile(zero, err)
				}
				if err := zeroUnitStated(zero, opts, res.Offset); err != nil {
					return err
				}
				cal = calibrate.FromOffset(calibrate.MethodZero, res, in)
				for _, w := range res.Warnings {
					fmt.Fprintf(stderr, "warning: %s: %s\n", zero, w)
					cal.Notes = append(cal.Notes, w)
				}
			default:
				axis := strings.Index("xyz", strings.ToLower(flipAxis))
				if len(flipAxis) != 1 || axis < 0 {
					return usageErrorf("--flip-axis %q: want x, y or z", flipAxis)
				}
				r0, in0, err := read("flip0", flip0)
				if err != nil {
					return err
				}
				r1, in1, err := read("flip180", flip180)
				if err != nil {
					return err
				}
				res, err := calibrate.FlipOffset(r0, r1, axis)
				if err != nil {
					return inFile(flip0+" and "+flip180, err)
				}
				cal = calibrate.FromOffset(calibrate.MethodFlip, res, in0, in1)
				for _, w := range res.Warnings {
					fmt.Fprintf(stderr, "warning: %s and %s: %s\n", flip0, flip180, w)
					cal.Notes = append(cal.Notes, w)
				}
			}
			if err := ctx.Err(); err != nil {
				return err
			}
			cal.Sensor = sensor
			// When the logs were taken, for locate's check of the survey's
			// date against it (Calibration.Check) and the summary.
			cal.LogsTaken = calibrate.SpanOf(logTimes...)
			if out != "" {
				if err := cal.Save(out); err != nil {
					return err
				}
			}
			if err := printCalibration(stdout, cal, asJSON); err != nil {
				return err
			}
			if !asJSON {
				if out != "" {
					fmt.Fprintf(stdout, "wrote %s\n", out)
				} else {
					fmt.Fprintf(stdout, "not saved: give -o FILE to write the calibration\n")
				}
			}
			return nil
		},
	})
}

// zeroUnitStated refuses a zero-field log whose field columns state no
// unit: not given with --unit, not in the columns' names (Bx_nT), not by
// the format (IAGA-2002) nor by undercurrent's canonical form (its
// undercurrent.frame metadata: nT). A spin or flip log holds the Earth's
// field, whose size tells a wrong unit (checkFieldUnits); a log inside a
// shield reads near zero in any unit, so an offset of 0.31 read as nT
// could be 310 nT written in µT, and the calibration would leave almost
// all of it in the survey. offset is the offset read as nT, for the
// message.
func zeroUnitStated(path string, opts []ingest.Option, offset [3]float64) error {
	// A fixed origin spares reading WGS84 positions through for
	// --origin mean; only the header is looked at.
	r, err := ingest.Open(path, append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))...)
	if err != nil {
		return err
	}
	defer r.Release()
	var cols, srcs []string
	for _, m := range ingest.Mappings(r) {
		if fieldAxis(m.Column) >= 0 && m.UnitFrom == ingest.UnitDefault {
			cols, srcs = append(cols, m.Column), append(srcs, m.Source)
		}
	}
	if len(cols) == 0 {
		return nil
	}
	what := strings.Join(cols, ", ")
	if src := strings.Join(srcs, ", "); src != what {
		what = src + ", read as " + what
	}
	// The names suggested are built from the axes (bx_nT), not from
	// the columns' own names, which may hold words of their own.
	var flag, named []string
	for _, c := range cols {
		flag = append(flag, c+"=U")
		named = append(named, c+"_nT")
	}
	return usageErrorf("%s: the field columns (%s) state no unit, and a log inside a shield reads near zero in any unit: read as nT its offset is %.4g, %.4g, %.4g nT, written in µT it would be 1000 times that. Give the unit with --unit %s, U the unit the log is written in (%s), or put it in the column names (%s)",
		path, what, offset[0], offset[1], offset[2], strings.Join(flag, ","), fieldUnits, strings.Join(named, ", "))
}

// inFile names path in an error from the calibrate package, whose own
// "calibrate: " prefix is dropped (the command's prefix says as much).
func inFile(path string, err error) error {
	return fmt.Errorf("%s: %s", path, strings.TrimPrefix(err.Error(), "calibrate: "))
}

// readCalibrationLog reads the field readings of a calibration log with
// the input flags' options, prints the warnings about it (missing rows
// dropped, a field unit that looks wrong when checkUnits) and records the
// file with its checksum. where names reading j for messages: its time,
// or, in a log without time, its line in a CSV file (counting the rows
// --drop-missing dropped, and the header and comment lines), or else its
// data row.
// readCalibrationLog reads a calibration log; span, when not nil, gets
// the time the log spans in seconds (0 without a time column), and times,
// when not nil, gets the log's time column appended (none without one).
func readCalibrationLog(ctx context.Context, rf *readFlags, opts []ingest.Option, role, path string, checkUnits bool, sensor *string, span *float64, logTimes *[][]float64, stderr io.Writer) (r [][3]float64, in calibrate.Input, where func(j int) string, err error) {
	s, rows, warns, err := rf.readLogRows(ctx, path, opts, checkUnits)
	if err != nil {
		return nil, calibrate.Input{}, nil, err
	}
	if checkUnits && !rf.fieldUnitGiven() {
		if err := earthLogUnit(path, s); err != nil {
			return nil, calibrate.Input{}, nil, err
		}
	}
	// A log whose own "# undercurrent.frame: ned" line turned it to east,
	// north, up: the calibration would be made in the turned axes, and
	// locate, which turns it for such a log, would turn it twice.
	if s.InFrame == ingest.FrameNED {
		return nil, calibrate.Input{}, nil, fmt.Errorf("%s: its metadata (%s) says its columns are north, east, down, so they were read turned to east, north, up; a calibration is made in the sensor's own axes, the bx, by, bz columns as the file has them (locate applies it there before it turns a log read as ned): give --frame enu to read them as they are", path, ingest.MetaFrame)
	}
	if name := calibrate.SensorName(s); name != "" {
		if *sensor != "" && *sensor != name {
			return nil, calibrate.Input{}, nil, fmt.Errorf("%s names sensor %q, but the other log names %q: a calibration is for one sensor", path, name, *sensor)
		}
		*sensor = name
	}
	if w := calibrationRepeats(path, s, rows, rf); w != "" {
		warns = append(warns, w) // calrepeats.go
	}
	for _, w := range warns {
		fmt.Fprintf(stderr, "warning: %s\n", w)
	}
	r, err = calibrate.Readings(s)
	if err != nil {
		return nil, calibrate.Input{}, nil, err
	}
	in, err = calibrate.FileInput(role, path, len(r))
	times := s.Time
	if logTimes != nil && !s.NoTime {
		*logTimes = append(*logTimes, times)
	}
	if span != nil {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, t := range times {
			if !math.IsNaN(t) && !math.IsInf(t, 0) {
				lo, hi = math.Min(lo, t), math.Max(hi, t)
			}
		}
		*span = 0
		if hi > lo {
			*span = hi - lo
		}
	}
	comment, headerLine := rf.comment, len(rf.header) == 0
	where = func(j int) string {
		if j < len(times) && !math.IsNaN(times[j]) {
			return calibrationTime(times[j])
		}
		row := j
		if rows != nil && j < len(rows) {
			row = rows[j]
		}
		if lines := dataRowLines(path, []int{row}, comment, headerLine); lines != nil {
			return fmt.Sprintf("line %d", lines[0])
		}
		return fmt.Sprintf("data row %d", row+1)
	}
	return r, in, where, err
}

// noReferenceNote begins the note of a spin calibration made without
// maxReferenceScale is how far, as a fraction, --reference may lie from
// the fitted ellipsoid's size.
const maxReferenceScale = 0.1

// --reference, whose scale is the sensor's own; printCalibration then
// labels the field magnitude "radius", not "reference".
const noReferenceNote = calibrate.NoReferenceNote

// spinNotes records in cal what the ellipsoid fit left out (with the
// times of those readings, or their places in a log without time, named
// by where; also shown as a warning), the standard errors of the fit, and,
// without --reference, that the scale is the sensor's own.
func spinNotes(cal *calibrate.Calibration, res *calibrate.EllipsoidResult, where func(j int) string, reference float64, stderr io.Writer, path string) {
	at := func(idx []int) string {
		var parts []string
		for i, j := range idx {
			if i == 5 {
				parts = append(parts, fmt.Sprintf("and %d more", len(idx)-5))
				break
			}
			parts = append(parts, where(j))
		}
		return strings.Join(parts, ", ")
	}
	// The fit's warnings are about the clipped readings, when there are
	// any, then about the outliers: each gets the times of its readings.
	warns := res.Warnings
	for _, idx := range [][]int{res.Clipped, res.Outliers} {
		if len(idx) == 0 || len(warns) == 0 {
			continue
		}
		msg := fmt.Sprintf("%s (at %s)", warns[0], at(idx))
		warns = warns[1:]
		fmt.Fprintf(stderr, "warning: %s: %s\n", path, msg)
		cal.Notes = append(cal.Notes, msg)
	}
	for _, w := range warns {
		fmt.Fprintf(stderr, "warning: %s: %s\n", path, w)
		cal.Notes = append(cal.Notes, w)
	}
	sigma := res.OffsetSigma
	cal.OffsetSigma = &sigma
	worst := 0.0
	for _, row := range res.MatrixSigma {
		for _, v := range row {
			worst = math.Max(worst, v)
		}
	}
	cal.Notes = append(cal.Notes, fmt.Sprintf("standard errors from the scatter of |B| after the fit: offset ± %.2g, %.2g, %.2g nT; matrix entries ± %.2g at most", sigma[0], sigma[1], sigma[2], worst))
	if reference == 0 {
		cal.Notes = append(cal.Notes, fmt.Sprintf("%s the matrix maps the readings to the fitted ellipsoid's own size, %.1f nT, so the absolute scale is the sensor's own (a sensor reading 3%% high still reads 3%% high); give the site's field magnitude with --reference to fix it", noReferenceNote, res.Radius))
	}
}

// quietDriftNTPerHour is the rate at which the Earth's field changes on
// an ordinary day at mid latitudes, nT per hour: the daily variation of
// some tens of nT over a few hours (from memory), taken at 40 nT/h.
const quietDriftNTPerHour = 40.0

// spinDriftNote says how far the field's own change during a spin of span
// seconds can move the offsets, which their standard errors (from the
// scatter of |B| about the fitted ellipsoid) do not include: a spin that
// tips an axis from along the field to against it maps any change of |F|
// onto that axis's offset, and the fit absorbs it. "" without a time span.
func spinDriftNote(span float64) string {
	if !(span > 0) {
		return ""
	}
	bound := quietDriftNTPerHour * span / 3600
	return fmt.Sprintf("the field's own change during the spin's %.1f min is not in the standard errors: it goes into the offsets (above all of the axis the spin tips from along the field to against it), up to about %.2g nT at an ordinary day's %g nT/h and more in a disturbed hour; spin briefly, in a quiet hour", span/60, bound, quietDriftNTPerHour)
}

// calibrationTime shows a reading's time: Unix times as UTC, small
// (relative) ones as seconds.
func calibrationTime(t float64) string {
	if t > 1e8 && t < 1e11 {
		return utcTime(t)
	}
	return fmt.Sprintf("t = %g s", t)
}

func printCalibration(w io.Writer, cal *calibrate.Calibration, asJSON bool) error {
	if asJSON {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(cal)
	}
	fmt.Fprintf(w, "method      %s (file version %d, made %s)\n", cal.Method, cal.Version, cal.Created.Format("2006-01-02 15:04:05Z"))
	if p := cal.LogsTaken; p != nil {
		fmt.Fprintf(w, "logs taken  %s to %s\n", p.First.Format("2006-01-02 15:04:05Z"), p.Last.Format("2006-01-02 15:04:05Z"))
	} else {
		fmt.Fprintf(w, "logs taken  not recorded (logs without times, or a file from before they were recorded)\n")
	}
	if cal.Sensor != "" {
		fmt.Fprintf(w, "sensor      %s\n", cal.Sensor)
	}
	for _, in := range cal.Inputs {
		fmt.Fprintf(w, "input       %s: %s, %d readings, sha256 %s\n", in.Role, in.File, in.Samples, in.SHA256)
	}
	fmt.Fprintf(w, "offset      %10.2f %10.2f %10.2f nT", cal.Offset[0], cal.Offset[1], cal.Offset[2])
	if cal.OffsetSigma != nil {
		// A flip leaves the offset along its axis undetermined: it is
		// stored as 0 ± 0, which is no standard error.
		var parts []string
		for k, s := range cal.OffsetSigma {
			if cal.Method == calibrate.MethodFlip && s == 0 && cal.Offset[k] == 0 {
				parts = append(parts, fmt.Sprintf("%c not determined, left at 0", "xyz"[k]))
				continue
			}
			parts = append(parts, fmt.Sprintf("%.2f", s))
		}
		fmt.Fprintf(w, "  (± %s)", strings.Join(parts, ", "))
	}
	fmt.Fprintln(w)
	for i, row := range cal.Matrix {
		label := ""
		if i == 0 {
			label = "matrix"
		}
		fmt.Fprintf(w, "%-11s %10.6f %10.6f %10.6f\n", label, row[0], row[1], row[2])
	}
	if cal.Reference != 0 {
		label, what := "reference", ""
		for _, n := range cal.Notes {
			if strings.HasPrefix(n, noReferenceNote) {
				label, what = "radius", " (the fitted ellipsoid's own size: no --reference, so the scale is the sensor's own)"
			}
		}
		fmt.Fprintf(w, "%-11s %.1f nT%s\n", label, cal.Reference, what)
	}
	if cal.Before != nil && cal.After != nil {
		b, a := cal.Before, cal.After
		fmt.Fprintf(w, "|B| before  mean %.2f nT, std %.3f nT, range %.2f to %.2f nT\n", b.Mean, b.Std, b.Min, b.Max)
		fmt.Fprintf(w, "|B| after   mean %.2f nT, std %.3f nT, range %.2f to %.2f nT\n", a.Mean, a.Std, a.Min, a.Max)
	}
	if c := cal.Coverage; c != nil {
		fmt.Fprintf(w, "coverage    direction-scatter eigenvalues %.3f %.3f %.3f (even: 0.333); caps", c.Eigen[0], c.Eigen[1], c.Eigen[2])
		for i, name := range []string{"+x", "-x", "+y", "-y", "+z", "-z"} {
			fmt.Fprintf(w, " %s %.0f%%", name, 100*c.Caps[i])
		}
		fmt.Fprintln(w)
	}
	for _, n := range cal.Notes {
		fmt.Fprintf(w, "note        %s\n", n)
	}
	return nil
}
