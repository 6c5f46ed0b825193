package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"runtime"
	"runtime/debug"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"
	"unicode/utf8"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/pflag"
	"golang.org/x/term"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse"
	"undercurrent/report"
)

// locateOptions are the settings of one locate run, from flags.
type locateOptions struct {
	// curRef is --current-reference and its flags (currentref.go).
	curRef currentRefFlags

	// calibration is the bare --calibration, applied to every log not
	// named in calPerLog (--calibration LOG=CAL.json, perlog.go);
	// calibrations are the values as given.
	calibration  string
	calibrations []string
	calPerLog    []perLogValue

	base        string   // the base log, or the base logs joined by " + " for messages
	bases       []string // the base logs given (--base, once or more)
	baseHold    float64
	baseHoldSet bool // --base-hold given (0 then means no hold at all)
	baseUnits   []string
	baseColumns []string
	baseFrame   string // --base-frame: enu or ned ("" the file's own)
	baseDates   string // --base-date-order: the base log's date order
	baseOffset  string // --base-time-offset: the base log's UTC offset
	baseZone    string // --base-time-zone: the base log's IANA zone
	freq        float64
	window      float64
	mainsText   string
	dcMainsText string
	dcMains     float64 // --dc-mains 50 or 60; 0: auto or off (dcMainsAuto)
	dcMainsAuto bool
	// --interrupted: interruptedText as given; intOn and intOff the
	// cycle's on and off times, s, or intAuto for a cycle found in the
	// readings; all zero when not given (dcinterrupt.go).
	interruptedText string
	intOn, intOff   float64
	intAuto         bool
	mains           []float64 // mains frequencies fitted as nuisance beside another --freq
	count           string
	groupBy         string
	// --along-window: alongText as given; alongLen the window length, m
	// (0 auto, -1 off); alongAuto when the run chose it, alongWhy the
	// reason (alongwindows.go).
	alongText string
	alongLen  float64
	alongAuto bool
	alongWhy  string
	alongTwo  []string // warnings of logs cut into windows that lie on two tracks
	json      bool
	out       string
	minCover  float64
	lineAbove bool
	// lineAboveSet: --line-above was given, so a line above that was
	// tried and not taken is said why.
	lineAboveSet bool
	coverCode    string
	referenceZ   float64
	hasRefZ      bool
	// sensorHeight is the bare --sensor-height, for every log not named
	// in heightPerLog (--sensor-height LOG=H, perlog.go); sensorHeights
	// the flag's values as given.
	sensorHeight  float64
	sensorHeights []string
	heightPerLog  []perLogValue
	groundSigma   float64
	// positionSigma is --position-sigma as given; posPlan and posUp its
	// values, m (inverse.Settings.PositionSigmaPlan, PositionSigmaUp).
	positionSigma  string
	posPlan, posUp float64
	// posColumns is --position-sigma-columns as given (1sigma, 95 or
	// off), and colPlan, colUp the factors that turn the log's position
	// sigma columns (ingest.ColSigmaPlan, ColSigmaUp) into one-sigma per
	// axis: 1, or 1/2.448 and 1/1.960 for 95% figures; 0 with off.
	posColumns     string
	colPlan, colUp float64
	noise          float64
	rangeNT        float64 // --range-nt: the magnetometer's range, nT (clipped.go); 0 none given
	robust         bool
	despike        bool
	stepK          float64
	minStep        float64
	title          string
	workers        int
	// csvDecimalComma is --csv-decimal-comma: results.csv and findings.csv
	// with semicolons and decimal commas (report.CSVOptions).
	csvDecimalComma bool
	// coil holds the induction-coil options (coil.go).
	coil coilFlags
	// read holds the input flags shared by every command that reads logs.
	read readFlags

	// readOpts are the ingest options of the input flags (run sets them).
	readOpts []ingest.Option
	// baseOpts are the ingest options for the base log (readFlags.baseOptions).
	baseOpts []ingest.Option
	// originWarns warn of an --origin some km from a log's first reading
	// (checkOriginNear; run sets them).
	originWarns []string

	// set by check
	nCount int // 0 = auto
	// maxCount bounds the automatic count (--max-count; 0: the fit's own 4).
	maxCount int
	// extra names allowed in an existing output directory (the demo's log)
	keepNames []string
	// given lists the flags the user set, for the document's settings
	given map[string]string
	// mountYaw is --mount-yaw, degrees: the survey's field as read is
	// turned this far anticlockwise seen from above (a magnetometer
	// turned on its mount); the readings are turned back (mountturn.go).
	mountYaw float64
	// fieldAxes is --field-axes: what the field columns hold (fieldaxes.go);
	// axes is it read (identity when not given).
	fieldAxes string
	axes      axisMap

	// buildProgress, when not nil, is told how far report.Build's search
	// for magnetised objects has got (stageline.go's objectStages).
	buildProgress report.ProgressFunc

	// walked is set by runLocate: the time from the first to the last
	// DC reading of the groups, s; 0 for an AC run or a log without
	// times. The summary says by it whether a run without a base log
	// lasted long enough for the Earth's drift to matter.
	walked float64
}

// resultFiles are the files locate writes into its output directory.
var resultFiles = []string{report.FileJSON, report.FileCSV, report.FileFindings, report.FileGeoJSON, report.FileHTML}

func (o *locateOptions) setFlags(fs *pflag.FlagSet) {
	fs.StringArrayVar(&o.calibrations, "calibration", nil, "apply the sensor calibration in `CAL.json` (from undercurrent calibrate); for logs of different sensors give each its own as LOG=CAL.json, again for each (LOG the log as given or its base name), and a bare CAL.json for the logs not named")
	fs.Float64Var(&o.mountYaw, "mount-yaw", 0, "the magnetometer is turned on its mount: its field as read is turned `DEG` degrees anticlockwise seen from above (the turn the check against the base record reports, with its sign); the readings are turned back by it about the sensor's vertical axis, after the calibration and before the attitude")
	fs.StringVar(&o.fieldAxes, "field-axes", "", "what the field columns bx, by, bz hold, `A,B,C` each one of e, n, u (east, north, up) or w, s, d (west, south, down): n,e,d for a field logged north, east, down with positions east, north, up; e,s,d for a sensor mounted upside down; n,e,u for bx and by swapped; the field alone is read so (--frame turns the positions too), after the calibration and before --mount-yaw; for an enu log only")
	o.curRef.setFlags(fs)
	fs.StringArrayVar(&o.bases, "base", nil, "subtract the diurnal variation recorded by the base station log `BASE` (any log format, IAGA-2002 too); give it again for a record in several files (daily observatory files across midnight UTC), joined in time order whatever their order here (readings at one time must agree, files that overlap must share readings there, and the level must not step where one file ends and the next begins)")
	fs.Float64Var(&o.baseHold, "base-hold", 0, "correct survey readings up to `S` seconds before or after the base log with its nearest value held, and interpolate the base across its gaps up to S seconds long, S above or below the default (default for both: five base sample intervals, at least 60 s and at most 300 s; 0: no hold at all, and no reading missing from the base; readings further out, or in a longer gap, are refused, since a held value or a straight line across the gap is no correction)")
	fs.StringSliceVar(&o.baseColumns, "base-column", nil, "name the base log's columns, `CANON=NAME` as --column does for the survey logs (time=Time,bx=magX,by=magY,bz=magZ); not for an IAGA-2002 base")
	fs.StringSliceVar(&o.baseUnits, "base-unit", nil, "units of the base log's columns, `CANON=UNIT` as --unit gives them for the survey logs (bx=uT,by=uT,bz=uT); a base log whose field is as steady as the Earth's but whose median lies outside the Earth's field band in nT is refused without it")
	fs.StringVar(&o.baseFrame, "base-frame", "", "axes of the base log's field columns, `FRAME` enu or ned (default: the file's \"# undercurrent.frame:\" line or metadata, else enu); --frame applies to the survey logs only; not for an IAGA-2002 base, whose elements say")
	fs.StringVar(&o.baseDates, "base-date-order", "", "order of day, month and year in the base log's text dates (02.02.2026 14:59:00): dmy, mdy or ymd, as --date-order for the survey logs (default: --date-order's, else such dates are refused)")
	fs.StringVar(&o.baseZone, "base-time-zone", "", "IANA time zone of the base log's times written without a UTC offset, as Europe/Berlin, as --time-zone for the survey logs (which does not apply to the base log); not with --base-time-offset")
	fs.StringVar(&o.baseOffset, "base-time-offset", "", "UTC offset of the base log's text times written without one, as +01:00, as --time-offset for the survey logs (default: they are read as UTC with a warning; --time-offset applies to the survey logs only, since a base log is often another instrument's, kept in UTC)")
	fs.Float64Var(&o.freq, "freq", 0, "demodulate the AC field at `HZ` (50, 60, 16.7, 512...) and fit RMS currents with phase; the field's own frequency is then estimated from the log, and if it is off (a grid at 50.1 Hz) the log is demodulated at the estimate, with a warning saying so (too far off, it refuses and names the frequency found); without --freq the DC field is fitted (no frequency is estimated and AC is not looked for)")
	fs.StringVar(&o.mainsText, "mains", "50,60", "with --freq at another frequency than the mains (an injected tracer, 16.7 Hz), fit the mains `HZ` (50, 60, both as 50,60, or none) and their odd harmonics alongside in every window, so that a strong mains field changing as the sensor walks does not leak into the signal as noise")
	fs.Float64Var(&o.window, "window", 0, "AC demodulation window, `S` seconds (default: ten cycles at 50 or 60 Hz; at any other frequency ten cycles or 0.1 s, whichever is longer, rounded up to a multiple of 0.1 s, so that the window holds whole cycles of the 50 or 60 Hz mains and they do not leak in)")
	fs.StringVar(&o.interruptedText, "interrupted", "", "for a DC run whose current was switched off and on again on a fixed cycle while surveying (a rectifier interrupted), fit only the readings taken while it was on, leaving out those near each switch: give the cycle as `ON,OFF` seconds (its period and phase are then found from the readings' switches), or auto to take the whole cycle from the readings; without it a log with such switches is warned of and its fits are not called sound")
	fs.StringVar(&o.dcMainsText, "dc-mains", "auto", "for a DC run (no --freq), average the readings over whole cycles of the mains at `HZ` (50 or 60) before the fits, so that a live mains cable's field, alternating too fast for the walk, cancels with its harmonics: the log needs several readings per cycle (100 Hz or more at 50 Hz); auto does it when the readings' strongest alternating field is at 50 or 60 Hz or a harmonic of them (a rectifier's ripple on the direct current: 100, 120, 300 Hz), off never")
	o.coil.add(fs)
	fs.StringVar(&o.count, "count", "auto", "number of line conductors per fit, `N` (1-4) or auto")
	fs.IntVar(&o.maxCount, "max-count", 4, "with --count auto, the most line conductors a fit may choose, `N` (1-8); where a fit stops at it and one line more still fits better, the group is noted (\"more conductors than the fit holds\"), not called sound, and named in one caution: raise N then (fitting takes longer: from 4 to 6, a quarter longer on the demo, which never needs 4, and twice as long over six close DC lines)")
	fs.StringVar(&o.groupBy, "group-by", "", "fit each value of column `COL` separately (a traverse, a sensor, a time window) and build the along-route profile from the groups")
	fs.StringVar(&o.alongText, "along-window", "auto", "without --group-by, cut readings walked along their length (a cart of several sensors side by side, or a zig-zag, along a conductor) into consecutive windows of `M` metres along the walk and fit each as a station of the route; auto does it when one fit of every reading misses them (the length then chosen from the swath's width), off never")
	fs.BoolVar(&o.json, "json", false, "print the result document (JSON) on stdout")
	fs.StringVarP(&o.out, "output", "o", "", "write results.json, results.csv, findings.csv, route.geojson and report.html into `DIR`")
	fs.BoolVar(&o.csvDecimalComma, "csv-decimal-comma", false, "write results.csv and findings.csv with a semicolon between fields and a decimal comma (60,015), for a spreadsheet set to a language that writes decimals so (German, French, ...), which takes the usual 60.015 for 60015; text cells are as usual; needs -o")
	fs.BoolVar(&o.lineAbove, "line-above", true, "where most traverses' fits miss by far (20x the noise), fit one line above the sensors (an overhead line, a cable tray) beside the buried lines, and keep it when every such traverse agrees on it and a sensor turned half round does not fit as well (DC); given, also say why one was not kept; =false never fits one")
	fs.Float64Var(&o.minCover, "min-cover", 0, "report cover shallower than `M` metres (needs a ground reference: --sensor-height or --reference-z)")
	fs.StringVar(&o.coverCode, "cover-code", "", "the code or practice the minimum cover comes from, quoted in the report (\"NEC Table 300.5\")")
	fs.Float64Var(&o.referenceZ, "reference-z", 0, "report depths below the ground surface at up = `Z` metres, one flat level for the whole survey, instead of below the sensors' mean height; up is the log's local frame (on a latitude/longitude/height log, relative to the origin's height, by default the first reading's), so a ground height of G in the log's datum is Z = G minus the origin's height; warned when it lies above the sensors or does not fit a route whose sensors climb")
	fs.StringArrayVar(&o.sensorHeights, "sensor-height", nil, "the sensors were carried `H` metres above the ground (cover = depth - H); for logs of crews whose sensors stood at different heights give each its own as LOG=H, again for each (LOG the log as given or its base name), and a bare H for the logs not named; with several sensors at different heights, H is the mean height of all of them; with heights in the log, the ground over each line is taken as the sensors' height where they pass over it minus H, else the ground is taken as level under each traverse, and a slope, ditch or embankment across one reads the depth deep and the current high often with no misfit: log heights as z")
	fs.Float64Var(&o.groundSigma, "ground-sigma", 0, "the ground level is known to `S` metres (one sigma) from the depth reference, e.g. how steadily the sensors were held above it; added to the cover sigmas (which otherwise cover the reading noise only); an unsteady height that is not logged also biases the depths and makes their sigmas too small, which S does not mend: log the heights, or state the wander with --position-sigma")
	fs.StringVar(&o.posColumns, "position-sigma-columns", "1sigma", "what the log's own per-reading position uncertainty columns hold (sigma_plan and sigma_up, or a receiver's hacc/vacc, horizontal_accuracy/vertical_accuracy, sigma_h/sigma_v; their unit by suffix or --unit, as hacc_mm): `MODE` 1sigma (one sigma, the plan's per axis: the default), 95 (95% figures: a horizontal radius, divided by 2.45, and a vertical half-width, by 1.96) or off (not used); each reading's variance then takes its own, as --position-sigma takes one for the run, and as an upper bound too; with --position-sigma given as well, each reading takes the larger (the flag a floor); DC readings only (AC windows take --position-sigma)")
	fs.StringVar(&o.positionSigma, "position-sigma", "", "the logged positions are known to `H[,V]` metres (one sigma, independent from reading to reading): H across the plan (east and north, each), V in height (a sensor height that wanders unlogged on a walked pole or rough ground; default: H); the fits then weigh each reading by its whole variance, the field's change over that position error added to the reading noise, and correct the mean change it makes, so the sigmas of current, depth, offset and cover include positioning error; the values are an upper bound, the fit taking from the residuals how much of each they bear (so margin is safe), and errors that are not independent from reading to reading (a shifted traverse, a drift, an odometer that slips) are not covered (e.g. --position-sigma 0.2,0.15 for satellite positions without corrections and a pole walked over rough ground); for AC, of each window's position; the count of conductors is chosen as without it; not with --robust")
	fs.Float64Var(&o.noise, "noise", 0, "reading noise per axis, `NT` nanotesla, of each reading (for AC, each window's phasor then has NT/sqrt(samples in it)); default, or 0: estimated from the fits")
	fs.Float64Var(&o.rangeNT, "range-nt", 0, "the magnetometer reads up to ±`NT` nanotesla on each axis: readings within a ten-thousandth of it (or ten times --noise) are taken as clipped and left out of the fits, with a warning, and a reading beyond it is an error; without it, only readings repeating one value exactly at an axis's extreme are")
	fs.BoolVar(&o.robust, "robust", false, "down-weight outlying readings (Huber weights)")
	fs.BoolVar(&o.despike, "despike", false, "remove spikes (readings off the local trend of their neighbours, and off a line current's shape fitted to them) before fitting")
	fs.Float64Var(&o.stepK, "step-k", 0, "report a step in current when it exceeds `K` standard deviations (default 3)")
	fs.Float64Var(&o.minStep, "min-step", 2, "report a change in current as a step only when it is at least `PCT` per cent of the current; a smaller change beyond K sigma is reported as information (the straight-line model's error near a change of depth or a bend is about 1%); 0 reports every change beyond K sigma as a step")
	fs.StringVar(&o.title, "title", "", "title of the report (default: the site named in the log, or the log's name)")
	fs.IntVar(&o.workers, "workers", 0, "fit `N` groups at a time (default: the number of CPUs)")
	o.read.add(fs)
	o.read.addMissing(fs)
	// --base-log is --base under the name simulate writes the base log
	// with (the walk-through uses both, one line apart); not in the help.
	fs.SetNormalizeFunc(func(_ *pflag.FlagSet, name string) pflag.NormalizedName {
		if name == "base-log" {
			name = "base"
		}
		return pflag.NormalizedName(name)
	})
}

// check validates the options and records the ones given.
func (o *locateOptions) check(fs *pflag.FlagSet) error {
	switch c := strings.ToLower(strings.TrimSpace(o.count)); c {
	case "auto", "":
		o.nCount = 0
	default:
		n, err := strconv.Atoi(c)
		if err != nil || n < 1 || n > 4 {
			return usageErrorf("--count %q: want 1, 2, 3, 4 or auto", o.count)
		}
		o.nCount = n
	}
	if o.maxCount < 0 || o.maxCount > 8 || fs != nil && fs.Changed("max-count") && o.maxCount < 1 {
		return usageErrorf("--max-count %d: want 1 to 8", o.maxCount)
	}
	if fs != nil && fs.Changed("max-count") && o.nCount > 0 {
		return usageErrorf("--max-count bounds the automatic count: not with --count %d", o.nCount)
	}
	if fs != nil && fs.Lookup("base") != nil {
		// The flag set binds o.bases anew for each run; o.base follows.
		o.base = strings.Join(o.bases, " + ")
	}
	if fs != nil && fs.Lookup("calibration") != nil {
		// The flag set binds o.calibrations anew for each run.
		var err error
		if o.calibration, o.calPerLog, err = splitPerLog("calibration", o.calibrations, calibrationIsBare, false); err != nil {
			return err
		}
	}
	if fs != nil && fs.Lookup("sensor-height") != nil {
		// The flag set binds o.sensorHeights anew for each run.
		if err := o.splitSensorHeights(); err != nil {
			return err
		}
	}
	o.baseHoldSet = fs != nil && fs.Changed("base-hold")
	o.lineAboveSet = fs != nil && fs.Changed("line-above")
	if o.baseHold < 0 || math.IsNaN(o.baseHold) {
		return usageErrorf("--base-hold %g: want a time in seconds >= 0", o.baseHold)
	}
	if err := o.curRef.check(o); err != nil {
		return err
	}
	if o.baseHoldSet && o.base == "" {
		return usageErrorf("--base-hold needs --base")
	}
	if o.freq < 0 || math.IsNaN(o.freq) || math.IsInf(o.freq, 0) {
		return usageErrorf("--freq %g: want a positive frequency in Hz", o.freq)
	}
	if fs != nil && fs.Changed("freq") && o.freq == 0 {
		// 0 was taken as no --freq: the DC field fitted, and --window,
		// --mains and --coil refused for want of the flag given.
		return usageErrorf("--freq 0: want a positive frequency in Hz (leave --freq out to fit the DC field)")
	}
	mains, err := parseMains(o.mainsText)
	if err != nil {
		return err
	}
	o.mains = mains
	if o.dcMains, o.dcMainsAuto, err = parseDCMains(o.dcMainsText); err != nil {
		return err
	}
	if o.intOn, o.intOff, o.intAuto, err = parseInterrupted(o.interruptedText); err != nil {
		return err
	}
	if o.interruptedText != "" && o.freq != 0 {
		return usageErrorf("--interrupted is for a DC run: an interrupted direct current is not located with --freq")
	}
	if fs != nil && fs.Changed("dc-mains") && o.freq != 0 {
		return usageErrorf("--dc-mains is for a DC run: with --freq the window's whole cycles keep the mains out (--mains fits them beside a tracer)")
	}
	if fs != nil && fs.Changed("mains") && o.freq == 0 {
		return usageErrorf("--mains needs --freq: the mains are fitted beside an AC signal")
	}
	if fs != nil && fs.Changed("mains") && isMains(o.freq) {
		return usageErrorf("--mains fits the mains beside a signal at another frequency; at --freq %g the mains are the signal", o.freq)
	}
	if o.window != 0 && o.freq == 0 {
		return usageErrorf("--window needs --freq: windows are for AC demodulation")
	}
	if o.window < 0 || math.IsNaN(o.window) || math.IsInf(o.window, 0) {
		return usageErrorf("--window %g: want a positive length in seconds", o.window)
	}
	if o.minCover < 0 || math.IsNaN(o.minCover) || math.IsInf(o.minCover, 0) {
		return usageErrorf("--min-cover %g: want a depth in metres >= 0", o.minCover)
	}
	if o.sensorHeight < 0 || math.IsNaN(o.sensorHeight) || math.IsInf(o.sensorHeight, 0) {
		return usageErrorf("--sensor-height %g: want a height in metres >= 0", o.sensorHeight)
	}
	if o.groundSigma < 0 || math.IsNaN(o.groundSigma) || math.IsInf(o.groundSigma, 0) {
		return usageErrorf("--ground-sigma %g: want a length in metres >= 0", o.groundSigma)
	}
	if err := o.parsePositionSigma(); err != nil {
		return err
	}
	switch strings.TrimSpace(o.posColumns) {
	case "1sigma", "":
		o.colPlan, o.colUp = 1, 1
	case "95":
		// A 95% horizontal radius of a circular Gaussian is 2.448 sigma
		// per axis (1 - exp(-r^2/2) = 0.95); a 95% vertical half-width
		// 1.960 sigma.
		o.colPlan, o.colUp = 1/2.448, 1/1.960
	case "off":
		o.colPlan, o.colUp = 0, 0
	default:
		return usageErrorf("--position-sigma-columns %q: want 1sigma, 95 or off", o.posColumns)
	}
	if o.noise < 0 || math.IsNaN(o.noise) || math.IsInf(o.noise, 0) {
		return usageErrorf("--noise %g: want a noise level in nT >= 0", o.noise)
	}
	if o.rangeNT < 0 || math.IsNaN(o.rangeNT) || math.IsInf(o.rangeNT, 0) {
		return usageErrorf("--range-nt %g: want the magnetometer's range in nT > 0", o.rangeNT)
	}
	given := func(name string) bool { return fs != nil && fs.Changed(name) }
	if o.stepK < 0 || math.IsNaN(o.stepK) || math.IsInf(o.stepK, 0) || given("step-k") && o.stepK == 0 {
		return usageErrorf("--step-k %g: want a finite positive number of standard deviations", o.stepK)
	}
	if given("window") && o.window == 0 {
		return usageErrorf("--window 0: want a positive length in seconds (leave it out for the default)")
	}
	if given("sensor-height") && o.sensorHeight == 0 && len(o.heightPerLog) == 0 {
		return usageErrorf("--sensor-height 0: for sensors on the ground give --reference-z Z, Z their height (up), and depths are below the ground")
	}
	if !(o.minStep >= 0 && o.minStep < 100) {
		return usageErrorf("--min-step %g: want a percentage from 0 to under 100", o.minStep)
	}
	if o.workers < 0 {
		return usageErrorf("--workers %d: want a positive number", o.workers)
	}
	if math.IsNaN(o.referenceZ) || math.IsInf(o.referenceZ, 0) {
		return usageErrorf("--reference-z %g: want a finite height in metres", o.referenceZ)
	}
	if math.IsNaN(o.mountYaw) || math.IsInf(o.mountYaw, 0) {
		return usageErrorf("--mount-yaw %g: want a finite angle in degrees", o.mountYaw)
	}
	o.axes = identityAxes
	if o.fieldAxes != "" {
		m, err := parseFieldAxes(o.fieldAxes)
		if err != nil {
			return usageErrorf("--field-axes %s: %v", o.fieldAxes, err)
		}
		if o.read.frame != "" && o.read.frame != "enu" {
			return usageErrorf("--field-axes describes the field columns of an east, north, up log: give it without --frame %s (for a field logged north, east, down beside positions in east, north, up, --field-axes n,e,d alone)", o.read.frame)
		}
		o.axes = m
	}
	o.hasRefZ = fs != nil && fs.Changed("reference-z")
	if o.hasRefZ && fs.Changed("sensor-height") {
		return usageErrorf("give --reference-z (depths below the ground at that height) or --sensor-height (depths below the sensors, cover from their height), not both")
	}
	hasHeight := o.sensorHeight > 0 || len(o.heightPerLog) > 0 || fs != nil && fs.Changed("sensor-height")
	if o.minCover > 0 && !o.hasRefZ && !hasHeight {
		return usageErrorf("--min-cover needs to know where the ground is: add --sensor-height H (sensors carried H m above ground) or --reference-z Z (ground at up = Z)")
	}
	if o.groundSigma > 0 && !o.hasRefZ && !hasHeight {
		return usageErrorf("--ground-sigma is the uncertainty of the ground level: add --sensor-height H or --reference-z Z to say where the ground is")
	}
	if o.coverCode != "" && o.minCover == 0 {
		return usageErrorf("--cover-code names where --min-cover comes from; give --min-cover too")
	}
	if v, err := parseAlongWindow(o.alongText); err != nil {
		return err
	} else {
		o.alongLen = v
	}
	if o.groupBy != "" && o.alongLen > 0 {
		return usageErrorf("--along-window cuts the readings into windows along the walk, and --group-by groups them by a column: give one")
	}
	if o.groupBy != "" {
		for _, c := range append(append([]string(nil), o.read.columns...), o.read.columnsOld...) {
			if k, _, _ := strings.Cut(c, "="); strings.EqualFold(strings.TrimSpace(k), ingest.ColGroup) && o.groupBy != ingest.ColGroup {
				return usageErrorf("--group-by %s and --column %s both say which column holds the groups; give one", o.groupBy, c)
			}
		}
	}
	if o.out != "" {
		if err := checkOutDir(o.out, o.keepNames); err != nil {
			return err
		}
	} else if o.csvDecimalComma {
		return usageErrorf("--csv-decimal-comma says how results.csv and findings.csv are written: give -o DIR too")
	}
	o.given = map[string]string{}
	if fs != nil {
		fs.Visit(func(f *pflag.Flag) {
			// The output flags change no result: results.json's settings
			// leave them out (report.html's settings say how the CSV
			// files are written).
			if f.Name != "json" && f.Name != "output" && f.Name != "workers" && f.Name != "csv-decimal-comma" {
				v := f.Value.String()
				if sl, ok := f.Value.(pflag.SliceValue); ok {
					// "bx=mV,by=mV", not the slice's "[bx=mV,by=mV]".
					v = strings.Join(sl.GetSlice(), ",")
				}
				if f.Name == "sensor-height" {
					v = heightsGiven(o.sensorHeights)
				}
				if f.Name == "position-sigma" {
					// Both values, as numbers: "0.2,0.2" for
					// --position-sigma .2 (results.json's
					// position_sigma gives them too).
					v = strconv.FormatFloat(o.posPlan, 'g', -1, 64) + "," + strconv.FormatFloat(o.posUp, 'g', -1, 64)
				}
				o.given[f.Name] = v
			}
		})
	}
	// Last: it takes the coils' voltage units out of --unit, which the
	// settings above record as given.
	return o.coil.check(o)
}

// heightsGiven records --sensor-height in the settings as numbers ("0.3",
// "day2.csv=0.25"), as the other number flags are, whatever way they were
// typed (".30", "3e-1").
func heightsGiven(vals []string) string {
	out := make([]string, len(vals))
	for i, v := range vals {
		log, h, named := "", v, false
		if j := strings.LastIndexByte(v, '='); j >= 0 {
			log, h, named = v[:j], v[j+1:], true
		}
		if x, err := strconv.ParseFloat(strings.TrimSpace(h), 64); err == nil {
			h = strconv.FormatFloat(x, 'g', -1, 64)
		}
		if named {
			h = log + "=" + h
		}
		out[i] = h
	}
	return strings.Join(out, ",")
}

func init() {
	o := &locateOptions{}
	register(&command{
		name:    "locate",
		outDir:  true,
		usage:   "[flags] LOG...",
		summary: "estimate where conductors run, how deep, and the current they carry",
		long: `Locate reads one or more magnetometer logs (CSV, Arrow IPC, Parquet or
IAGA-2002; see "undercurrent inspect"), applies the sensor calibration and
the base-station correction when given, demodulates the AC field when --freq
is given, and fits line conductors to the readings: where each runs, how deep
it lies (below the sensors' mean height, or below the ground with
--reference-z), and its current with one-sigma uncertainties.

What is fitted: straight lines below the sensors (at least 0.02 m below the
lowest), dipping at most 80 degrees. Not fitted: a conductor above the
sensors (an overhead line, a cable tray, cables under a deck or ceiling)
and a vertical one (a riser or down-lead beside the traverse). A conductor
above the sensors alone makes every fit fail; when a line above explains
the readings the failure names it with its estimated current and height
(do not turn an axis to make such readings fit: that puts its mirror image
below ground). One above a buried cable biases the cable's current and
depth: the fits then miss the readings by many times their noise, are not
called sound, and the warning names a conductor above the sensors among
the causes. A line fitted at the 80 degree dip bound (a riser's field)
fails its group, with no cover check.

With --group-by it fits each group (a traverse, a sensor, a time window)
separately and builds the profile along the route: current, depth and
position with chainage measured along the fitted route, and findings for a
crew: steps in current (current leaving the conductor, bracketed between the
groups that show it and sized from the levels either side), cover shallower
than --min-cover, fits that are poor or ambiguous, and magnetised objects
(a buried steel item beside the conductor, found by refitting anomalous
groups with a point dipole). Groups with the same value in several logs are
fitted together. Logs of different sensors each take their own
calibration (--calibration LOG=CAL.json, again for each log; a bare
CAL.json for the logs not named), and logs of crews whose sensors stood at
different heights their own height (--sensor-height LOG=H, likewise; the
depths are then referred to one datum, the bare height above the ground,
and each group's cover is its own); a --base record that overlaps only some
of the logs corrects those and warns of the others; logs whose columns,
units or time zones differ are each run through "undercurrent convert"
with their own input flags first.

With --freq, each window averages the field along the sensor's path, and
the fit models that average (a straight walk within each window); when the
path is so long against the conductor's distance that the model may be off
by more than 0.1% near the peak, the run warns and suggests shorter windows
or a slower walk.

The input flags (--column, --unit, --delimiter, --header, --comment,
--frame, --origin, --decimal-comma, --iaga-baseline-frame, --time-order,
--time-offset, --time-zone, --date-order, --allow-unterminated, --drop-missing), the same for every command that
reads logs, apply to the survey logs. Of them, only --time-order,
--allow-unterminated and --iaga-baseline-frame apply to the base log
(--base) too; it comes from another instrument, usually in another format,
so it is read with its own column names (--base-column), units
(--base-unit), axes (--base-frame ned, or its own "# undercurrent.frame:
ned" line; else east, north, up), time zone (--base-time-zone
Europe/Berlin or --base-time-offset +01:00; else UTC) and layout, and with
missing values allowed. A gap in it that survey readings fall in, shorter
than the limit (see --base-hold), is bridged by a straight line; one over
a minute long is reported: its span, the readings and groups in it, and
the straight line's likely error from the base record nearby (of the
components missing); those groups are marked for review and not counted
sound, since that error is in no fit's sigma (a shorter gap is only
counted in the base summary). --base may be given more than once (daily
observatory files across midnight UTC): the rows of all the files are
joined in time order, whatever the order they are given in; readings at
one time must agree within 0.01 nT (a value missing in one is taken from
the other), files that overlap must share readings there, and a step of
the level where one file ends and the next begins (a logger restarted or
moved), larger than a few nT and than the record's own change over as
long nearby, is refused. A base log whose time goes backwards (with --time-order
any) is put in time order, with a warning.
Each survey log's median |B| is checked against the Earth's field (about
22000-67000 nT at the surface, in every raw log): outside 15000-80000 nT
the run warns that the field's unit is probably wrong (fine for a log with
the Earth's field removed), unless, for a DC log, the fitted conductors'
field accounts for it (beside a rail of a thousand amperes: the fitted
readings with that field taken off have a median inside the band);
impossibly far (below 1 pT or above 0.1 T, as
an Earth field in tesla read as nT) it refuses, unless --unit gives the
field's unit. A DC log whose |B| is as steady as the Earth's field but
whose median only a unit's factor brings into the band (uT, G, mT or pT
read as nT) is refused too, unless --unit gives the field's unit; a log
with the Earth's field removed is not steady, and an AC log is warned of.
x and y that look like longitude and latitude in degrees are refused
(map them with --column lon=NAME,lat=NAME).

With --coil turns=N,area=A[,mu=M] (or --coil-response FILE, a measured
response) the field columns hold the voltages of induction coils, one per
axis, in volts unless --unit says otherwise (bx=mV,by=mV,bz=mV; V, mV, uV
or nV, one unit for all three; a voltage unit without a coil is refused).
A log that gives its field columns a field unit itself (names such as
Bx_nT, an IAGA-2002 file, or an Arrow or Parquet file in undercurrent's
own form, whose metadata says nT) is refused unless --unit gives their
voltage unit. A response table that does not cover --freq is refused
before any log is read. A coil senses only a changing field, so it needs
--freq, and it takes neither --calibration nor --base. The voltages are demodulated as a field would be and each window
is then converted to field at its own frequency, its sigma too, before
the fit: by Faraday's law V = -N A μ dB/dt, B = i V/(N A μ ω) (area in m²,
mu the core's apparent relative permeability, default 1), or by the
response table interpolated there. The Earth-field check above does not
apply to volts; a log whose columns hold a steady value over 20 times
their variation (a magnetometer's log given as a coil's) draws a warning
instead, and after the conversion the AC field is checked: a window over
1 mT (5000 A at 1 m) draws a warning, a median over 0.1 T is refused (a
unit or a coil constant is wrong). The coil and its parameters (and its
sensitivity and phase at the survey frequency) are recorded as the run's
calibration in the result document and the report.

Without --group-by every reading is fitted as one straight conductor with
one current. When a log has a group column whose groups are traverses, or
the readings run along the fitted line for more than 20 times its depth,
the run warns and suggests --group-by. A cart of several sensors side by
side, or a zig-zag, walked along a conductor (a swath narrow against its
length) that one fit misses is fitted again in windows along the walk,
each a station of the route, and a note says so (--along-window); a
log's sensor column is never suggested for --group-by. Without
--despike, each log is checked for spikes (readings more than 10 robust
standard deviations from the local trend of their neighbours); when at
least 0.1% of readings are spikes the run warns and suggests --despike.
These warnings come first in the summary's, the result document's and
the report's warnings.

With -o DIR it writes results.json (the result document), results.csv,
findings.csv (one row per finding), route.geojson and report.html (the crew
report) into DIR; the directory is
written whole or not at all, and missing parents are made (the nearest
existing one must be a directory that can be written in). An existing DIR
is replaced only when it holds nothing but those files: a DIR holding any
other file is refused (a usage error, before any work), so that a mistyped
-o cannot replace unrelated work. --json prints the result document on
stdout, and its warnings on stderr as well. Without either it prints a
summary.

The estimates are not a verified locate: confirm before excavation by
approved methods, treat every conductor as live; local codes and licensed
practice prevail.

In the examples, your-log.csv stands for your own log, here with columns
Time, GPS_Lat, GPS_Lon (WGS84 degrees), MagX, MagY, MagZ (microtesla) and
Line (the traverse's name), with the sensor carried 0.25 m above the
ground (the first example); survey.csv, base.csv and cal.json are the logs
and the calibration of the walk-through in README.md,
out/demo/fenwick-lane.csv is the demo's log, and two.csv is written by
"undercurrent simulate testdata/scenarios/two-conductors.toml -o two.csv";
your-coil-log.csv and your-coil-response.csv stand for your own coil log
and response table, which no command here writes, and your-walk.csv and
your-rectifier.csv for a DC traction return walked while the load swung
and the rectifier's current record of that time (columns time and
current, in A).

Examples:
  undercurrent locate --column lat=GPS_Lat,lon=GPS_Lon,bx=MagX,by=MagY,bz=MagZ --unit bx=uT,by=uT,bz=uT --group-by Line --sensor-height 0.25 your-log.csv -o results
  undercurrent locate --group-by group survey.csv
  undercurrent locate --base base.csv --calibration cal.json --group-by group survey.csv -o results
  undercurrent locate --freq 50 --window 0.1 --group-by group --sensor-height 0.3 --min-cover 0.6 --cover-code "UK 11 kV practice" out/demo/fenwick-lane.csv -o results
  undercurrent locate --count 2 --group-by group --json two.csv > two.json
  undercurrent locate --current-reference your-rectifier.csv --group-by group --reference-z 0 your-walk.csv -o results
  undercurrent locate --freq 50 --coil turns=4000,area=3e-4,mu=120 --unit bx=mV,by=mV,bz=mV --group-by group your-coil-log.csv -o results
  undercurrent locate --freq 512 --coil-response your-coil-response.csv --group-by group your-coil-log.csv -o results`,
		setFlags: o.setFlags,
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) == 0 {
				return usageErrorf("no LOG files given")
			}
			if err := o.check(fs); err != nil {
				return err
			}
			var err error
			if o.readOpts, err = o.read.options(fs); err != nil {
				return err
			}
			if err := o.read.checkIAGAAll("LOG", args); err != nil {
				return err
			}
			if o.originWarns, err = o.read.checkOriginNear(args, o.readOpts); err != nil {
				return err
			}
			o.baseOpts = o.read.baseOptions(fs)
			start := time.Now()
			// On a terminal, a stage line until the fitting's bar (if
			// any) takes over.
			line := newStageLine(stderr, "reading, correcting, demodulating and fitting")
			defer line.clear()
			if line != nil {
				o.readOpts = append(o.readOpts, line.readOption())
				o.baseOpts = append(o.baseOpts, line.readOption())
			}
			// After the fitting's bar, the search for objects.
			objects := objectStages(stderr, line)
			o.buildProgress = objects.progress()
			doc, err := runLocate(ctx, o, args, line.handOff(progressOn(stderr)))
			line.clear()
			objects.clear()
			if err != nil {
				return err
			}
			if o.out != "" {
				line := newStageLine(stderr, "writing "+o.out)
				err := writeResults(ctx, o.out, doc, o.keepNames, o.csvOptions())
				line.clear()
				if err != nil {
					return err
				}
			} else if err := ctx.Err(); err != nil {
				return err
			}
			if o.json {
				// The warnings are in the document too, but stdout is
				// usually a file then: the operator sees them here.
				for _, w := range doc.Warnings {
					fmt.Fprintf(stderr, "warning: %s\n", w)
				}
				for _, n := range doc.Notes {
					fmt.Fprintf(stderr, "note: %s\n", n)
				}
				if o.out != "" {
					if w := localGeoJSONWarning(doc); w != "" {
						fmt.Fprintf(stderr, "warning: %s\n", w)
					}
				}
				return report.WriteJSON(stdout, doc)
			}
			printSummary(stdout, doc, time.Since(start), o.walked)
			if o.out != "" {
				fmt.Fprintf(stdout, "results in %s: %s\n", o.out, strings.Join(resultFiles, ", "))
				if w := localGeoJSONWarning(doc); w != "" {
					fmt.Fprintf(stdout, "warning: %s\n", w)
				}
			}
			return nil
		},
	})
}

// localGeoJSONWarning is the warning printed with the results when the
// document has no geodetic origin: route.geojson then holds local metres
// where RFC 7946 (section 4) has WGS84 longitude and latitude, whose
// metres a map viewer takes for degrees; empty with an origin.
// The file says so too (report.GeoJSONLocalNote), but only a reader of
// its text sees it (found in review: no warning at the "results in"
// line). Readings whose centre lies over gridLikeM from the frame's
// origin are taken for projected grid coordinates (eastings and
// northings of a national grid or UTM), for which an origin line would
// be wrong advice: it places metres east and north of a nearby point, so
// 530 km of easting would be read as 530 km from it (found in review);
// such a log is told to give latitude and longitude instead, and that the
// file's coordinates lie outside RFC 7946's range.
//
// With an origin the grid check applies too (found in review: UTM
// eastings and northings under an origin line were placed 5,800 km away,
// in the Russian Far East, without a word): readings none of which lies
// within originGridM of the origin are refused when read
// (gridUnderOrigin), and a document none of whose groups lies within it
// all the same gets that message here.
func localGeoJSONWarning(doc *report.Document) string {
	if doc.Frame.Origin != nil {
		var x, y []float64
		for _, g := range doc.Groups {
			x, y = append(x, g.Centroid[0]), append(y, g.Centroid[1])
		}
		if b, ok := boxPlan(x, y); ok && b.nearest() > originGridM {
			return report.FileGeoJSON + ": " + gridUnderOriginText(b)
		}
		return ""
	}
	if e, n, ok := gridLike(doc); ok {
		return fmt.Sprintf("%s holds the log's own coordinates (readings centred about %.0f m east, %.0f m north), not longitude and latitude: "+
			"they look like a projected grid's eastings and northings, which a map viewer cannot place and which lie outside GeoJSON's range of degrees; "+
			"convert the positions to latitude and longitude (lat, lon and height columns) to have it placed (an origin line is for metres from a nearby point, not for grid coordinates)",
			report.FileGeoJSON, e, n)
	}
	return report.FileGeoJSON + " holds metres east and north of a local origin, not longitude and latitude: the survey had no geodetic positions, " +
		"so a map viewer takes its metres for degrees and places it wrongly unless told the frame; give the log's origin (" + originHowTo + ") to have it placed"
}

// gridLikeM is how far from a local frame's origin, m, the readings'
// centre must lie for locate to take the positions for projected grid
// coordinates: a survey laid out in metres from a chosen point stays
// within a few kilometres of it, while grid eastings and northings run to
// hundreds of kilometres.
const gridLikeM = 20e3

// originGridM is how near to the origin its origin line names, m, at
// least one of a log's readings must lie for its x, y to be taken for
// metres about that origin: a log none of whose readings comes within
// originGridM of it is refused (gridUnderOrigin). Projected grids'
// eastings and northings lie that far from any point: UTM eastings run
// from 166 to 834 km (northings up to 9,300 km), and a national grid's
// hundreds of km from its false origin. A survey converted from latitude
// and longitude (convert) always has a reading near its origin, however
// long its route: the origin is its first reading, its mean position
// (which lies within the readings' extent, the box planBox.nearest
// measures from), or an --origin LAT,LON that convert refuses over
// originFarKm from the first reading. Found in
// review: the refusal had judged the readings' centre against 100 km, and
// so refused a 240 km route that convert itself had written about its
// first reading (centre 120 km away), and logs whose origin line lay 120
// or 150 km away, which were fitted before.
const originGridM = 160e3

// originFarWarnM is how far from the origin of its origin line a log's
// nearest reading may lie, m, before locate warns (gridUnderOrigin):
// between it and originGridM the log is read about its origin, as its
// origin line asks, but such x, y could also be a small grid's.
const originFarWarnM = 100e3

// planBox is the extent of a set of x, y: the least and greatest of
// each, m, and their mean.
type planBox struct {
	xmin, xmax, ymin, ymax float64
	e, n                   float64 // mean
}

// nearest is how far from the origin (0, 0) the nearest point of the box
// lies, m: 0 when the box holds the origin; no reading lies nearer.
func (b planBox) nearest() float64 {
	dx := max(0, b.xmin, -b.xmax)
	dy := max(0, b.ymin, -b.ymax)
	return math.Hypot(dx, dy)
}

// gridUnderOriginText says that positions within box b, about the
// origin of an origin line, lie too far from it to be metres from it, and
// look like a projected grid's.
func gridUnderOriginText(b planBox) string {
	return fmt.Sprintf("no reading lies within %.0f km of the origin the log's origin line names (the readings are centred about %.0f m east, %.0f m north of it, about %.0f km away): "+
		"an origin line is for metres east and north from a nearby point, and x, y this far from any reading's origin look like a projected grid's eastings and northings (a national grid or UTM), "+
		"which about the origin would place the survey %.0f km away; give the log latitude and longitude (lat, lon and height columns) instead, and leave the origin line out",
		b.nearest()/1e3, b.e, b.n, math.Hypot(b.e, b.n)/1e3, math.Hypot(b.e, b.n)/1e3)
}

// farFromOriginText is the warning for readings within box b whose
// nearest lies over originFarWarnM from the origin of their origin line
// but not over originGridM.
func farFromOriginText(b planBox) string {
	return fmt.Sprintf("no reading lies within %.0f km of the origin the log's origin line names (the readings are centred about %.0f m east, %.0f m north of it): "+
		"they are read as metres east and north of that origin, as the line says; if these x, y are a projected grid's eastings and northings instead, the survey is placed about %.0f km from where it is: "+
		"then give the log latitude and longitude (lat, lon and height columns) and leave the origin line out",
		b.nearest()/1e3, b.e, b.n, math.Hypot(b.e, b.n)/1e3)
}

// gridUnderOrigin refuses a log whose x, y are about an origin (its origin
// line) but none of whose readings lies within originGridM of it
// (gridUnderOriginText), and warns of one none of whose readings lies
// within originFarWarnM (farFromOriginText); nothing otherwise, or when
// x, y came from latitude and longitude.
func gridUnderOrigin(s *ingest.Samples, geo bool) (string, error) {
	if geo || s.Origin == nil {
		return "", nil
	}
	b, ok := boxPlan(s.X, s.Y)
	switch {
	case !ok || b.nearest() <= originFarWarnM:
		return "", nil
	case b.nearest() <= originGridM:
		return s.Source + ": " + farFromOriginText(b), nil
	}
	return "", fmt.Errorf("%s: %s", s.Source, gridUnderOriginText(b))
}

// boxPlan returns the extent and mean of the finite x, y pairs, and
// whether there was one.
func boxPlan(x, y []float64) (b planBox, ok bool) {
	k := 0
	for i := range min(len(x), len(y)) {
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			continue
		}
		if k == 0 {
			b.xmin, b.xmax, b.ymin, b.ymax = x[i], x[i], y[i], y[i]
		}
		b.xmin, b.xmax = min(b.xmin, x[i]), max(b.xmax, x[i])
		b.ymin, b.ymax = min(b.ymin, y[i]), max(b.ymax, y[i])
		b.e += x[i]
		b.n += y[i]
		k++
	}
	if k == 0 {
		return planBox{}, false
	}
	b.e /= float64(k)
	b.n /= float64(k)
	return b, true
}

// gridLike returns the mean of doc's groups' centroids, east and north,
// and whether it lies over gridLikeM from the frame's origin.
func gridLike(doc *report.Document) (e, n float64, ok bool) {
	if len(doc.Groups) == 0 {
		return 0, 0, false
	}
	for _, g := range doc.Groups {
		e += g.Centroid[0]
		n += g.Centroid[1]
	}
	e /= float64(len(doc.Groups))
	n /= float64(len(doc.Groups))
	return e, n, math.Hypot(e, n) > gridLikeM
}

// progressOn returns a progress-bar writer: stderr when it is a terminal,
// nil otherwise (quiet).
func progressOn(stderr io.Writer) io.Writer {
	f, ok := stderr.(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		return nil
	}
	return stderr
}

// group is the readings of one group, ready to fit.
type group struct {
	key    string
	from   string // the log of its first reading
	points [][3]float64
	fields [][3]float64 // DC
	stamps []float64    // DC: each reading's time, s (NaN when the log has none)
	scale  []float64    // DC: each reading's current over the reference's mean (--current-reference), nil without one
	// psig is (DC) each reading's own position sigmas, m, across the plan
	// and in height, from the log's columns (ingest.ColSigmaPlan,
	// ColSigmaUp, one sigma: --position-sigma-columns); NaN where a log
	// gives none; nil when no log of the group has them. Shorter than
	// points when the group's first logs had none (problem pads it).
	psig [][2]float64
	// noTimes leaves the stamps out of the DC fits' problem: the survey's
	// current ramps were taken for a spatial shape (guardTimeRamps).
	noTimes bool
	phasors [][3]complex128 // AC
	res     *inverse.Result // fit
	err     error           // fit failure
	// bg is the background the fit took: uniform, or with a term along the
	// traverse where a far source to the side needed it (farside.go).
	bg inverse.BackgroundModel
	// along is the group's fit with that background (chooseAlong), until
	// decideAlong takes it for the route or drops it; alongNeed is set where
	// the group's readings alone need it.
	along     *inverse.Result
	alongNeed bool
	travel    []float64       // AC: distance walked during each window, m
	half      [][3]float64    // AC: each window's half-travel (calibrate.Window.Travel), m
	times     []float64       // AC: each window's centre time, s
	ramp      *groupRamp      // AC: the phase ramp fitted (phaseramp.go); nil for none
	res0      *inverse.Result // AC: with a ramp, the fit without one
	// chirp is (AC) the drift of the field's frequency, Hz/s, followed
	// within the group about its middle (followDrift); 0 for none.
	chirp   float64
	windowN []float64 // AC: each window's sample count
	wsigma  []float64 // AC: the windows' noise per axis (calibrate.Window.Sigma), nT
	hint    float64   // AC: the offset of the group's own frequency, Hz, where the ramp search starts; 0 for none
	// estimated is set (AC) when the group was demodulated at a frequency
	// estimated from the log, not the one given: off by about the
	// estimate's sigma, so the ramp is always searched for (fitRamp).
	// estSigma is then that sigma, Hz.
	estimated bool
	estSigma  float64
	// loose is set (AC) when the frequency used is not known well enough
	// to hold one phase across a group (freqHints.loose): the ramp is then
	// searched for as in a group demodulated at an estimate, and as far
	// from 0 as rampBound, Hz, the frequency's uncertainty, reaches.
	loose     bool
	rampBound float64
	// looseTurn is, for a loose group once fitted, the turn across it,
	// degrees, its fit still allows (looseTurnBound).
	looseTurn float64
	looseLog  string // the log whose frequency check set loose
	// memo keeps the sensor tracks and DC measured noise of the readings
	// (groupMemo); nil computes them at every call.
	memo *groupMemo
	// tilt is (DC) the constant sensor tilt measured in the fit and taken
	// out of fields (constanttilt.go); nil for none.
	tilt *groupTilt
}

// ownSigmas reports whether any group's readings carry their own
// position sigmas (the log's columns).
func ownSigmas(sv *survey) bool {
	for _, g := range sv.groups {
		if g.psig != nil {
			return true
		}
	}
	return false
}

// problem is the group's readings as an inverse problem.
func (g *group) problem(ac bool, noise float64) *inverse.Problem {
	p := &inverse.Problem{Points: g.points, Sigma: noise}
	if ac {
		// Each window's phasor is the mean of the field along the path walked in
		// it: the fit models that path average, not the field at its centre.
		p.Phasors, p.Travel = g.phasors, g.half
		if g.ramp != nil {
			p.Phasors = turned(g.phasors, g.times, g.ramp.hz, g.chirp, g.ramp.mid)
		} else if g.chirp != 0 && len(g.times) > 0 {
			mid, _ := timesMidSpan(g.times)
			p.Phasors = turned(g.phasors, g.times, 0, g.chirp, mid)
		}
	} else {
		p.Fields, p.Scale = g.fields, g.scale
		if g.psig != nil {
			p.PositionSigmas = slices.Clone(g.psig)
			for len(p.PositionSigmas) < len(g.points) {
				p.PositionSigmas = append(p.PositionSigmas, [2]float64{math.NaN(), math.NaN()})
			}
		}
		// The readings' times let the fit check for a current changing
		// while the traverse was walked (inverse.CurrentRampNote); with a
		// reference current (scale) the change is already modelled and the
		// check is not made.
		if len(g.stamps) == len(g.points) && !g.noTimes && g.scale == nil {
			p.Times = g.stamps
		}
	}
	return p
}

// survey is what runLocate has read and corrected.
// looseLog is a log whose AC frequency was not known well enough for one
// phase per group (freqHints.loose): warned about once its groups are
// fitted (looseFreqWarning).
type looseLog struct {
	source string
	hints  freqHints
}

type survey struct {
	// sigmaCols names the log columns read as position sigmas, with
	// their unit: "hacc (mm)" (possigcols.go).
	sigmaCols []string
	// logHeights is each log's sensor height above the ground, m
	// (--sensor-height, perlog.go), by its path as given; empty without
	// the flag. datum is the height the depths are referred to
	// (report.BuildSettings.SensorHeight).
	logHeights map[string]float64
	datum      float64
	// drifts are the steady drifts of the AC frequency followed in the
	// groups' fits (followDrift).
	drifts    []driftLaw
	looseLogs []looseLog
	// unchecked holds the AC logs whose frequency check could not decide
	// (wrongfreq.go).
	unchecked []uncheckedLog
	doc       *report.Document
	groups    []*group
	ac        bool
	warnings  []string
	// jitter is, by group, what jittered stamps cost (jitterphase.go);
	// nil when the stamps are not jittered.
	jitter map[string]stampCost
	// alerts are warnings that the answer may be wrong (a route fitted
	// as one line, spikes left in); they come first.
	alerts []string
	// keptRails names, per log, readings held at one value like a rail
	// that were kept in the fits (clipped.go keptRails), for the
	// shared-misfit warning.
	keptRails []string
	// clipGaps holds, by an AC log's source, the times of the readings
	// that follow rows left out as clipped (clippedGapTimes).
	clipGaps map[string][]float64
	// baseCheck holds what the comparison with the base record's field
	// needs once the groups are fitted (basefield.go).
	baseCheck *baseCheck
	// baseRover is the first base-corrected log's times (their span) and
	// how they were written, for naming the log a base record's offset
	// lies in (baselag.go).
	baseRover *ingest.Samples
	// swings is the check for a sensor turning within the groups
	// (sensorturn.go), made once they are fitted.
	swings *swing
	// groupWarned is set when a log's group column drew the --group-by
	// warning (then the span check is not needed).
	groupWarned bool
	// groupCol is the file's name of the column --group-by names (the
	// first log's), for the warnings.
	groupCol string
	// groupLines holds, for each log whose group column drew that
	// warning, the warning and its groups' directions of travel, so that
	// the warning can be reworded once the fit is known (alongGroups).
	groupLines []groupLines
	// unread holds, for each log read without a group column, its
	// columns that fed nothing, where the span warning looks for the one
	// --group-by should have named (groupColumnHint).
	unread []unreadColumns
	// geodetic says which logs have latitude and longitude columns (the
	// logs --origin places), and originFrom is the log whose origin the
	// document's frame took.
	geodetic   map[string]bool
	originFrom string
	// noOrigin is the first local log without an origin, while no log
	// with one has been read; logs are the survey logs, in order.
	noOrigin string
	logs     []string
	// mainsNotes say the mains were averaged out (dcmains.go): notes,
	// or warnings when no fit found a conductor after it.
	mainsNotes []string
	// rewalks numbers the walks after the first of traverses walked
	// again in one log (rewalks.go), keyed by rewalkKey.
	rewalks map[string]int
	// reused are the renamings of group values several logs use again
	// (loggroups.go nameReusedGroups).
	reused reusedNames
	// windowN are the AC windows' sample counts, and windowSigma their
	// phasors' noise per axis from the windows' own sine-fit residuals
	// (calibrate.Window.Sigma), nT.
	windowN, windowSigma []float64
	// interrupted holds the DC logs whose readings switch between two
	// levels on a cycle, fitted as they are (dcinterrupt.go); intNotes
	// say which logs' on-state readings alone were fitted.
	interrupted map[string]bool
	intNotes    []string
	// alongNotes say the logs were cut into along-route windows
	// (alongwindows.go).
	alongNotes []string
	// aboveWhy is why the line-above search on the uniform-background
	// fits took no line above (lineAboveFirst), said with --line-above
	// when the search on the fits reported gives no reason of its own.
	aboveWhy string
	// leaky holds, for the AC logs in which a fitted mains line too strong
	// for its distance leaks into the signal, why their groups are not
	// sound (demodPlan.strongLine).
	leaky map[string]string
	// baseGaps are the gaps of the base record that survey readings fell
	// in (basegaps.go).
	baseGaps []baseGapUse
	// baseNoise is the base record's own noise, for the fits' sigmas
	// (basenoise.go); nil without a base or when it is not measured.
	baseNoise *baseNoise
}

// fitNoise is the noise of the fitted values, nT, for a reading noise of
// noise per axis (--noise; 0 when it is to be estimated): the reading
// noise itself for DC; for AC the noise of each real component of a
// window's RMS phasor, noise/sqrt(N) for windows of N samples (the
// least-squares variance of a sine fit's coefficients, IEEE Std 1057,
// 2 noise²/N, over the RMS scale's 2), N the windows' median count. Before,
// an AC run took --noise as the windows' noise: the true 5 nT reading noise
// made every sigma 10 times too wide, and a misfit passed as sound.
//
// This is the survey's: the route's yardstick. Each group's fit takes its
// own windows' median count (groupNoise): logs sampled at 2 kHz and 250 Hz
// located together gave the 250 Hz groups sigmas 2.1 times too small
// (found in review).
func (sv *survey) fitNoise(noise float64) float64 {
	return windowNoise(sv.ac, noise, sv.windowN)
}

// groupNoise is fitNoise for the windows of group g.
func (sv *survey) groupNoise(g *group, noise float64) float64 {
	return windowNoise(sv.ac, noise, g.windowN)
}

func windowNoise(ac bool, noise float64, n []float64) float64 {
	if !ac || noise == 0 || len(n) == 0 {
		return noise
	}
	return noise / math.Sqrt(medianOf(n))
}

// runLocate reads, corrects, fits and analyses; progress, when not nil,
// receives a progress bar.
func runLocate(ctx context.Context, o *locateOptions, logs []string, progress io.Writer) (*report.Document, error) {
	orig := *o // the options as given, for a run again without the current record
	sv, err := readSurvey(ctx, o, logs)
	if err != nil {
		return nil, err
	}
	if err := applyCurrentReference(ctx, o, sv); err != nil {
		return nil, withWarnings(err, sv.alerts, sv.warnings)
	}
	if err := fitGroups(ctx, o, sv, progress); err != nil {
		return nil, err
	}
	// Readings walked along their length that one fit cannot describe:
	// fitted again in along-route windows (alongwindows.go).
	l, why, two := autoAlongWindows(o, sv)
	if two != "" {
		sv.alerts = append([]string{two}, sv.alerts...)
	}
	if l > 0 {
		o.alongLen, o.alongAuto, o.alongWhy = l, true, why
		if sv, err = readSurvey(ctx, o, logs); err != nil {
			return nil, err
		}
		if err := applyCurrentReference(ctx, o, sv); err != nil {
			return nil, withWarnings(err, sv.alerts, sv.warnings)
		}
		if err := fitGroups(ctx, o, sv, progress); err != nil {
			return nil, err
		}
	}
	// A median |B| above the Earth's band that the fitted conductors'
	// field accounts for is not a unit's fault (bandfield.go).
	explainedBand(sv)
	// A base record paired at the wrong time (baselag.go).
	w, err := baseLagCheck(o, sv)
	if err != nil {
		return nil, withWarnings(err, sv.alerts, sv.warnings)
	}
	if w != "" {
		sv.alerts = append(sv.alerts, w)
	}
	o.walked = walkedSpan(sv)
	doc, err := buildDocument(ctx, o, sv)
	if err != nil || o.curRef.path == "" || o.curRef.dropped != "" {
		return doc, err
	}
	// The current record tested against the currents fitted with it
	// (currentref.go): one that does not explain them is not applied.
	notes, warns, drop := testCurrentReference(o.curRef.path, doc, sv)
	if drop != "" {
		*o = orig
		o.curRef.dropped = drop
		return runLocate(ctx, o, logs, progress)
	}
	doc.Notes = append(doc.Notes, notes...)
	doc.Warnings = append(doc.Warnings, warns...)
	return doc, nil
}

// walkedSpan is the time from the first to the last DC reading of the
// groups, s; 0 for an AC run or readings without times.
func walkedSpan(sv *survey) float64 {
	if sv.ac {
		return 0
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, g := range sv.groups {
		for _, t := range g.stamps {
			lo, hi = math.Min(lo, t), math.Max(hi, t) // NaN (no time) leaves them
		}
	}
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		return 0
	}
	return hi - lo
}

// readSurvey reads the logs, applies the corrections, demodulates and
// splits the readings into groups. It stops with ctx's error between
// stages (and between batches while reading) once ctx is done.
func readSurvey(ctx context.Context, o *locateOptions, logs []string) (_ *survey, err error) {
	doc := &report.Document{
		SchemaVersion: report.SchemaVersion,
		Tool:          report.Tool{Name: "undercurrent", Version: toolVersion(), Build: buildText()},
		Created:       time.Now().UTC().Format(time.RFC3339),
		Frame:         report.Frame{Kind: report.FrameLocalENU},
		Settings:      o.given,
		Findings:      []report.Finding{},
	}
	sv := &survey{doc: doc, ac: o.freq > 0}
	defer func() { err = withWarnings(err, sv.alerts, sv.warnings) }()
	sv.warnings = append(sv.warnings, o.originWarns...)
	if len(o.baseUnits) > 0 && o.base == "" {
		return nil, usageErrorf("--base-unit needs --base")
	}
	if len(o.baseColumns) > 0 && o.base == "" {
		return nil, usageErrorf("--base-column needs --base")
	}
	if o.baseFrame != "" && o.base == "" {
		return nil, usageErrorf("--base-frame needs --base")
	}
	if o.baseDates != "" && o.base == "" {
		return nil, usageErrorf("--base-date-order needs --base")
	}
	if o.baseOffset != "" && o.base == "" {
		return nil, usageErrorf("--base-time-offset needs --base")
	}
	if o.baseZone != "" && o.base == "" {
		return nil, usageErrorf("--base-time-zone needs --base")
	}
	if o.baseZone != "" && o.baseOffset != "" {
		return nil, usageErrorf("--base-time-zone %s and --base-time-offset %s: give one (the zone, when the base log crosses a change of the clocks)", o.baseZone, o.baseOffset)
	}
	if err := checkSurveyCopies(logs); err != nil {
		return nil, err
	}
	// Each log's calibration (perlog.go): its own, or the bare one.
	// cal is the first one applied, for the checks made once for the
	// survey (the offset turning with the sensor, the field against the
	// base record's).
	cals, calPaths, err := loadCalibrations(o, logs, doc)
	if err != nil {
		return nil, err
	}
	// Each log's sensor height (perlog.go): its own, or the bare one.
	logHeights, datum, err := logSensorHeights(o, logs)
	if err != nil {
		return nil, err
	}
	var cal *calibrate.Calibration
	var calPath string
	for k := range logs {
		if cals[k] != nil {
			cal, calPath = cals[k], calPaths[k]
			break
		}
	}
	if err := o.coil.load(doc, o.freq); err != nil {
		return nil, err
	}
	opts := append(append([]ingest.Option(nil), o.readOpts...), o.coil.readOptions()...)
	if o.groupBy != "" && o.groupBy != ingest.ColGroup {
		opts = append(opts, ingest.WithColumns(ingest.ColGroup+"="+o.groupBy))
	}
	// A coil's field columns must be volts (a usage error, from the
	// header alone); then a log without positions (a fixed sensors'
	// record) is refused from its columns, before it or the base log is
	// read through.
	if o.coil.on() {
		for _, path := range logs {
			if err := o.coil.checkLog(path, opts); err != nil {
				return nil, err
			}
		}
	}
	if err := checkSurveyPositions(logs, opts); err != nil {
		return nil, withPerLogNote(err, logs)
	}
	var base *ingest.Samples
	var baseLeftOut []int // base rows left out as spikes
	if o.base != "" {
		paths := o.bases
		if len(paths) == 0 {
			paths = []string{o.base}
		}
		// Each file is read and checked as the one base log was; the
		// files are then joined in time order.
		parts := make([]*ingest.Samples, 0, len(paths))
		for _, path := range paths {
			one := *o
			one.base = path
			b, err := readBaseFile(ctx, &one, logs, sv)
			if err != nil {
				return nil, err
			}
			parts = append(parts, b)
		}
		var err error
		if base, err = joinBaseLogs(parts); err != nil {
			return nil, err
		}
		// A spike at the base is subtracted from every survey reading
		// taken at that moment: it is always looked for, and left out.
		w, spiked, err := despikeBase(o, base)
		if err != nil {
			return nil, err
		} else if w != "" {
			sv.warnings = append(sv.warnings, w)
		}
		baseLeftOut = spiked
		sv.baseNoise = newBaseNoise(o.base, base)
	}
	sv.logs = logs
	sv.logHeights, sv.datum = logHeights, datum
	if sv.geodetic, err = checkOriginFlag(o, logs, opts); err != nil {
		return nil, err
	}
	index := map[string]*group{}
	var baseNotes []string
	var seen surveyReadings
	baseFrameWarned := false
	// The base correction's warning that the base record's east and north
	// are not geographic (the reader's is left out: baseOptions).
	baseFrameNote, baseFrameSaid := "", false
	baseFieldSaid := false // baseInConductorField's warning given
	// The logs the base record lies wholly outside of, left uncorrected,
	// and the errors that said so (baseUncovered).
	var baseApart []string
	var baseApartErr []error
	if base != nil {
		baseFrameNote = calibrate.BaseFrameWarning(base)
	}
	// The logs are read and checked first, then corrected and grouped.
	read := make([]*ingest.Samples, 0, len(logs))
	clipped := make([]bool, len(logs)) // an AC log with clipped readings left out
	var deg degreesSpan                // the extent of the logs' x, y in local metres
	for k, path := range logs {
		// A coil log's voltages are not checked against the Earth's field.
		s, rows, warns, err := o.read.readLogRows(ctx, path, opts, !o.coil.on())
		sv.warnings = append(sv.warnings, warns...)
		if err != nil {
			return nil, withPerLogNote(err, logs)
		}
		if !sv.ac {
			// The position sigma columns named, their zeros and units
			// checked (possigcols.go).
			sigmaColumns(o, sv, path, opts, s)
		}
		// A DC log in uT read as nT (unitslip.go).
		if !o.coil.on() && !sv.ac && !o.read.fieldUnitGiven() {
			w, err := surveyLogUnit(path, s)
			if err != nil || w != "" {
				// The refusal, or the warning of two readings, says
				// what the band warning said, and more.
				sv.warnings = slices.DeleteFunc(sv.warnings, func(w string) bool {
					return strings.HasPrefix(w, path+": median |B| is ") && strings.Contains(w, earthBand)
				})
			}
			if err != nil {
				return nil, err
			}
			if w != "" {
				sv.warnings = append(sv.warnings, w)
			}
		}
		if w := ingest.OneTime(s.Time); w != "" && !sv.ac {
			// A time column rounded to one value (an AC log is refused
			// with the same words by the demodulation).
			sv.warnings = append(sv.warnings, path+": "+w+"; the readings were fitted, but nothing that takes their times (a base station's correction, the drift, the order of the walks) can be trusted")
		} else if step, w := ingest.CoarseStamps(s.Time, s.Group); w != "" && !sv.ac {
			// Times to the whole minute: a base correction pairs the
			// readings with the base up to a step off.
			if base != nil {
				w += fmt.Sprintf("; the base correction (--base) paired each reading with the base at its written time, so the pairing may be up to %g s off", step)
			}
			sv.warnings = append(sv.warnings, path+": "+w)
		}
		// Only times written as text without an offset can be a clock's
		// local times misread (found in review: Unix seconds and times
		// ending in Z were warned of): read as UTC (NaiveTime), or with
		// the one --time-offset given; with --time-zone the zone reads
		// both changes of the clocks right.
		zoneless, off := s.NaiveTime, 0.0
		if v, ok := o.given["time-offset"]; ok {
			if d, err := ingest.ParseTimeOffset(v); err == nil {
				zoneless, off = true, d.Seconds()
			}
		}
		if w := ingest.ClockChangeForward(s.Time, s.X, s.Y, s.Group, off); zoneless && w != "" && o.read.timeZone == "" {
			sv.warnings = append(sv.warnings, path+": "+w)
		}
		if sv.ac {
			// Stale stamps put at their place in the sampling
			// (stuckstamps.go).
			var w string
			if s, w = retimeStuckStamps(path, s, rows, &o.read); w != "" {
				sv.warnings = append(sv.warnings, w)
			}
		}
		if base != nil {
			if err := checkBaseNotSurvey(o.base, base, path, s); err != nil {
				return nil, err
			}
			if !o.coil.on() {
				w, err := checkSurveyBaseUnits(o, base, path, s)
				if err != nil {
					return nil, err
				}
				if w != "" {
					sv.alerts = append(sv.alerts, w)
				}
			}
			// --frame does not reach the base log: one that states no
			// frame is read as east, north, up beside a survey in NED.
			if s.InFrame == ingest.FrameNED && !base.InFrameStated && !baseFrameWarned {
				baseFrameWarned = true
				sv.warnings = append(sv.warnings, fmt.Sprintf("%s: the base log states no frame and is read as east, north, up, while %s is read as north, east, down: if the base log is in north, east, down too, give --base-frame ned (or a \"# undercurrent.frame: ned\" line in it), else its north departures are taken away from the survey's east", o.base, path))
			}
		}
		// A coil's voltages are not compared as fields are.
		if err := seen.check(path, s, k < len(logs)-1 && !o.coil.on()); err != nil {
			return nil, err
		}
		if o.coil.on() {
			o.coil.toVolts(s)
			if w := coilSteadyWarning(path, s); w != "" {
				sv.alerts = append(sv.alerts, w)
			}
		} else if o.freq > 0 {
			if w := coilLikeWarning(path, s); w != "" {
				sv.warnings = append(sv.warnings, w) // coillike.go
			}
		}
		if s.X == nil || s.Y == nil || s.Z == nil {
			// Found from the columns by checkSurveyPositions as a rule.
			return nil, noPositionsError(path)
		}
		if err := checkPositionsRead(path, s); err != nil {
			return nil, err
		}
		// Positions in mm or cm read as metres (posunits.go).
		if w := checkPositionSpeed(path, s, o.read.positionUnitGiven()); w != "" {
			sv.alerts = append(sv.alerts, w)
		}
		if o.groupBy != "" && s.Group == nil {
			return nil, noGroupColumnError(path, o.groupBy, s)
		}
		if o.groupBy != "" && sv.groupCol == "" {
			sv.groupCol = o.groupBy
			if o.groupBy == ingest.ColGroup {
				sv.groupCol = baseGroupColumn(path, opts)
			}
		}
		if s.Group == nil && len(s.Unread) > 0 {
			// For the span warning's hint (groupColumnHint).
			sv.unread = append(sv.unread, unreadColumns{path, s.Unread})
		}
		// Rows out of time order within a group (--time-order any) are
		// put in order (input.go sortGroupRows).
		if back := sortGroupRows(s); back > 0 {
			what := "within a group at " + plural(back, "row")
			done := "each group's rows were put in time order, kept together"
			if s.Group == nil {
				what, done = "at "+plural(back, "row"), "the rows were put in time order"
			}
			sv.warnings = append(sv.warnings, fmt.Sprintf("%s: time goes backwards %s (--time-order %s): %s, as the AC demodulation, the pauses between walks and the noise estimates take the readings in order", path, what, o.read.timeOrder, done))
		}
		if !o.coil.on() {
			// Readings pinned at the sensor's range (clipped.go).
			keep, w, note, err := clippedRows(path, s, o.rangeNT, o.noise)
			if err != nil {
				return nil, err
			}
			if note != "" {
				sv.alerts = append(sv.alerts, note)
				if r := keptRails(note); r != "" {
					sv.keptRails = append(sv.keptRails, r)
				}
			}
			if keep != nil {
				if sv.ac {
					// The rows that follow those left out, whose gaps
					// the demodulation names as such (clipped.go).
					if sv.clipGaps == nil {
						sv.clipGaps = map[string][]float64{}
					}
					sv.clipGaps[s.Source] = clippedGapTimes(s, keep)
				}
				keepSampleRows(s, keep)
				if sv.ac {
					// An AC waveform cut at its peaks has lost its mean.
					w += clippedACBase
					clipped[k] = true
				}
				sv.alerts = append(sv.alerts, w)
			}
		}
		if !sv.geodetic[path] {
			deg.add(path, s)
		}
		read = append(read, s)
	}
	// Longitude and latitude mapped to x and y (posunits.go).
	if err := deg.check(opts, o.read.positionUnitGiven()); err != nil {
		return nil, err
	}
	// The logs' origins are checked before their groups are matched
	// across logs: a group's readings in two logs placed about two
	// origins lie apart by the origins' distance, and before, a false
	// "group T10 ... 180 m apart" warning came ahead of the refusal.
	for _, s := range read {
		if w, err := gridUnderOrigin(s, sv.geodetic[s.Source]); err != nil {
			return nil, err
		} else if w != "" {
			sv.warnings = append(sv.warnings, w)
		}
		if w, err := sv.sameOrigin(o, s); err != nil {
			return nil, err
		} else if w != "" {
			sv.warnings = append(sv.warnings, w)
		}
	}
	if o.groupBy != "" {
		// A traverse walked again under its own name in one log, after a
		// pause (rewalks.go).
		var ws []string
		ws, sv.rewalks = splitRewalkedGroups(logs, read)
		sv.warnings = append(sv.warnings, ws...)
		// A traverse name used again in another log for another traverse,
		// told apart once every log is read, so that the earliest keeps
		// the name (loggroups.go).
		var as []string
		as, sv.reused = nameReusedGroups(logs, read)
		sv.alerts = append(sv.alerts, as...)
	}
	var turns offsetTurn
	var swings swing
	var field surveyField
	enu := true
	for k, path := range logs {
		s := read[k]
		read[k] = nil // the groups hold the readings from here on
		if doc.Site == "" {
			doc.Site = s.Meta["site"]
		}
		if cal := cals[k]; cal != nil {
			// The calibration belongs to the sensor's own axes, the
			// columns as the file has them. ingest has turned a log read
			// with --frame ned to east, north, up (x and y swapped, z
			// negated), so the calibration is turned the same way: applied
			// to the columns as read it then equals the calibration
			// applied in the file's axes before the turn. Before, it was
			// applied to the turned columns as they were and landed on the
			// wrong axes.
			// A log read as NED by its own "# undercurrent.frame: ned"
			// line is turned as one read with --frame ned.
			c := cal
			if s.InFrame == ingest.FrameNED {
				c = nedToENUCalibration(cal)
			}
			// A calibration of another sensor, or a log whose corrected
			// field disagrees with the calibration's reference.
			for _, w := range c.Check(s) {
				if len(logs) > 1 && strings.Contains(w, "another sensor") {
					w += fmt.Sprintf(" With logs of several sensors, give each its own: --calibration %s=CAL.json (%s's calibration is %s)", filepath.Base(path), path, calPaths[k])
				}
				sv.warnings = append(sv.warnings, w)
			}
			if err := c.Apply(s); err != nil {
				return nil, fmt.Errorf("%s: %w", path, err)
			}
		}
		if !o.axes.identity() && !o.coil.on() {
			if s.InFrame != ingest.FrameENU || s.Frame != ingest.FrameENU {
				return nil, usageErrorf("%s: --field-axes describes the field columns of an east, north, up log, and this log is read in another frame (its own frame line or metadata)", path)
			}
			applyFieldAxes(s, o.axes)
		}
		if o.mountYaw != 0 && !o.coil.on() {
			turnMount(s, o.mountYaw)
		}
		// A DC field log's orientation checks (sensorturn.go): the
		// rotations the attitude applies, for an offset turning with the
		// sensor; the field turning within the groups.
		checkTurns := !sv.ac && !o.coil.on()
		var rot [][3][3]float64
		if s.Frame == ingest.FrameSensor {
			if checkTurns {
				rot = attitudeTurns(s)
			}
			if err := calibrate.Tilt(s, nil); err != nil {
				return nil, err
			}
			if rot != nil {
				turns.add(path, s, rot)
			}
		}
		if checkTurns {
			swings.add(path, s)
		}
		if !o.coil.on() && !clipped[k] {
			field.add(s)
		}
		if s.Frame != ingest.FrameENU {
			enu = false
		}
		if !o.grouped() {
			if w := groupColumnWarning(path, groupColumnName(o), s); w != "" {
				// Worded with the file's own name of the column (a
				// "sensor" column read as the group column).
				name := baseGroupColumn(path, opts)
				w = groupColumnWarning(path, name, s)
				sv.alerts = append(sv.alerts, w)
				sv.groupWarned = true
				sv.groupLines = append(sv.groupLines, groupLines{warning: w, path: path, name: name, dirs: groupDirections(s)})
			}
		}
		if !o.despike {
			w, err := spikeWarning(path, s, sv.ac)
			if err != nil {
				return nil, fmt.Errorf("%s: %w", path, err)
			}
			if w != "" {
				sv.alerts = append(sv.alerts, w)
			}
		}
		if o.despike {
			// An AC log's readings are a waveform in time, not a
			// traverse's profile (DespikeSettings.AC).
			rep, err := calibrate.Despike(s, &calibrate.DespikeSettings{AC: sv.ac})
			if err != nil {
				return nil, fmt.Errorf("%s: %w", path, err)
			}
			if rep.Removed > 0 {
				sv.warnings = append(sv.warnings, fmt.Sprintf("%s: removed %d spikes of %d readings", path, rep.Removed, rep.Removed+rep.Kept))
			}
		}
		var rep *calibrate.BaseReport
		if base != nil {
			hold := 0.0 // the default: five base sample intervals, 60 to 300 s
			if o.baseHoldSet {
				hold = math.Max(o.baseHold, 1e-9) // 0: none at all
			}
			// --base-hold S sets the limit on gaps in the base log too,
			// above or below the default (the same as the hold's); 0
			// allows no reading missing. Readings left out as spikes are
			// no gap.
			var err error
			rep, err = calibrate.BaseCorrect(s, base, &calibrate.BaseSettings{MaxHold: hold, MaxGap: hold, LeftOut: baseLeftOut})
			var apart *calibrate.BaseNoOverlapError
			if err != nil {
				if h := zoneShiftHint(base, s); h != "" && strings.Contains(err.Error(), "does not") {
					err = fmt.Errorf("%w; %s", err, h)
				}
			}
			if errors.As(err, &apart) && len(logs) > 1 {
				// A base record of one day beside logs of several: the
				// logs it covers are corrected, the others left as read
				// and named (baseUncovered), and the run is refused only
				// when it covers none (found in review: a two-day merge
				// with one day's base was refused whole).
				baseApart = append(baseApart, path)
				baseApartErr = append(baseApartErr, err)
				err = nil
				rep = nil
			}
			if err != nil {
				if errors.As(err, &apart) {
					err = fmt.Errorf("%w; %s", err, baseApartHint)
				}
				if len(baseLeftOut) > 0 {
					err = fmt.Errorf("%w (%s of the base log were left out as spikes, see the warning below; they are readings, not gaps)", err, plural(len(baseLeftOut), "reading"))
				}
				return nil, err
			}
		}
		if base != nil && rep != nil {
			baseNotes = append(baseNotes, baseSummary(path, rep))
			if w := baseInConductorField(o.base, path, rep); w != "" && !baseFieldSaid {
				baseFieldSaid = true
				sv.alerts = append(sv.alerts, w)
			}
			if sv.baseRover == nil {
				lo, hi := finiteSpan(s.Time)
				sv.baseRover = &ingest.Samples{Time: []float64{lo, hi}, NaiveTime: s.NaiveTime, TimeSaidUTC: s.TimeSaidUTC, Source: s.Source, Meta: s.Meta}
			}
			if w := noteBaseGaps(sv, o, s, rep); w != "" {
				sv.alerts = append(sv.alerts, path+": "+w)
			}
			for _, w := range rep.Warnings {
				// The base record's frame is the same for every
				// survey log: said once, with the first.
				if w == baseFrameNote {
					if baseFrameSaid {
						continue
					}
					baseFrameSaid = true
				}
				sv.warnings = append(sv.warnings, path+": "+w)
			}
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		doc.Inputs = append(doc.Inputs, fileInput("survey", path, s.Len()))
		if !sv.ac && !o.coil.on() {
			// A current interrupted on and off (dcinterrupt.go).
			var w, note string
			var err error
			if s, w, note, err = interruptedReadings(o, path, s); err != nil {
				return nil, err
			}
			if w != "" {
				sv.alerts = append(sv.alerts, w)
				if sv.interrupted == nil {
					sv.interrupted = map[string]bool{}
				}
				sv.interrupted[path] = true
			}
			if note != "" {
				sv.intNotes = append(sv.intNotes, note)
			}
		}
		if !sv.ac {
			// An AC log located without --freq (dcalternating.go), and
			// the mains averaged out over whole cycles (dcmains.go).
			var note, w string
			s, note, w = dcMains(o, path, s)
			if note != "" {
				// What was done, right when the mains were found: a
				// note, not a warning (found in review), unless no
				// fit finds a conductor after it (mainsNotesOrWarnings);
				// what blocks leave of another line is the warning w.
				sv.mainsNotes = append(sv.mainsNotes, note)
			}
			if w != "" {
				sv.alerts = append(sv.alerts, w)
			}
		}
		if o.windowed() {
			if note := setAlongWindows(o, s, len(logs)); note != "" {
				sv.alongNotes = append(sv.alongNotes, note)
			}
		}
		// Demodulation takes no context either.
		if _, err := await(ctx, func() (struct{}, error) { return struct{}{}, addReadings(o, sv, index, s) }); err != nil {
			return nil, err
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
	}
	if len(baseApart) > 0 {
		w, err := baseUncovered(o.base, logs, baseApart, baseApartErr)
		if err != nil {
			return nil, err
		}
		sv.alerts = append(sv.alerts, w)
		baseNotes = append(baseNotes, "not corrected (outside the base record): "+strings.Join(baseApart, ", "))
	}
	if base != nil {
		doc.BaseStation = &report.Correction{File: o.base, Summary: strings.Join(baseNotes, "; ")}
	}
	// The sensor's orientation: an offset turning with it, a field
	// turning within the groups, and the survey's field against the base
	// record's absolute one (direction and magnitude).
	if w := turns.warning(cal); w != "" {
		sv.alerts = append(sv.alerts, w)
	}
	sv.swings = &swings
	// The survey's field against the base record's is compared once the
	// groups are fitted (baseCheck.warnings): a DC survey's level is the
	// fits' own backgrounds, which hold no conductor's field.
	sv.baseCheck = &baseCheck{cal: cal, calPath: calPath, enu: enu}
	if !o.coil.on() {
		sv.baseCheck.base, sv.baseCheck.raw = base, &field
		if org := doc.Frame.Origin; org != nil {
			sv.baseCheck.origin = &[2]float64{org.Lat, org.Lon}
		}
	}
	// An observatory's record from far away does not hold the survey's
	// own variation (basefield.go baseFarWarning).
	if base != nil {
		if org := doc.Frame.Origin; org != nil {
			if w := baseFarWarning(o.base, base, &[2]float64{org.Lat, org.Lon}); w != "" {
				sv.alerts = append(sv.alerts, w)
			}
		}
	}
	// The groups in time order, not the order of the files given or of
	// the rows in a log (loggroups.go).
	if w := orderGroupsByTime(sv, logs); w != "" {
		sv.warnings = append(sv.warnings, w)
	}
	if o.coil.on() {
		doc.Calibration = o.coil.correction(doc.Signal.FrequencyHz)
	}
	if len(sv.groups) == 0 {
		return nil, errors.New("no readings to fit")
	}
	if doc.Title == "" {
		doc.Title = o.title
	}
	if doc.Title == "" {
		if doc.Site != "" {
			doc.Title = doc.Site
		} else {
			doc.Title = strings.Join(logs, ", ")
		}
	}
	return sv, nil
}

// readBaseFile reads one base log, o.base, checks it, records it among
// the document's inputs and puts it in time order with its exactly
// repeated rows left out; its warnings go to sv.
func readBaseFile(ctx context.Context, o *locateOptions, logs []string, sv *survey) (*ingest.Samples, error) {
	doc := sv.doc
	var err error
	var base *ingest.Samples
	bopts := o.baseOpts
	if bopts == nil {
		bopts = o.read.baseOptions(nil)
	}
	if bopts, err = baseUnitOptions(o, logs, bopts); err != nil {
		return nil, err
	}
	if base, err = readSamples(ctx, o.base, bopts...); err != nil {
		return nil, baseReadError(err)
	}
	if err := checkBaseLog(o, base); err != nil {
		return nil, err
	}
	if w, err := checkBaseGroups(o.base, bopts, base); err != nil {
		return nil, err
	} else if w != "" {
		sv.alerts = append(sv.alerts, w)
	}
	doc.Inputs = append(doc.Inputs, fileInput("base", o.base, base.Len()))
	for _, w := range base.Warnings {
		sv.warnings = append(sv.warnings, baseWording(cliWording(w)))
	}
	// The base log's field unit is checked as a survey log's is: a
	// base in uT read as nT made a correction 1000 times too small,
	// without a word.
	w, err := checkBaseUnits(ctx, o, base, bopts)
	if err != nil {
		return nil, err
	}
	if w != "" {
		sv.warnings = append(sv.warnings, w)
	}
	// The base correction interpolates in time: a base log read with
	// --time-order any or per-group is put in time order first.
	back, orig := sortByTime(base)
	if back > 0 {
		sv.warnings = append(sv.warnings, fmt.Sprintf("%s: time goes backwards at %s (--time-order %s): the base log was put in time order for the base correction", o.base, plural(back, "row"), o.read.timeOrder))
	}
	// A row repeated exactly is left out; a time repeated with other
	// values is refused, naming its file lines.
	if w, err := dropRepeatedBaseRows(o.base, base, orig); err != nil {
		return nil, err
	} else if w != "" {
		sv.warnings = append(sv.warnings, w)
	}
	return base, nil
}

// baseUnitOptions checks the base log against the survey logs and adds
// --base-unit to the base log's read options. A base log that is one of
// the survey logs is refused: it made every departure the survey's own
// anomaly, and the run reported "no anomaly".
func baseUnitOptions(o *locateOptions, logs []string, bopts []ingest.Option) ([]ingest.Option, error) {
	var baseSum string
	for _, path := range logs {
		if sameFile(o.base, path) {
			return nil, usageErrorf("--base %s is the survey log %s itself: the base log is the record of a second magnetometer left in one place during the survey", o.base, path)
		}
		// A copy of a survey log (the same bytes under another name):
		// the file sizes first, the SHA-256 (as results.json records the
		// inputs) only when they agree.
		bi, err1 := os.Stat(o.base)
		li, err2 := os.Stat(path)
		if err1 != nil || err2 != nil || bi.Size() != li.Size() {
			continue
		}
		if baseSum == "" {
			baseSum = fileInput("base", o.base, 0).SHA256
		}
		if sum := fileInput("survey", path, 0).SHA256; baseSum != "" && sum == baseSum {
			return nil, usageErrorf("--base %s has the same content as the survey log %s (SHA-256 %s): it is a copy of it, and would take the survey's own anomaly away as the diurnal variation; the base log is the record of a second magnetometer left in one place during the survey", o.base, path, sum[:12])
		}
	}
	if len(o.baseColumns) > 0 {
		if err := checkOption("--base-column", "column ", ingest.WithColumns(o.baseColumns...)); err != nil {
			return nil, err
		}
		bopts = append(append([]ingest.Option(nil), bopts...), ingest.WithColumns(o.baseColumns...))
	}
	if o.baseFrame != "" {
		f, err := ingest.ParseFrame(o.baseFrame)
		if err != nil || f == ingest.FrameSensor {
			return nil, usageErrorf("--base-frame %q: want enu or ned (a base log gives the field in geographic axes; one in the sensor's own axes holds nothing to turn it with)", o.baseFrame)
		}
		bopts = append(append([]ingest.Option(nil), bopts...), ingest.WithFrame(f))
	}
	if o.baseDates != "" {
		d, err := ingest.ParseDateOrder(o.baseDates)
		if err != nil {
			return nil, usageErrorf("--base-date-order %q: want dmy (21/04/2026), mdy (4/21/2026) or ymd (2026/04/21)", o.baseDates)
		}
		bopts = append(append([]ingest.Option(nil), bopts...), ingest.WithDateOrder(d))
	}
	if o.baseZone != "" {
		loc, err := ingest.LoadTimeZone(o.baseZone)
		if err != nil {
			return nil, usageErrorf("--base-time-zone %s", strings.TrimPrefix(err.Error(), "ingest: time zone "))
		}
		bopts = append(append([]ingest.Option(nil), bopts...), ingest.WithTimeZone(loc))
	}
	if o.baseOffset != "" {
		off, err := ingest.ParseTimeOffset(o.baseOffset)
		if err != nil {
			return nil, usageErrorf("--base-time-offset %s", strings.TrimPrefix(err.Error(), "ingest: time offset "))
		}
		bopts = append(append([]ingest.Option(nil), bopts...), ingest.WithTimeOffset(off))
	}
	if len(o.baseUnits) == 0 {
		return bopts, nil
	}
	if p, ok := voltageUnit(o.baseUnits); ok {
		return nil, usageErrorf("--base-unit %s is a voltage: a base log holds a magnetometer's field", p)
	}
	if err := checkOption("--base-unit", "unit ", ingest.WithUnits(o.baseUnits...)); err != nil {
		return nil, err
	}
	return append(append([]ingest.Option(nil), bopts...), ingest.WithUnits(o.baseUnits...)), nil
}

// checkBaseUnits checks the base log's field magnitude as a survey log's
// is checked (checkFieldUnits: a warning outside the Earth's band, a
// refusal beyond what any magnetometer reads), with --base-unit for
// --unit. A base log is a record of the full field at a station: when
// its |B| is as steady as the Earth's field (the 10th to 90th percentile
// within 5% of the median; the largest storms of the space age moved it
// by about 600 nT, near 1%: Dst -589 nT on 14 March 1989, World Data
// Center for Geomagnetism, Kyoto) but its median is outside the Earth's
// band and a field unit would bring it in, the unit is wrong, and the
// correction would be scaled by the unit's factor: it is refused unless
// --base-unit gives the unit. An IAGA-2002 file is in nT by its format
// and is not refused.
func checkBaseUnits(ctx context.Context, o *locateOptions, base *ingest.Samples, bopts []ingest.Option) (string, error) {
	given := false
	for _, u := range o.baseUnits {
		for _, p := range strings.Split(u, ",") {
			if k, _, _ := strings.Cut(p, "="); fieldAxis(k) >= 0 {
				given = true
			}
		}
	}
	reword := func(s string) string { return strings.ReplaceAll(s, "--unit ", "--base-unit ") }
	w, err := checkFieldUnits(ctx, o.base, base.Bx, base.By, base.Bz, bopts, given)
	if err != nil {
		if isInterrupt(err) {
			return "", err
		}
		return "", errors.New(reword(err.Error()))
	}
	w = reword(w)
	if given || base.Meta["elements"] != "" {
		return w, nil
	}
	m, rel, unit, factor, ok := steadyEarthUnit(base.Bx, base.By, base.Bz)
	if !ok {
		return w, nil
	}
	return "", fmt.Errorf("%s: the base log's median |B| is %.4g nT, outside %s, yet as steady as a record of the Earth's field (90%% of readings within %.2g%% of each other): its field columns are probably in %s, and read as nT they would make the base correction %s. Refused: give their unit with --base-unit bx=%s,by=%s,bz=%s (or --base-unit bx=nT,by=nT,bz=nT if nT is right)",
		o.base, m, earthBand, 100*rel, unit, unitFactorWords(factor), unit, unit, unit)
}

// despikeBase looks for spikes in the base log, in time order, and leaves
// them out (calibrate.DespikeBaseColumns), so that the base correction
// interpolates across them: a base spike was subtracted from every survey
// reading taken at its time, and --despike did not look at the base. The
// threshold is spikeSigmas robust standard deviations, the one of the
// survey's spike warning, or --despike's when it is given. It returns the
// warning naming the times left out.
func despikeBase(o *locateOptions, base *ingest.Samples) (string, []int, error) {
	k := spikeSigmas
	if o.despike {
		k = 5 // calibrate.Despike's default, which --despike uses
	}
	sp, err := calibrate.DespikeBaseColumns(base.Time, [3][]float64{base.Bx, base.By, base.Bz}, &calibrate.DespikeSettings{Threshold: float64(k)})
	if err != nil || sp == nil {
		return "", nil, err
	}
	return fmt.Sprintf("%s: %s of the base log depart from the running median of their neighbours by more than %d robust standard deviations, at %s: spikes at the base station, which would be subtracted from every survey reading taken then; they were left out and the base interpolated across them (they are readings, not a gap in the record)",
		o.base, plural(len(sp.Rows), "reading"), k, sp.Runs), sp.Rows, nil
}

// baseReadError words a read error of the base log: the survey logs'
// --column and --unit do not apply to it, --base-column and --base-unit
// do.
func baseReadError(err error) error {
	if isInterrupt(err) {
		return err
	}
	msg := err.Error()
	if !baseFlagHint.MatchString(msg) {
		return err
	}
	msg = baseWording(strings.TrimPrefix(msg, "ingest: "))
	return fmt.Errorf("%s (this is the base log, --base: --column, --unit, --time-offset and --time-zone apply to the survey logs only, and --date-order applies to the base log only when --base-date-order is not given)", msg)
}

// baseWording words a warning of the base log's reader: the survey logs'
// --column and --unit do not apply to it, --base-column and --base-unit
// do (a base log's times without a UTC offset were told to take
// "--unit time=UTC", which left the warning as it was).
func baseWording(w string) string {
	return baseFlagHint.ReplaceAllString(w, "${1}--base-$2$3")
}

// baseFlagHint matches the survey logs' --column, --unit, --date-order
// and --time-offset in advice.
var baseFlagHint = regexp.MustCompile(`(^|[^-a-z])--(column|unit|date-order|time-offset|time-zone)([ ,;)])`)

// zoneShiftHint says when the base record, moved by a whole number of
// half hours (up to 14 hours either way, the span of the world's time
// zones), would cover the rover log's time span: times written without a
// UTC offset in a time zone's local time and read as UTC; "" otherwise.
// The hint is about the log whose times can be local times so read (those
// written without an offset, Samples.NaiveTime): the base's, the survey's
// (a base of IAGA-2002, UTC by the format, or of times with their offset
// or in seconds since 1970, beside a survey logged in local time: found in
// review, the hint had told the user to put an offset into the
// observatory's times, with the zone's sign turned), or either when both
// can; when neither can, a clock set to a zone's time.
//
// No hint when the two logs overlap in part, when the survey runs past a
// day file's end at 00:00 UTC, or when
// shifts hours apart would all cover it: the record is then short of
// readings, not off by a zone. Found in review: a walk from 21:30 to
// 01:58 UTC given only the first day's file, 57% of it inside the record,
// was told its logger was on UTC+02:00, though any shift from 2 to about
// 20 h would have covered it.
func zoneShiftHint(base, rover *ingest.Samples) string {
	blo, bhi := finiteSpan(base.Time)
	rlo, rhi := finiteSpan(rover.Time)
	if !(bhi > blo) || !(rhi >= rlo) || rlo < 1e8 {
		return ""
	}
	if blo <= rhi && bhi >= rlo {
		return "" // in part inside the record: readings missing, not a zone
	}
	if dayFileEdge(base.Time, rhi) {
		return ""
	}
	var covering []int
	for _, m := range civilShifts() {
		sh := -60 * float64(m)
		if blo+sh <= rlo && bhi+sh >= rhi {
			covering = append(covering, m)
		}
	}
	if len(covering) == 0 {
		return ""
	}
	lo, hi := covering[0], covering[0]
	for _, m := range covering {
		lo, hi = min(lo, m), max(hi, m)
	}
	if hi-lo > zoneHintSpread {
		return "" // many offsets would do: none is told
	}
	for _, m := range covering {
		if h := zoneWords(base, rover, m, "would cover it"); h != "" {
			return h
		}
	}
	return ""
}

// zoneHintSpread is the widest spread, minutes, of the shifts that would
// all cover a survey for one of them to be named: the zones next to one
// another (an hour, or the part-hour zones between two whole hours).
const zoneHintSpread = 60

// finiteSpan returns the least and greatest finite value of t (+Inf, -Inf
// when none).
func finiteSpan(t []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range t {
		if finite(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	return lo, hi
}

// dayFileEdge reports whether the survey's span [rlo, rhi] runs past the
// end of the base record bt where that end is a day's end at 00:00 UTC
// (its last reading within dayEdgeSlack of it): a day file, whose next
// day holds the rest. (A survey before a day file's start is left to the
// spread of the shifts: a day file's 24 hours cover a survey before it
// at many; a file cut short, at one.)
func dayFileEdge(bt []float64, rhi float64) bool {
	_, bhi := finiteSpan(bt)
	const day = 86400
	next := math.Ceil(bhi/day) * day
	return rhi > bhi && next-bhi <= dayEdgeSlack
}

// dayEdgeSlack is how far, s, a base record's first or last reading may
// lie from 00:00 UTC for it to be a day file's edge: a minute file's last
// reading is at 23:59, an hourly file's at 23:00.
const dayEdgeSlack = 3600

// civilShifts returns the civil zones' offsets from UTC, minutes, with
// their opposites, the smallest first (a positive one before its
// opposite): the shifts of one log against the other that a time zone
// gives.
func civilShifts() []int {
	civil, has := civilZones()
	abs := func(m int) int {
		if m < 0 {
			return -m
		}
		return m
	}
	var shifts []int
	for _, m := range civil {
		shifts = append(shifts, m)
		if !has[-m] {
			shifts = append(shifts, -m)
		}
	}
	sort.SliceStable(shifts, func(i, j int) bool { return abs(shifts[i]) < abs(shifts[j]) })
	return shifts
}

// civilZones returns the civil zones' offsets from UTC, minutes, the
// smallest first (east before west), and the set of them: the whole hours
// from -12 to +14 and the zones a part of an hour off (from memory of the
// time-zone database: -09:30, -03:30, -02:30, +03:30, +04:30, +05:30,
// +05:45, +06:30, +08:45, +09:30, +10:30, +12:45, +13:45). A shift that
// no zone has is a clock set wrong, not a zone left out.
func civilZones() ([]int, map[int]bool) {
	civil := []int{-570, -210, -150, 210, 270, 330, 345, 390, 525, 570, 630, 765, 825}
	for h := -12; h <= 14; h++ {
		if h != 0 {
			civil = append(civil, 60*h)
		}
	}
	has := map[int]bool{}
	for _, m := range civil {
		has[m] = true
	}
	abs := func(m int) int {
		if m < 0 {
			return -m
		}
		return m
	}
	sort.Slice(civil, func(i, j int) bool {
		a, b := abs(civil[i]), abs(civil[j])
		return a < b || a == b && civil[i] > civil[j]
	})
	return civil, has
}

// zoneWords words the hint for a shift of m minutes of one log against
// the other (the base's times read m minutes late, its local times of
// zone UTC+m, or the survey's read -m minutes late, zone UTC-m): "the
// base record " + what + " if its times were ...", naming the log whose
// times can be the ones off; "" when neither can be in a zone that
// exists.
func zoneWords(base, rover *ingest.Samples, m int, what string) string {
	_, has := civilZones()
	zone := func(m int) string {
		zs := "+"
		if m < 0 {
			zs, m = "-", -m
		}
		return fmt.Sprintf("%s%02d:%02d", zs, m/60, m%60)
	}
	stamp := func(t float64) string { return time.Unix(int64(math.Floor(t)), 0).UTC().Format("2006-01-02T15:04:05") }
	// Why a log's times cannot be local times read as UTC.
	utcWhy := func(s *ingest.Samples) string {
		switch {
		case s.Meta["elements"] != "":
			return "an IAGA-2002 file's times are UTC by the format"
		case s.TimeSaidUTC:
			return "its time column says they are UTC"
		}
		return "they carry their UTC offset or are seconds since 1970, UTC either way"
	}
	roverName := "the survey log's"
	if rover.Source != "" {
		roverName = rover.Source + "'s"
	}
	// local words the hint for one log read m minutes late (its local
	// times of zone UTC+m read as UTC); t0 is its first time.
	local := func(who string, m int, t0 float64) string {
		// The survey logs take --time-offset, the base log
		// --base-time-offset.
		give := fmt.Sprintf(", or give it with --base-time-offset %s", zone(m))
		if who == roverName {
			give = fmt.Sprintf(", or give it with --time-offset %s", zone(m))
		}
		return fmt.Sprintf("are %s times the local times of a zone UTC%s written without their offset (and so read as UTC)? If so, write the offset into them (such as %s%s)%s", who, zone(m), stamp(t0), zone(m), give)
	}
	blo, _ := finiteSpan(base.Time)
	rlo, _ := finiteSpan(rover.Time)
	iaga := base.Meta["elements"] != ""
	sh := -60 * float64(m)
	// Which log's times can be the ones off: those written without an
	// offset, in a zone that exists.
	bl, rl := base.NaiveTime && has[m], rover.NaiveTime && has[-m]
	h := math.Abs(sh) / 3600
	bdir, rdir := "later", "earlier"
	if sh < 0 {
		bdir, rdir = "earlier", "later"
	}
	switch {
	case bl && rl:
		return fmt.Sprintf("the base record %s if its times were %g h %s, or the survey's %g h %s, a time zone's offset: both logs give times without a UTC offset, so either can be local times read as UTC: %s, or %s",
			what, h, bdir, h, rdir, local(roverName, -m, rlo), local("the base record's", m, blo))
	case bl:
		return fmt.Sprintf("the base record %s if its times were %g h %s, a time zone's offset: %s; the survey's times cannot be the ones off (%s)",
			what, h, bdir, local("the base record's", m, blo), utcWhy(rover))
	case rl:
		return fmt.Sprintf("the base record %s if the survey's times were %g h %s, a time zone's offset: %s; the base record's times cannot be the ones off (%s)",
			what, h, rdir, local(roverName, -m, rlo), utcWhy(base))
	case base.NaiveTime || rover.NaiveTime:
		// The log that can be local would be in no zone: a clock set
		// wrong, no hint.
		return ""
	}
	// Neither log's times can be local times read as UTC: a clock set to
	// a zone's time (a logger writing seconds since 1970 from a clock on
	// local time).
	var who string
	switch {
	case has[-m] && (iaga || !has[m]):
		who = fmt.Sprintf("the survey logger's, set to UTC%s", zone(-m))
	case !has[-m]:
		who = fmt.Sprintf("the base logger's, set to UTC%s", zone(m))
	default:
		who = fmt.Sprintf("the base logger's set to UTC%s, or the survey logger's to UTC%s", zone(m), zone(-m))
	}
	if iaga && !has[-m] {
		return ""
	}
	return fmt.Sprintf("the base record %s if the survey's times were %g h %s, a time zone's offset, but neither log's times can be local times read as UTC (the base record's: %s; the survey's: %s): is a clock set to a zone's time instead (%s)? If so, correct that log's times by the offset",
		what, h, rdir, utcWhy(base), utcWhy(rover), who)
}

// baseNoVerticalError refuses an IAGA-2002 base record that reports no
// vertical component (its third element NUL): the base correction takes
// the observatory's variation off all three of the survey's axes. A
// correction of the horizontal axes alone is not made: the vertical's
// variation (of the same order as the horizontal's at mid latitudes, the
// daily variation's Z tens of nT: from memory) would stay in bz, which
// the fits read as the currents' field along with the corrected bx and
// by, under a report saying the field was corrected.
func baseNoVerticalError(path, reported, elements string, vec []string) error {
	hdr := fmt.Sprintf("its column line's elements %s", elements)
	if reported != "" {
		hdr = fmt.Sprintf("its header's Reported %s", reported)
	}
	held := "no vector element"
	if len(vec) > 0 {
		held = strings.Join(vec, " and ") + " only"
	}
	return fmt.Errorf("base record %s reports no vertical component (%s: %s, no Z): the base correction takes the observatory's variation off all three axes of the survey's field and has nothing to take off bz; correcting bx and by alone would leave the vertical's variation in bz, which the fits read as the currents' field, so it is not done. Give the observatory's record for the same time that reports Z (its variation or adjusted data in XYZ, HDZ or HEZ), or locate without --base (no time variation is taken off)", path, hdr, held)
}

// baseIAGAMissing refuses an IAGA-2002 base record with fewer than two
// rows whose vector elements all hold a value (the rest 99999 or 88888,
// the format's missing values), naming the file's own columns. Before,
// the base correction said "fewer than two valid values in column bx", a
// column the file does not have.
func baseIAGAMissing(path string, base *ingest.Samples) error {
	n := 0
	for i := range base.Bx {
		if finite(base.Bx[i]) && finite(base.By[i]) && finite(base.Bz[i]) {
			n++
		}
	}
	if n >= 2 {
		return nil
	}
	vec := strings.Fields(ingest.IAGAVectorElements(base.Meta["elements"]))
	cols := make([]string, len(vec))
	for i, e := range vec {
		cols[i] = base.Meta["iaga_code"] + e
	}
	const need = "a base correction needs the field at two times at least, through the survey: give the observatory's record for the survey's days, or locate without --base"
	if n == len(base.Bx) {
		return fmt.Errorf("base record %s has %d data rows: %s", path, n, need)
	}
	return fmt.Errorf("base record %s: %d of its %d rows hold a value in every one of its columns %s (elements %s): the others hold 99999 or 88888, IAGA-2002's missing values; %s",
		path, n, len(base.Bx), strings.Join(cols, ", "), strings.Join(vec, ", "), need)
}

// nonEmpty returns s as a one-element list, or nil when it is empty.
func nonEmpty(s string) []string {
	if s == "" {
		return nil
	}
	return []string{s}
}

// checkBaseLog checks what was read as the base log: the base flags that
// do not apply to an IAGA-2002 file, an instrument-frame (UVW) record,
// and positions that move (a base station stands still).
func checkBaseLog(o *locateOptions, base *ingest.Samples) error {
	if base.Meta["elements"] != "" {
		for _, f := range []struct {
			name string
			v    []string
		}{{"--base-unit", o.baseUnits}, {"--base-column", o.baseColumns}, {"--base-frame", nonEmpty(o.baseFrame)}} {
			if len(f.v) > 0 {
				return usageErrorf("%s does not apply to %s: it is an IAGA-2002 file, whose format fixes its columns, their axes (its elements) and their unit (nT)", f.name, o.base)
			}
		}
	}
	if base.Frame != ingest.FrameENU {
		what := "in the sensor frame"
		if base.Meta["elements"] != "" {
			what = fmt.Sprintf("an IAGA-2002 record of elements %s, the instrument's own axes", base.Meta["elements"])
		}
		return fmt.Errorf("base record %s is %s, not east-north-up, and holds nothing to turn it with: a base log must give the field in geographic (or geomagnetic) axes; use the observatory's XYZ, HDZ or HEZ variation data for the same days instead", o.base, what)
	}
	if el := base.Meta["elements"]; el != "" {
		if vec := strings.Fields(ingest.IAGAVectorElements(el)); len(vec) < 3 {
			// A file of H and E alone (Reported HENULNUL): refused
			// before as "fewer than two valid values in column bz", a
			// column the file does not have (found in review).
			return baseNoVerticalError(o.base, base.Meta["reported"], el, vec)
		}
		if err := baseIAGAMissing(o.base, base); err != nil {
			return err
		}
	}
	for _, c := range []struct {
		name string
		v    []float64
	}{{"x", base.X}, {"y", base.Y}} {
		var v []float64
		for _, x := range c.v {
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				v = append(v, x)
			}
		}
		if len(v) < 2 {
			continue
		}
		sort.Float64s(v)
		// The 5th to 95th percentile, so that a glitch in a position
		// column does not refuse a base log.
		lo, hi := v[len(v)/20], v[len(v)-1-len(v)/20]
		if hi-lo > 1 {
			return fmt.Errorf("%s: the base log's positions move: %s runs from %.4g to %.4g m (5th to 95th percentile), more than 1 m: a base station stands still during the survey, so this is not a base log (a survey log given as --base?); give the log of the magnetometer left in one place", o.base, c.name, lo, hi)
		}
	}
	return nil
}

// dropRepeatedBaseRows leaves out the rows of base (in time order; orig
// gives each row's index in the file) that repeat the row before exactly
// and returns the warning saying so. A time repeated with other values is
// an error naming the file lines of both rows.
func dropRepeatedBaseRows(path string, base *ingest.Samples, orig []int) (string, error) {
	dups, err := calibrate.RepeatedBaseRows(path, base.Time, [3][]float64{base.Bx, base.By, base.Bz})
	var re *calibrate.BaseRepeatError
	if errors.As(err, &re) {
		where := fmt.Sprintf("data rows %d and %d (counting from 1)", orig[re.Row-1]+1, orig[re.Row]+1)
		lines := baseRowLines(path, []int{orig[re.Row-1], orig[re.Row]})
		at := path
		if lines != nil {
			at = fmt.Sprintf("%s:%d", path, lines[1])
			where = fmt.Sprintf("lines %d and %d", lines[0], lines[1])
		}
		return "", fmt.Errorf("%s: the base log repeats time %s on %s with other values (%g, %g, %g nT, then %g, %g, %g nT): a base station reads one field at a time; remove the wrong row",
			at, fmtBaseTime(re.Time), where, re.Prev[0], re.Prev[1], re.Prev[2], re.This[0], re.This[1], re.This[2])
	}
	if err != nil || len(dups) == 0 {
		return "", err
	}
	first := fmt.Sprintf("data row %d (counting from 1)", orig[dups[0]]+1)
	if lines := baseRowLines(path, []int{orig[dups[0]]}); lines != nil {
		first = fmt.Sprintf("line %d", lines[0])
	}
	keep := make([]bool, base.Len())
	for i := range keep {
		keep[i] = true
	}
	for _, i := range dups {
		keep[i] = false
	}
	for _, c := range []*[]float64{&base.Time, &base.Bx, &base.By, &base.Bz, &base.X, &base.Y, &base.Z, &base.F, &base.Temp} {
		if *c == nil {
			continue
		}
		v := (*c)[:0]
		for i, x := range *c {
			if keep[i] {
				v = append(v, x)
			}
		}
		*c = v
	}
	if base.Group != nil {
		v := base.Group[:0]
		for i, x := range base.Group {
			if keep[i] {
				v = append(v, x)
			}
		}
		base.Group = v
	}
	return fmt.Sprintf("%s: %s of the base log %s the row before exactly (the same time and values), the first on %s: the %s left out", path, plural(len(dups), "row"), map[bool]string{true: "repeats", false: "repeat"}[len(dups) == 1], first, map[bool]string{true: "repeat was", false: "repeats were"}[len(dups) == 1]), nil
}

// fmtBaseTime shows a Unix time as UTC to the millisecond, other times in
// seconds.
func fmtBaseTime(t float64) string {
	if t > 1e8 && t < 1e11 {
		return time.UnixMilli(int64(math.Round(t * 1e3))).UTC().Format("2006-01-02T15:04:05.000Z")
	}
	return fmt.Sprintf("%g s", t)
}

// baseRowLines returns the file lines (counting from 1) of data rows
// (0-based, in file order) of a text base log, or nil for a binary one
// (Arrow, Parquet) or when the rows cannot be found. A CSV file's data
// rows follow its header line, past blank and "#" comment lines (how
// ingest reads a base log, which takes no --header or --comment); an
// IAGA-2002 file's are the lines not ending in "|".
func baseRowLines(path string, rows []int) []int {
	return dataRowLines(path, rows, "#", true)
}

// dataRowLines is baseRowLines for a CSV file read with the comment
// prefix comment ("" for none) and, when headerLine, a header line (not
// when the names are given with --header). A line of delimiters and
// blanks alone is blank, as ingest reads it; a line with an unpaired
// quote (a quoted field may hold a newline) gives nil, as the lines can
// then not be counted as ingest counts them.
func dataRowLines(path string, rows []int, comment string, headerLine bool) []int {
	f, err := os.Open(path)
	if err != nil {
		return nil
	}
	defer f.Close()
	br := bufio.NewReader(f)
	head, _ := br.Peek(512)
	format := ingest.DetectFormat(head)
	if format != ingest.FormatCSV && format != ingest.FormatIAGA {
		return nil
	}
	want := map[int]int{}
	for _, r := range rows {
		want[r] = 0
	}
	sc := bufio.NewScanner(br)
	sc.Buffer(make([]byte, 0, 1<<16), 1<<24)
	line, row, header := 0, -1, format == ingest.FormatIAGA || !headerLine
	found := 0
	for sc.Scan() && found < len(want) {
		line++
		raw := sc.Text()
		if line == 1 {
			raw = strings.TrimPrefix(raw, "\xef\xbb\xbf") // UTF-8 byte order mark
			if r := strings.TrimRight(raw, "\r"); format == ingest.FormatCSV && len(r) == 5 && strings.EqualFold(r[:4], "sep=") {
				continue // a spreadsheet's "sep=;" line
			}
		}
		t := strings.TrimSpace(raw)
		if t == "" {
			continue
		}
		if format == ingest.FormatIAGA {
			if strings.HasSuffix(t, "|") {
				continue
			}
		} else {
			if comment != "" && strings.HasPrefix(t, comment) {
				continue
			}
			if strings.Count(t, `"`)%2 != 0 {
				return nil
			}
			if strings.Trim(t, ",;\t |") == "" {
				continue
			}
			if !header {
				header = true
				continue
			}
		}
		row++
		if _, ok := want[row]; ok {
			want[row] = line
			found++
		}
	}
	if found < len(want) {
		return nil
	}
	out := make([]int, len(rows))
	for i, r := range rows {
		out[i] = want[r]
	}
	return out
}

// nedToENUCalibration returns c turned from a sensor whose x, y, z axes
// are the north, east, down of the log to the east, north, up that ingest
// turns such a log to: with P the turn (x and y swapped, z negated, its
// own inverse), the offset P o and the matrix P M P. Applied to the turned
// readings P r, it gives P M (r - o), the calibration applied in the
// sensor's own axes and then turned.
func nedToENUCalibration(c *calibrate.Calibration) *calibrate.Calibration {
	t := *c
	perm, sign := [3]int{1, 0, 2}, [3]float64{1, 1, -1}
	for i := range 3 {
		t.Offset[i] = sign[i] * c.Offset[perm[i]]
		for j := range 3 {
			t.Matrix[i][j] = sign[i] * sign[j] * c.Matrix[perm[i]][perm[j]]
		}
	}
	if c.OffsetSigma != nil {
		var sg [3]float64
		for i := range 3 {
			sg[i] = c.OffsetSigma[perm[i]]
		}
		t.OffsetSigma = &sg
	}
	return &t
}

// addReadings demodulates s when asked and adds its readings to their
// groups (in order of first appearance).
func addReadings(o *locateOptions, sv *survey, index map[string]*group, s *ingest.Samples) error {
	get := func(key string) *group {
		if !o.grouped() {
			key = ""
		}
		g := index[key]
		if g == nil {
			g = &group{key: key, from: s.Source, memo: &groupMemo{}}
			index[key] = g
			sv.groups = append(sv.groups, g)
		}
		return g
	}
	// With --group-by, readings with an empty group belong to no group:
	// fitted as one more "group" they made a false conductor at chainage
	// 0 and shifted the route. They are left out, and counted.
	ungrouped := 0
	defer func() {
		if ungrouped > 0 {
			sv.warnings = append(sv.warnings, fmt.Sprintf("%s: %d %s with an empty %s left out (no group to fit them in)",
				s.Source, ungrouped, map[bool]string{true: "AC windows", false: "readings"}[sv.ac], map[bool]string{true: "position", false: o.groupBy}[o.windowed()]))
		}
	}()
	// The log's own position sigmas (DC): NaN where it has no column.
	own := o.colPlan > 0 && (s.SigmaPlan != nil || s.SigmaUp != nil)
	at := func(v []float64, i int) float64 {
		if v == nil {
			return math.NaN()
		}
		return v[i]
	}
	if !sv.ac {
		for i := range s.Len() {
			key := ""
			if s.Group != nil {
				key = s.Group[i]
			}
			if o.grouped() && key == "" {
				ungrouped++
				continue
			}
			g := get(key)
			if own {
				for len(g.psig) < len(g.points) {
					g.psig = append(g.psig, [2]float64{math.NaN(), math.NaN()})
				}
				g.psig = append(g.psig, [2]float64{at(s.SigmaPlan, i) * o.colPlan, at(s.SigmaUp, i) * o.colUp})
			}
			g.points = append(g.points, [3]float64{s.X[i], s.Y[i], s.Z[i]})
			g.fields = append(g.fields, [3]float64{s.Bx[i], s.By[i], s.Bz[i]})
			g.stamps = append(g.stamps, s.Time[i])
		}
		return nil
	}
	if own {
		sv.warnings = append(sv.warnings, s.Source+": its position sigma columns are not used for AC windows (DC readings only): state the positions' uncertainty with --position-sigma")
	}
	// Stamps quantised coarser than the sampling (a steady 800 Hz written
	// to the millisecond) are rebuilt on the sampling they fit, here so
	// that the rate and the checks see it too; stamps that only look
	// quantised are warned about by the demodulation.
	if rs, w := calibrate.RetimeSamples(s, o.freq); rs != s {
		s = rs
		sv.warnings = append(sv.warnings, s.Source+": "+w)
	} else if w == "" {
		// Stamps scattered about a steady clock (jitterphase.go).
		stampJitter(o, sv, s)
	}
	res, _, warns, hints, err := demodulateACLeftOut(o, s, sv.clipGaps[s.Source]) // acchecks.go
	if err != nil {
		return noWindowAdvice(err, o, s)
	}
	if w, why := (demodPlan{mains: o.mains, fs: logRate(s)}).strongLine(s, res); w != "" {
		sv.warnings = append(sv.warnings, s.Source+": "+w)
		if why != "" {
			if sv.leaky == nil {
				sv.leaky = map[string]string{}
			}
			sv.leaky[s.Source] = why
		}
	}
	if hints.unchecked {
		sv.unchecked = append(sv.unchecked, uncheckedLog{source: s.Source, lines: hints.lines, atFreq: hints.atFreq})
	}
	if hints.loose {
		sv.looseLogs = append(sv.looseLogs, looseLog{source: s.Source, hints: hints})
	}
	for _, w := range warns {
		sv.warnings = append(sv.warnings, s.Source+": "+w)
	}
	if len(res.Windows) == 0 {
		return fmt.Errorf("%s: no complete demodulation window: the log (or each group) is shorter than the window", s.Source)
	}
	if o.coil.on() {
		// The windows hold the coils' voltages: field from here on, each
		// window converted at its own frequency.
		if err := o.coil.convert(s.Source, res.Windows); err != nil {
			return err
		}
		w, err := o.coil.fieldCheck(s.Source, res.Windows)
		if err != nil {
			return err
		}
		if w != "" {
			sv.alerts = append(sv.alerts, w)
		}
	}
	if sv.doc.Signal.WindowS == 0 {
		// The window fitted: a whole number of samples (res.Window).
		sv.doc.Signal = report.Signal{Mode: report.SignalAC, FrequencyHz: res.Freq, WindowS: res.Window, NuisanceHz: res.Nuisance}
	}
	for _, w := range res.Windows {
		if o.grouped() && w.Group == "" {
			ungrouped++
			continue
		}
		g := get(w.Group)
		g.points = append(g.points, w.Pos)
		g.phasors = append(g.phasors, w.B)
		g.half = append(g.half, w.Travel)
		g.times = append(g.times, w.Time)
		sv.windowN = append(sv.windowN, float64(w.N))
		g.windowN = append(g.windowN, float64(w.N))
		for _, v := range w.Sigma {
			if v > 0 {
				sv.windowSigma = append(sv.windowSigma, v)
				g.wsigma = append(g.wsigma, v)
			}
		}
		g.hint = hints.of(w.Group)
		g.estimated = res.Freq != o.freq
		if g.estimated {
			g.estSigma = hints.estSigma
		}
		g.loose, g.rampBound = hints.loose, hints.bound
		g.looseLog = s.Source
		g.travel = append(g.travel, 2*math.Sqrt(w.Travel[0]*w.Travel[0]+w.Travel[1]*w.Travel[1]+w.Travel[2]*w.Travel[2]))
	}
	return nil
}

// noWindowAdvice adds to a refusal for want of one whole demodulation
// window (calibrate.NoWindowError) what the user can do: repair the time
// column when breaks in it cut the log short, or give a window that fits
// in the longest run, saying when a window that short cannot fit a mains
// line beside the signal apart (no window then fits both).
func noWindowAdvice(err error, o *locateOptions, s *ingest.Samples) error {
	var nw *calibrate.NoWindowError
	if !errors.As(err, &nw) {
		return err
	}
	var do []string
	b := nw.Breaks
	switch {
	case nw.Quantum > 0:
		// Times written too coarsely: their repeats are rows of their own.
		do = append(do, fmt.Sprintf("write the times with more digits than their %.4g s (the repeated times are readings of their own: keep those rows)", nw.Quantum))
	case b.Repeats+b.Backwards+b.NotANumber > 0:
		do = append(do, "give every row its own time, increasing (remove repeated rows; \"undercurrent inspect\" counts repeated times)")
	}
	if b.Pauses > 0 {
		do = append(do, "log without pauses")
	}
	if cycles := math.Floor(nw.LongestS*o.freq + 1e-9); o.freq > 0 && cycles >= 3 {
		do = append(do, fmt.Sprintf("give a window that fits in the longest run, --window %.4g or shorter (%.0f cycles of %g Hz)", cycles/o.freq, cycles, o.freq)+shortClash(o, s, cycles/o.freq))
	}
	if len(do) == 0 {
		return err
	}
	return fmt.Errorf("%w: %s", err, strings.Join(do, ", or "))
}

// travelBiasLimit is the relative error of the modelled path average of a
// window, above which locate warns.
const travelBiasLimit = 1e-3

// travelWarning says when AC windows are so long that even the modelled
// path average may be off. Each window's phasor is the mean of the field
// along the path walked in it (about L^2/(12 h^2) below the field at its
// centre near the peak of a line at distance h, for a travel L), and the
// fit models that mean (inverse.Problem.Travel) by three-point
// Gauss-Legendre quadrature, whose relative error over a line is about
//
//	3.6e-4 (L/h)^6
//
// (Abramowitz & Stegun 25.4.30; see the inverse package documentation), negligible until
// the travel approaches the distance. The model also assumes a straight,
// steady walk within each window. It takes each group's median travel per
// window and the distance from the sensors' mean height to its strongest
// conductor, and returns "" when no group's remainder exceeds
// travelBiasLimit.
func travelWarning(sv *survey) string {
	worst, worstKey := 0.0, ""
	var keys []string
	var travel, dist float64
	for _, g := range sv.groups {
		if g.res == nil || len(g.res.Sources) == 0 || len(g.travel) == 0 || report.NoCurrent(&g.res.Sources[0], true) {
			continue // no conductor found: no distance to judge the travel by
		}
		var zm float64
		for _, p := range g.points {
			zm += p[2]
		}
		zm /= float64(len(g.points))
		h := zm - g.res.Sources[0].Point[2]
		if h <= 0 {
			continue
		}
		l := medianOf(g.travel)
		b := travelRemainder(l / h)
		if b > travelBiasLimit {
			keys = append(keys, g.key)
			if b > worst {
				worst, worstKey, travel, dist = b, g.key, l, h
			}
		}
	}
	if worst == 0 {
		return ""
	}
	where := "the fit"
	if worstKey != "" {
		where = worstKey
	}
	n := len(keys)
	if n > 8 {
		keys = append(keys[:8], fmt.Sprintf("and %d more", n-8))
	}
	return fmt.Sprintf("AC windows: the sensor moved about %.2f m during each %.3g s window, at %s %.2f times its distance to the conductor (%.2f m); the fit models each window as the average of the field along a straight path, but with so long a path that model is only good to about %.2g%% near the peak; %d group(s) over %.1f%% (%s). For a cleaner fit use shorter windows (--window, at least three cycles) or walk more slowly",
		travel, sv.doc.Signal.WindowS, where, travel/dist, dist, 100*worst, n, 100*travelBiasLimit, strings.Join(keys, ", "))
}

// travelRemainder is the relative error of the three-point Gauss-Legendre
// path average near the peak of a line, for a travel of r times the
// distance: 720 (r/2)^6 / 31500 (the inverse package documentation).
func travelRemainder(r float64) float64 {
	h := r / 2
	return 720 * h * h * h * h * h * h / 31500
}

// medianOf returns the median of v (0 when empty) without modifying it.
func medianOf(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// fitSettings are the inverse settings of the options.
func (o *locateOptions) fitSettings() *inverse.Settings {
	set := &inverse.Settings{Count: o.nCount, MaxCount: o.maxCount, Robust: o.robust, PositionSigmaPlan: o.posPlan, PositionSigmaUp: o.posUp}
	if o.hasRefZ {
		z := o.referenceZ
		set.ReferenceZ = &z
	}
	return set
}

// fitGroups fits every group, a few at a time.
func fitGroups(ctx context.Context, o *locateOptions, sv *survey, progress io.Writer) error {
	set := o.fitSettings()
	workers := o.workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, len(sv.groups))
	var bar *progressbar.ProgressBar
	if progress != nil && len(sv.groups) > 1 {
		bar = progressbar.NewOptions(len(sv.groups),
			progressbar.OptionSetWriter(progress),
			progressbar.OptionSetDescription("fitting groups"),
			progressbar.OptionShowCount(),
			progressbar.OptionClearOnFinish(),
			progressbar.OptionThrottle(100*time.Millisecond))
	}
	jobs := make(chan *group)
	var wg sync.WaitGroup
	var mu sync.Mutex
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for g := range jobs {
				noise := sv.groupNoise(g, o.noise)
				g.res, g.err = inverse.FitLines(g.problem(sv.ac, noise), set)
				if !sv.ac && !o.windowed() {
					chooseAlong(g, set, noise)
				}
				if sv.ac && !o.coil.on() {
					fitRamp(g, set, noise)
				}
				if bar != nil {
					mu.Lock()
					bar.Add(1)
					mu.Unlock()
				}
			}
		}()
	}
	var err error
feed:
	for _, g := range sv.groups {
		select {
		case jobs <- g:
		case <-ctx.Done():
			err = ctx.Err()
			break feed
		}
	}
	close(jobs)
	wg.Wait()
	if bar != nil {
		bar.Finish()
	}
	if err == nil {
		// A group whose fit stopped in a worse local minimum than its
		// neighbours' is fitted again from their lines (neighbourseed.go).
		refitFromNeighbours(sv, set, func(g *group) float64 { return sv.groupNoise(g, o.noise) })
		// A line above the sensors is a far line that reaches every
		// traverse alike too: the line-above search runs first, on the
		// uniform-background fits, and the along term is weighed only
		// where it finds nothing (farside.go).
		if o.lineAbove && lineAboveFirst(o, sv) {
			dropAlong(sv.groups)
		} else {
			decideAlong(sv.groups)
		}
		guardTimeRamps(sv, set, o.noise)
		dropMisfitRamps(sv.groups)
		dropLoneRamps(sv.groups)
		dropWalkRamps(sv.groups)
		followDrift(sv, set, func(g *group) float64 { return sv.groupNoise(g, o.noise) }, workers)
		if len(sv.drifts) > 0 {
			dropMisfitRamps(sv.groups)
		}
		for _, g := range sv.groups {
			looseTurnBound(g)
		}
		// A constant unlogged tilt over a strong conductor (constanttilt.go).
		mendConstantTilt(sv, set, func(g *group) float64 { return sv.groupNoise(g, o.noise) })
		widenForBaseNoise(sv, o.workers)
		mendStampJitter(sv)
	}
	return err
}

// buildDocument turns the fits into the result document; report.Build
// runs the along-route analysis.
func buildDocument(ctx context.Context, o *locateOptions, sv *survey) (*report.Document, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	head := *sv.doc
	alerts := append([]string(nil), sv.alerts...)
	for _, gl := range sv.groupLines {
		if w := alongGroupsWarning(sv, gl); w != "" {
			for i := range alerts {
				if alerts[i] == gl.warning {
					alerts[i] = w
				}
			}
		}
	}
	if !o.grouped() && !sv.groupWarned {
		if w := spanWarning(sv); w != "" {
			alerts = append(alerts, w+groupColumnHint(o, sv))
		}
	}
	// Groups that are tracks along the walk, each blind to a conductor
	// along it (surveychecks.go).
	if w := alongTracksWarning(o, sv, sv.groupCol); w != "" {
		alerts = append(alerts, w)
	}
	// Windows cut by the run itself are no names a user gave: their
	// traverses side by side are no mislabel.
	if w := splitGroupsWarning(sv); w != "" && !o.windowed() {
		alerts = append(alerts, w)
	}
	if sv.swings != nil {
		sv.swings.fitted(sv.groups)
		if w := sv.swings.warning(); w != "" {
			alerts = append(alerts, w)
		}
	}
	warnings := sv.warnings
	if sv.baseCheck != nil {
		a, w := sv.baseCheck.warnings(o, sv)
		alerts = append(alerts, a...)
		warnings = append(warnings[:len(warnings):len(warnings)], w...)
	}
	head.Warnings = append(head.Warnings, leadWarnings(alerts, warnings)...)
	if w := travelWarning(sv); w != "" {
		head.Warnings = append(head.Warnings, w)
	}
	if w := tiltWarning(sv); w != "" {
		head.Warnings = append(head.Warnings, w)
	}
	if w := driftWarning(o, sv); w != "" {
		head.Warnings = append(head.Warnings, w)
	} else if w := curvedDriftWarning(o, sv); w != "" {
		head.Warnings = append(head.Warnings, w)
	}
	w := wanderWarning(sv)
	if d := driftFollowedWarning(sv); d != "" {
		w = d
	}
	if w != "" {
		// The fits told the frequency's offset from the walk's: the
		// warning that a log walked one way could not is moot.
		kept := head.Warnings[:0:0]
		for _, x := range head.Warnings {
			if !strings.Contains(x, oneWayLead) {
				kept = append(kept, x)
			}
		}
		head.Warnings = append(kept, w)
		// Phases then compare within groups only (the summary's header).
		head.Signal.PhasesWithinGroups = true
	}
	for _, g := range sv.groups {
		// Demodulated at an estimate, whose own uncertainty turns the
		// phase from group to group (its warning says so).
		if g.estimated {
			head.Signal.PhasesWithinGroups = true
		}
	}
	for _, l := range sv.looseLogs {
		var gs []*group
		for _, g := range sv.groups {
			if g.looseLog == l.source {
				gs = append(gs, g)
			}
		}
		if w := looseFreqWarning(l.hints, gs); w != "" {
			head.Warnings = append(head.Warnings, l.source+": "+w)
		}
	}
	if w := alongWarning(sv.groups); w != "" {
		head.Warnings = append(head.Warnings, w)
	}
	if w := wrongFreqWarning(sv, o.freq); w != "" {
		head.Warnings = append(head.Warnings, w)
	}
	fits := make([]report.Fit, len(sv.groups))
	for i, g := range sv.groups {
		fits[i] = report.Fit{Key: g.key, Problem: g.problem(sv.ac, sv.groupNoise(g, o.noise)), Result: g.res, Err: g.err, Settings: o.fitSettings()}
		fits[i].Settings.Background = g.bg
		if g.ramp != nil {
			fits[i].PhaseRampHz, fits[i].PhaseRampSigmaHz = g.ramp.hz, g.ramp.sigma
		}
		fits[i].MeasuredNoise = g.measuredNoise(sv.ac)
		fits[i].Traverse = traverseOf(g.key, g.from, sv.rewalks, sv.reused)
		fits[i].Log = g.from
		fits[i].SensorHeight = sv.logHeights[g.from]
		if len(sv.logs) > 1 {
			fits[i].Walk = logLabel(g.from, sv.logs)
			if n := sv.rewalks[rewalkKey(g.from, g.key)]; n > 1 {
				fits[i].Walk += fmt.Sprintf(" (walk %d)", n)
			}
		}
		if t := g.firstTime(); calendarTime(t) {
			fits[i].Start = time.UnixMilli(int64(math.Round(t * 1e3))).UTC()
		}
	}
	// A field that turned rather than changed in the fits' residuals
	// (sensorturn.go): the shared-misfit warning names unlogged tilt.
	if !sv.ac {
		for i, g := range sv.groups {
			if i < len(fits) {
				fits[i].ComponentSwing, fits[i].MagnitudeSwing = residualSwing(g)
			}
		}
	}
	// Positions that scatter from reading to reading (posjitter.go): the
	// shared-misfit warning names them where they explain the misfit.
	if w := positionJitter(sv, fits, o.posPlan > 0 || o.posUp > 0 || ownSigmas(sv)); w != "" {
		head.Warnings = append(head.Warnings, w)
	}
	// report.Build takes no context; its along-route analysis (the dipole
	// refits above all) can take seconds, so an interrupt is not kept
	// waiting for it.
	doc, err := await(ctx, func() (*report.Document, error) {
		return report.Build(head, fits, &report.BuildSettings{
			SensorHeight: sv.datum,
			MinCover:     o.minCover,
			CoverCode:    o.coverCode,
			GroundSigma:  o.groundSigma,
			StepK:        o.stepK,
			MinStep:      minStepFraction(o.minStep),
			Noise:        sv.fitNoise(o.noise),
			// AC windows measure their own noise, and DC readings
			// theirs from fourth differences (dcnoise.go): the
			// yardstick for a misfit every group shares when --noise
			// is not given.
			MeasuredNoise: medianOf(sv.windowSigma) + dcMeasuredNoise(sv),
			KeptRails:     strings.Join(sv.keptRails, "; "),
			LineAbove:     o.lineAbove,
			LineAboveWhy:  o.lineAbove && o.lineAboveSet,
			Progress:      o.buildProgress,
		})
	})
	if err != nil {
		return nil, err
	}
	if o.lineAbove && o.lineAboveSet && sv.aboveWhy != "" && len(doc.LinesAbove) == 0 && !saysLineAboveWhy(doc.Warnings) {
		doc.Warnings = append(doc.Warnings, sv.aboveWhy)
	}
	// The columns read as position sigmas (possigcols.go).
	nameSigmaColumns(doc, sv)
	// The group the route starts at, in the warning that the order of
	// the logs given set it (loggroups.go).
	routeStartNote(doc)
	// Logs cut into along-route windows (alongwindows.go).
	doc.Notes = append(doc.Notes, sv.alongNotes...)
	doc.Warnings = append(append([]string(nil), o.alongTwo...), doc.Warnings...)
	// Groups whose readings fell in a gap of the base record.
	baseGapsDocument(doc, sv)
	// Groups of a log with an interrupted current fitted as it is.
	interruptedDocument(doc, sv)
	// Groups of a log beside a strong mains line that leaks (acchecks.go).
	leakyDocument(doc, sv)
	// Build puts a misfit every group shares first; an alert that names a
	// cause (spikes left in, a route fitted as one line) still leads.
	doc.Warnings = alertsFirst(doc.Warnings, alerts)
	mainsNotesOrWarnings(doc, sv.mainsNotes)
	// An AC current read is the net current the sensors see, induced
	// sheath, armour or trunking currents included: no misfit shows it.
	if sv.ac && anyCurrent(sv) {
		doc.Notes = append(doc.Notes, report.NetCurrentCaution)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := doc.Validate(); err != nil {
		return nil, fmt.Errorf("internal error: the result document is not valid: %w", err)
	}
	return doc, nil
}

// sameOrigin records the first geo-referenced log's origin and refuses logs
// whose local positions are about another: their positions would be
// mixed up. A log whose positions are local metres (no latitude and
// longitude columns) is not placed by --origin: one about an origin of its
// own other than the --origin given is refused (the results would be about
// the log's origin while the settings name another). One without an
// origin, beside logs with latitude and longitude, is refused unless
// --origin LAT,LON gives the origin they are placed about (then it is
// taken to be about it, with a warning): by default they are placed about
// their own first reading, which a log written separately is not about,
// and its positions came out metres off without a word. One without an
// origin beside local logs with one gets a warning. Origins are the same
// within sameOriginDeg and sameOriginM, so that an origin printed here,
// given back with --origin, is the same.
func (sv *survey) sameOrigin(o *locateOptions, s *ingest.Samples) (string, error) {
	doc := sv.doc
	flag, given := o.given["origin"]
	fixed, isFixed := fixedOrigin(flag)
	geo := sv.geodetic[s.Source]
	if !geo && s.Origin == nil && len(sv.geodetic) > 0 {
		var named []string
		for _, p := range sv.logs {
			if sv.geodetic[p] {
				named = append(named, p)
			}
		}
		if isFixed {
			return fmt.Sprintf("%s: --origin %s does not apply: the log's x, y are local metres with no geographic origin (--origin places logs with latitude and longitude columns), so its positions are taken to be about the --origin given, the origin the logs with latitude and longitude (%s) are placed about", s.Source, flag, strings.Join(named, ", ")), nil
		}
		how := "its own first reading"
		if strings.TrimSpace(flag) == "mean" {
			how = "its own mean position"
		}
		return "", fmt.Errorf("%s: the log's x, y are local metres with no geographic origin, beside logs with latitude and longitude (%s), each placed about %s (--origin %s): its positions cannot be placed among theirs, and taken to be about their origin they would be metres off; give the log the origin of its x, y (%s), or give that origin with --origin LAT,LON[,HEIGHT], which the logs with latitude and longitude are then placed about",
			s.Source, strings.Join(named, ", "), how, originFlagName(flag), originHowTo)
	}
	if given && !geo && s.Origin != nil && isFixed && !sameGeodetic(*s.Origin, fixed) {
		return "", fmt.Errorf("%s: the log's x, y are local metres about its own origin (%s), not the --origin %s given: --origin places logs with latitude and longitude columns only; leave it out (the results are then about the log's origin), or give the log's own, --origin %s",
			s.Source, originText(*s.Origin), flag, originArg(*s.Origin))
	}
	if s.Origin == nil {
		if !geo && doc.Frame.Origin != nil {
			return fmt.Sprintf("%s: the log's x, y are local metres with no origin, beside %s, whose x, y are about the origin (%s): they are taken to be about it too, metres off if they are not; give the log its origin (%s)", s.Source, sv.originFrom, originText(geodeticOf(doc.Frame.Origin)), originHowTo), nil
		}
		if sv.noOrigin == "" {
			sv.noOrigin = s.Source
		}
		return "", nil
	}
	org := &report.Origin{Lat: s.Origin.Lat, Lon: s.Origin.Lon, H: s.Origin.H}
	if doc.Frame.Origin == nil {
		doc.Frame.Origin = org
		sv.originFrom = s.Source
		if sv.noOrigin != "" && !geo {
			return fmt.Sprintf("%s: the log's x, y are local metres with no origin, beside %s, whose x, y are about the origin (%s): they are taken to be about it too, metres off if they are not; give the log its origin (%s)", sv.noOrigin, s.Source, originText(*s.Origin), originHowTo), nil
		}
		return "", nil
	}
	first := geodeticOf(doc.Frame.Origin)
	if sameGeodetic(first, *s.Origin) {
		return "", nil
	}
	msg := fmt.Sprintf("%s: local positions are about origin (%s), the earlier logs' about (%s)",
		s.Source, originText(*s.Origin), originText(first))
	firstGeo := sv.geodetic[sv.originFrom]
	switch {
	case geo && firstGeo && !isFixed:
		// --origin first or mean places each log about its own first or
		// mean position.
		how := "first reading"
		if strings.TrimSpace(flag) == "mean" {
			how = "mean position"
		}
		return "", fmt.Errorf("%s: each log's latitude and longitude are placed about its own %s unless --origin LAT,LON[,HEIGHT] gives one origin for all: add --origin %s (the first log's)",
			msg, how, originArg(first))
	case geo || firstGeo:
		// One log local about its own origin, the other geodetic: the
		// geodetic one can be placed about the local one's origin.
		local := first
		if !geo {
			local = *s.Origin
		}
		return "", fmt.Errorf("%s: give the logs with latitude and longitude the local log's origin, --origin %s", msg, originArg(local))
	}
	return "", fmt.Errorf("%s: both are local metres, in frames that cannot be fitted together; convert the logs they came from with one --origin LAT,LON[,HEIGHT] (undercurrent convert --origin)", msg)
}

// originHowTo says how a local log is given its origin: the comment line
// ingest reads as the origin metadata (convert --origin places only logs
// with latitude and longitude, and writes a local log without one).
const originHowTo = "in a CSV log, a first line \"# " + ingest.MetaOrigin + ": LAT LON HEIGHT\""

// sameOriginDeg and sameOriginM are how far apart two origins may be in
// latitude and longitude, and in height, and be one: 1e-7 degrees is
// 1.1 cm of latitude or less of longitude (WGS84 meridian radius 6.34 to
// 6.40 Mm, NIMA TR8350.2), about the survey-copy check's surveyMatchM,
// so an origin given rounded to 7 decimals is its own.
const (
	sameOriginDeg = 1e-7
	sameOriginM   = 0.01
)

// sameGeodetic says whether two origins are one, within sameOriginDeg
// and sameOriginM.
func sameGeodetic(a, b ingest.Geodetic) bool {
	return math.Abs(a.Lat-b.Lat) <= sameOriginDeg && math.Abs(a.Lon-b.Lon) <= sameOriginDeg && math.Abs(a.H-b.H) <= sameOriginM
}

// geodeticOf is the document's origin o as an ingest.Geodetic.
func geodeticOf(o *report.Origin) ingest.Geodetic {
	return ingest.Geodetic{Lat: o.Lat, Lon: o.Lon, H: o.H}
}

// originArg writes g as --origin takes it, to 1e-9 degrees (0.1 mm) and
// 1 mm of height, trailing zeros left out: given back, it is the same
// origin (sameGeodetic).
func originArg(g ingest.Geodetic) string {
	return trimFixed(g.Lat, 9) + "," + trimFixed(g.Lon, 9) + "," + trimFixed(g.H, 3)
}

// originText writes g for a message: "LAT, LON, H m".
func originText(g ingest.Geodetic) string {
	return trimFixed(g.Lat, 9) + ", " + trimFixed(g.Lon, 9) + ", " + trimFixed(g.H, 3) + " m"
}

// trimFixed writes v with prec decimals, trailing zeros (and a trailing
// point) left out.
func trimFixed(v float64, prec int) string {
	t := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.Contains(t, ".") {
		t = strings.TrimRight(strings.TrimRight(t, "0"), ".")
	}
	if t == "-0" {
		t = "0"
	}
	return t
}

// originFlagName is --origin's value as the user gave it, or "first",
// the default.
func originFlagName(flag string) string {
	if f := strings.TrimSpace(flag); f != "" {
		return f
	}
	return "first"
}

// fixedOrigin parses --origin LAT,LON[,HEIGHT] (as readFlags.options
// checked it); ok is false for first, mean or nothing.
func fixedOrigin(flag string) (ingest.Geodetic, bool) {
	parts := strings.Split(strings.TrimSpace(flag), ",")
	if len(parts) < 2 || len(parts) > 3 {
		return ingest.Geodetic{}, false
	}
	var v [3]float64
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil {
			return ingest.Geodetic{}, false
		}
		v[i] = x
	}
	return ingest.Geodetic{Lat: v[0], Lon: v[1], H: v[2]}, true
}

// checkOriginFlag returns which logs have latitude and longitude columns
// (from their headers, with the read options opts), and refuses --origin
// when none has: it places only such logs, and the settings would name an
// origin the results are not about. When a log cannot be opened, there is
// no verdict: its read says why (a missing file, columns that need
// --column), where "has none" would have sent the user to leave out an
// origin the log needs.
func checkOriginFlag(o *locateOptions, logs []string, opts []ingest.Option) (map[string]bool, error) {
	geo := map[string]bool{}
	flag, given := o.given["origin"]
	fixed, isFixed := fixedOrigin(flag)
	same := isFixed // every log local about the --origin given
	unread := false // a log that cannot be opened
	for _, path := range logs {
		// A fixed origin spares reading the positions through for
		// --origin mean; only the header is looked at.
		r, err := ingest.Open(path, append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))...)
		if err != nil {
			unread = true
			continue
		}
		for _, m := range ingest.Mappings(r) {
			if m.Column == "x" && strings.HasPrefix(m.Source, "WGS84 ") {
				geo[path] = true
			}
		}
		var own ingest.Geodetic
		md := r.Schema().Metadata()
		if v, ok := md.GetValue(ingest.MetaOrigin); !ok {
			same = false
		} else if _, err := fmt.Sscanf(v, "%g %g %g", &own.Lat, &own.Lon, &own.H); err != nil || !sameGeodetic(own, fixed) {
			same = false
		}
		r.Release()
	}
	if !given || len(geo) > 0 || same || unread {
		return geo, nil
	}
	what := logs[0] + " has none"
	if len(logs) > 1 {
		what = "none of " + strings.Join(logs, ", ") + " has any"
	}
	return nil, usageErrorf("--origin %s places logs with latitude and longitude columns in local metres; %s (x, y are local metres already, about the origin the log names, if any, which the results keep): leave --origin out", flag, what)
}

// checkSurveyPositions refuses a survey log whose columns (read from its
// header or schema alone) map no x, y and z: a record of fixed sensors,
// say, which locate would otherwise read through before finding it has no
// positions (9 M rows took seconds and over a gigabyte). A log that cannot
// be opened is left to the read, which says why.
func checkSurveyPositions(logs []string, opts []ingest.Option) error {
	for _, path := range logs {
		// A fixed origin: only the header is looked at (--origin mean
		// reads the log through).
		r, err := ingest.Open(path, append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))...)
		if err != nil {
			continue
		}
		sc := r.Schema()
		r.Release()
		if !sc.HasField(ingest.ColX) || !sc.HasField(ingest.ColY) || !sc.HasField(ingest.ColZ) {
			return noPositionsError(path)
		}
	}
	return nil
}

// noPositionsError refuses a survey log without positions.
func noPositionsError(path string) error {
	if isIAGAFile(path) {
		// An observatory's record holds no positions, and --column
		// does not apply to it (checkIAGA).
		return fmt.Errorf("%s has no positions: it is an IAGA-2002 observatory record, which is read as a base station (--base %s), not as a survey log", path, path)
	}
	// A fixed sensors' record names its sensor in the group column
	// and leaves the positions to the site file (README, "The
	// continuous pipeline").
	return fmt.Errorf("%s has no positions: locate needs x, y, z (or lat, lon, height) columns; map them with --column. A record of fixed sensors (one row per sensor and time, its positions in a site file) is not a survey: feed it to \"undercurrent serve\" with \"undercurrent replay\" (README, \"The continuous pipeline\")", path)
}

// baseSummary says in one line what the base correction did to one log.
func baseSummary(path string, r *calibrate.BaseReport) string {
	s := fmt.Sprintf("%s: departures up to %.1f/%.1f/%.1f nT (east/north/up) removed", path, r.MaxAbs[0], r.MaxAbs[1], r.MaxAbs[2])
	if r.Outside > 0 {
		s += fmt.Sprintf("; %d readings outside the base record", r.Outside)
	}
	// The base gaps that readings fell in, bridged by a straight line:
	// over a minute long (their groups marked for review, basegaps.go),
	// and shorter.
	var long, short, nl, ns int
	for _, g := range r.Gaps {
		if g.To-g.From > calibrate.MinGapLimit {
			long, nl = long+1, nl+len(g.Rows)
		} else {
			short, ns = short+1, ns+len(g.Rows)
		}
	}
	if long > 0 {
		s += fmt.Sprintf("; %s in %s of the base record over a minute long, bridged by a straight line (their groups are marked for review)", plural(nl, "reading"), plural(long, "gap"))
	}
	if short > 0 {
		s += fmt.Sprintf("; %s in %s of the base record of a minute or less, bridged by a straight line", plural(ns, "reading"), plural(short, "gap"))
	}
	return s
}

// fileInput describes an input file with its SHA-256 (left out when the
// file cannot be read again).
func fileInput(role, path string, rows int) report.Input {
	if isPipe(path) {
		// Read once already (a calibration or coil response from a
		// pipe): hashing it again would hash what is left, nothing.
		return report.Input{Role: role, Path: path, Rows: rows}
	}
	in, err := report.NewInput(role, path, rows)
	if err != nil {
		return report.Input{Role: role, Path: path, Rows: rows}
	}
	return in
}

func toolVersion() string {
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" {
		return bi.Main.Version
	}
	return "(devel)"
}

// pairColumns returns the current and depth columns of source i of group
// g when it is a line of an unresolved go-and-return pair (report.Pair):
// the first line's row gives the pair's current times spacing and the
// depth of its centre, the second's the net current; ok is false for any
// other source. The lines' own currents and depths are not determined.
func pairColumns(g *report.Group, i int) (cur, dep string, ok bool) {
	p := g.Pair
	switch {
	case p == nil:
		return "", "", false
	case i == p.Sources[0]:
		return "pair I·d " + report.PlusMinus(p.CurrentTimesSpacing, p.CurrentTimesSpacingSigma) + " A·m", report.PlusMinus(p.Depth, p.DepthSigma), true
	case i == p.Sources[1]:
		net := "net " + report.PlusMinus(p.NetCurrent, p.NetCurrentSigma)
		if p.NetCurrentPhase != nil && p.NetCurrentPhaseSigma != nil {
			// Along the pair's direction, as a source's phase is.
			net += " ∠" + report.PlusMinus(*p.NetCurrentPhase, *p.NetCurrentPhaseSigma) + "°"
		}
		return net, "(centre)", true
	}
	return "", "", false
}

// sourceColumns are the current and depth entries of source i of group g
// in the terminal's table of groups: an unresolved pair's (pairColumns),
// a same-way split's whose sum the route takes (the sum and the lines'
// centre depth, report.Document.SummedColumns), else the source's current
// and its depth where the outputs place it (report.Document.SourcePlace:
// a further conductor's where its route passes), as results.csv and
// report.html give them.
func sourceColumns(doc *report.Document, g *report.Group, i int) (cur, dep string) {
	if c, d, ok := pairColumns(g, i); ok {
		return c, d
	}
	if c, d, ok := doc.SummedColumns(g, i); ok {
		return c, d
	}
	_, depth, sigma := doc.SourcePlace(g, i)
	return sourceCurrent(g.Sources[i]), report.PlusMinus(depth, sigma)
}

// baseDriftSpan is the least time, s, the DC readings of a run without a
// base correction span for the summary to say that none was applied: over
// half an hour the Earth's field changes by a few nT on a quiet day and by
// tens on a disturbed one.
const baseDriftSpan = 1800

// baseLine is the summary's line on the base-station correction: what it
// removed, as results.json's base_station says; or, in a DC run spanning
// baseDriftSpan or more without one, that none was applied; "" otherwise.
// Before, the summary read the same with a base correction as without
// (found in review).
func baseLine(doc *report.Document, walked float64) string {
	if b := doc.BaseStation; b != nil {
		return fmt.Sprintf("base-station correction from %s: %s", b.File, b.Summary)
	}
	if doc.Signal.Mode == report.SignalAC || !(walked >= baseDriftSpan) {
		return ""
	}
	return fmt.Sprintf("base-station correction: none applied; the readings span %s, over which the Earth's own field changes by a few nT on a quiet day and by tens on a disturbed one, and that change is in them (a base station log given with --base takes it out)", hoursWords(walked))
}

// failedFit fills the current column of a failed fit in the terminal's
// table, whose depth and cover read "-".
const failedFit = "fit failed, no value"

// robustGroups returns the number of groups fitted with Huber weights
// (inverse.RobustNote among their notes).
func robustGroups(doc *report.Document) int {
	n := 0
	for _, g := range doc.Groups {
		if slices.Contains(g.Notes, inverse.RobustNote) {
			n++
		}
	}
	return n
}

// printSummary prints the groups and findings for a person, then the
// cautions. walked is the time the DC readings span, s (0 when unknown):
// it decides whether a run without a base correction says so.
func printSummary(w io.Writer, doc *report.Document, took time.Duration, walked float64) {
	ok, readings := soundGroups(doc)
	unit := "readings"
	if doc.Signal.Mode == report.SignalAC {
		unit = "AC windows"
	}
	// A group marked only for a base gap fits well: it is counted as
	// such, not as poor or ambiguous (the base-gap finding says why).
	gap := baseGapOnlyGroups(doc)
	// A group left out of the profile as a magnetised object is neither
	// sound nor poor: counted apart (its dipole-anomaly finding says why).
	obj := objectGroups(doc)
	counts := fmt.Sprintf("%d sound, %d poor or ambiguous", ok, len(doc.Groups)-ok-gap-obj)
	if gap > 0 {
		counts += fmt.Sprintf(", %d marked for a base gap", gap)
	}
	if obj > 0 {
		counts += fmt.Sprintf(", %d left out as holding a magnetised object", obj)
	}
	fmt.Fprintf(w, "fitted %d group(s), %d %s, in %.2f s: %s\n",
		len(doc.Groups), readings, unit, took.Seconds(), counts)
	if l := baseLine(doc, walked); l != "" {
		fmt.Fprintln(w, l)
	}
	ref := "below the sensors' mean height"
	if doc.DepthReference.PerGroup {
		ref = "below each group's own sensors (their mean height, or with --sensor-height their height over each line where the logged heights differ), not one height"
	}
	if doc.DepthReference.Kind == report.DepthBelowGround {
		ref = fmt.Sprintf("below the ground at up = %g m", doc.DepthReference.Z)
	}
	if doc.DepthReference.PerLog {
		// Logs whose sensors stood at different heights: their depths
		// on one datum (report/logheight.go).
		ref = fmt.Sprintf("below each group's own sensors, but for the logs whose sensors stood at another height referred to one datum %.2f m above the ground (see the notes),", doc.DepthReference.SensorHeight)
	}
	// The cover first where the ground is known, and the depth below the
	// sensors named so: headed "depth (m)", it read 0.30 m deeper than
	// the cover (found in review).
	_, coverKnown := doc.Cover(0)
	depthCol := doc.DepthReference.Kind != report.DepthBelowGround
	switch {
	case !coverKnown:
		fmt.Fprintf(w, "depths are %s; currents %s, one-sigma uncertainties\n", ref, map[bool]string{true: "RMS with phase angle (∠, " + report.PhaseWords(doc.Signal) + ")", false: "DC"}[doc.Signal.Mode == report.SignalAC])
		fmt.Fprintln(w, report.NoCoverSentence)
	case depthCol:
		height := "the sensors'"
		if doc.DepthReference.PerLog {
			height = "the datum's"
		}
		fmt.Fprintf(w, "cover is the depth below the ground: the depth %s less %s %.2f m height above the ground; currents %s, one-sigma uncertainties\n",
			ref, height, doc.DepthReference.SensorHeight, map[bool]string{true: "RMS with phase angle (∠, " + report.PhaseWords(doc.Signal) + ")", false: "DC"}[doc.Signal.Mode == report.SignalAC])
	default:
		fmt.Fprintf(w, "cover is the depth %s; currents %s, one-sigma uncertainties\n", ref, map[bool]string{true: "RMS with phase angle (∠, " + report.PhaseWords(doc.Signal) + ")", false: "DC"}[doc.Signal.Mode == report.SignalAC])
	}
	if p := doc.PositionSigma; p != nil {
		// The sigmas count the positions' uncertainty too (results.json's
		// position_sigma and uncertainty_note, report.html say so).
		fmt.Fprintf(w, "uncertainties count %s, %s\n", p.Words(), p.Given())
	}
	if robustGroups(doc) > 0 {
		// The sigmas of Huber-weighted fits are large-sample ones (the
		// uncertainty_note of results.csv and each group's notes say so too).
		fmt.Fprintf(w, "%s (Huber's large-sample covariance)\n", inverse.RobustNote)
	}
	tracks := len(doc.Conductors) > 0
	cw := 18 // current column
	if doc.Signal.Mode == report.SignalAC {
		cw = 30 // RMS and phase, each with its sigma
	}
	// Values keep every digit their sigmas call for (a milliampere current
	// to a microampere sigma), so the columns widen to the widest.
	depthHead, coverHead := "depth below sensors (m)", "cover (m)"
	if doc.DepthReference.PerLog {
		// Not below every group's own sensors (report/logheight.go).
		depthHead = "depth below datum (m)"
	}
	dw := 1 + utf8.RuneCountInString(depthHead) // depth column
	vw := 16                                    // cover column
	for _, g := range doc.Groups {
		if !g.OK {
			// Printed as a failed fit, without its numbers (below).
			cw = max(cw, 1+utf8.RuneCountInString(failedFit))
			continue
		}
		for i := range g.Sources {
			cur, dep := sourceColumns(doc, &g, i)
			cw = max(cw, 1+utf8.RuneCountInString(cur))
			dw = max(dw, 1+utf8.RuneCountInString(dep))
		}
		for _, c := range doc.CoverColumn(&g) {
			vw = max(vw, 1+utf8.RuneCountInString(c))
		}
	}
	// cols writes the cover and depth columns, as far as they are shown.
	cols := func(cov, dep string) string {
		switch {
		case !coverKnown:
			return fmt.Sprintf(" %*s", dw, dep)
		case depthCol:
			return fmt.Sprintf(" %*s %*s", vw, cov, dw, dep)
		}
		return fmt.Sprintf(" %*s", vw, cov)
	}
	// The group column widens to the widest name (a group named after
	// its log, "pb.csv:T01", loggroups.go).
	kw := 8
	for _, g := range doc.Groups {
		kw = max(kw, utf8.RuneCountInString(g.Key))
	}
	fmt.Fprintf(w, "%-*s %10s %*s%s %9s", kw, "group", "chainage", cw, "current (A)", cols(coverHead, depthHead), "rms (nT)")
	if tracks {
		// Which conductor along the route each source belongs to: 1 is the
		// route's own, 2, 3, ... the further ones followed (doc.Conductors).
		fmt.Fprintf(w, " %9s", "conductor")
	}
	fmt.Fprintln(w)
	for _, g := range doc.Groups {
		key := g.Key
		if key == "" {
			key = "(all)"
		}
		ch := "-"
		if g.Chainage != nil {
			ch = fmt.Sprintf("%.1f m", *g.Chainage)
		}
		// The rms as the crew report's table gives it, "-" when the fit
		// estimated none (not 0, which would read as a perfect fit).
		rms, has := report.GroupRMS(&g)
		if !has {
			rms = "-"
		}
		if len(g.Sources) == 0 || !g.OK {
			// A failed fit's numbers mean nothing (its problem says so):
			// printed, T12's 0.636 m read as a cable's cover 14 m past
			// its end (found in review).
			cur, note := "-", "  "+g.Problem
			if !g.OK {
				cur, note = failedFit, "  fit failed: "+g.Problem
			}
			if tracks {
				note = fmt.Sprintf(" %9s", "-") + note
			}
			fmt.Fprintf(w, "%-*s %10s %*s%s %9s%s\n", kw, key, ch, cw, cur, cols("-", "-"), rms, note)
			continue
		}
		covers := doc.CoverColumn(&g)
		for i, s := range g.Sources {
			k := key
			if i > 0 {
				k, ch = "", ""
			}
			cur, dep := sourceColumns(doc, &g, i)
			_, _, inPair := pairColumns(&g, i)
			note := ""
			if i == 0 && g.Problem != "" {
				note = "  " + g.Problem
			}
			if inPair && i == g.Pair.Sources[0] && g.Problem == "" {
				note = "  go-and-return pair: centre depth; current and spacing not separable"
			}
			if g.SummedSources != nil && i == g.SummedSources[0] && g.Problem == "" && strings.HasPrefix(cur, "sum ") {
				note = "  two lines carrying current the same way: the route takes their sum, at their centre"
			}
			if tracks {
				c := "-"
				switch {
				case i == 0 && s.Kind != report.KindDipole, g.SummedSources != nil && i == g.SummedSources[1]:
					c = "1"
				case s.Conductor > 0:
					c = strconv.Itoa(s.Conductor)
				}
				note = fmt.Sprintf(" %9s", c) + note
			}
			cov := "-"
			if i < len(covers) {
				cov = covers[i]
			}
			fmt.Fprintf(w, "%-*s %10s %*s%s %9s%s\n", kw, k, ch, cw, cur, cols(cov, dep), rms, note)
		}
	}
	if doc.Route != nil && doc.Route.PairNet {
		fmt.Fprintln(w, report.PairNetSentence)
	}
	for i := range doc.Conductors {
		fmt.Fprintln(w, report.ConductorSummary(doc, &doc.Conductors[i]))
	}
	// The least cover over every conductor followed, naming which.
	if lc := report.LeastCover(doc); lc != "" {
		fmt.Fprintln(w, lc)
	}
	// Where the route has no station for far longer than its spacing.
	if gs := report.RouteGapSentence(doc); gs != "" {
		fmt.Fprintln(w, gs)
	}
	// Where chainage 0 is on the ground, as the crew report says it.
	if z := report.ChainageZero(doc); z != "" {
		fmt.Fprintln(w, z)
	}
	if len(doc.Findings) == 0 {
		fmt.Fprintln(w, "findings: none")
	} else {
		fmt.Fprintln(w, "findings:")
		for _, f := range doc.Findings {
			fmt.Fprintf(w, "  %-8s %s\n", f.Severity, f.Message)
		}
	}
	for _, wn := range doc.Warnings {
		fmt.Fprintf(w, "warning: %s\n", wn)
	}
	// What the run did that needs no action (report.Document.Notes).
	for _, n := range doc.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	printCautions(w)
}

// printCautions prints the safety cautions every crew report carries
// (report.Cautions), after the findings, so that a crew reading only the
// terminal has them too.
func printCautions(w io.Writer) {
	fmt.Fprintln(w, "cautions:")
	for _, c := range report.Cautions {
		fmt.Fprintf(w, "  %s\n", c)
	}
}

// checkOutDir refuses an output directory that exists and holds anything
// but the files locate writes (and the extra names allowed), so that a
// mistyped -o cannot replace unrelated work.
func checkOutDir(dir string, keep []string) error {
	fi, err := os.Lstat(dir)
	if notThere(err) {
		// Missing parents are made with it (stageDir, makeParents).
		if err := checkDirParents(dir); err != nil {
			return fmt.Errorf("-o %s: %w", dir, err)
		}
		return nil
	}
	if err != nil {
		return usageErrorf("-o %s: %v", dir, err)
	}
	if !fi.IsDir() {
		return usageErrorf("-o %s: exists and is not a directory", dir)
	}
	// The results replace it from a sibling made in its parent.
	if err := checkWritableDir(filepath.Dir(filepath.Clean(dir))); err != nil {
		return fmt.Errorf("-o %s: %w", dir, err)
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		return usageErrorf("-o %s: %v", dir, err)
	}
	allowed := map[string]bool{}
	for _, n := range append(append([]string(nil), resultFiles...), keep...) {
		allowed[n] = true
	}
	for _, e := range entries {
		if !allowed[e.Name()] {
			return usageErrorf("-o %s: the directory exists and holds %q, which undercurrent did not write there: choose a new directory (results are replaced only in a directory holding nothing else)", dir, e.Name())
		}
	}
	return nil
}

// stageDir builds the output directory dir whole or not at all: fill
// writes every file into a temporary sibling directory, which then takes
// dir's place (an earlier result directory, holding only names locate
// writes and keep, is replaced). Missing parents of dir are made. On any
// error nothing is left behind (the parents it made are removed) and dir
// is as it was.
//
// Once ctx is done it stops before dir is touched and returns ctx's error.
func stageDir(ctx context.Context, dir string, keep []string, fill func(tmp string) error) (err error) {
	dir = filepath.Clean(dir) // "results/" renames as "results"
	if err := checkOutDir(dir, keep); err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	undo, err := makeParents(dir)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			undo()
		}
	}()
	parent := filepath.Dir(dir)
	tmp, err := os.MkdirTemp(parent, "."+filepath.Base(dir)+".tmp-")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			os.RemoveAll(tmp)
		}
	}()
	if err := fill(tmp); err != nil {
		return err
	}
	if err := os.Chmod(tmp, 0o755); err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if _, err := os.Lstat(dir); errors.Is(err, os.ErrNotExist) {
		if err := os.Rename(tmp, dir); err != nil {
			return err
		}
		// Each file was synced as it was written (WriteFileAtomic);
		// the rename survives a power cut once the parent is.
		syncDir(parent)
		return nil
	}
	// Replace an earlier result.
	if err := checkOutDir(dir, keep); err != nil {
		return err
	}
	// Where the system can, the two swap names in one step, and tmp
	// then holds the earlier results (dirswap_linux.go).
	if swapped, err := swapDirs(tmp, dir); err != nil {
		return err
	} else if swapped {
		syncDir(parent)
		return os.RemoveAll(tmp)
	}
	// Elsewhere: move the earlier one aside, move the new one in, and
	// only then delete the old one. A run killed between the two renames
	// leaves dir missing and the earlier results in .NAME.old-DIGITS,
	// which the next run puts back (restoreOldDirs).
	old, err := os.MkdirTemp(parent, "."+filepath.Base(dir)+".old-")
	if err != nil {
		return err
	}
	os.Remove(old)
	if err := os.Rename(dir, old); err != nil {
		return err
	}
	if err := os.Rename(tmp, dir); err != nil {
		if rerr := os.Rename(old, dir); rerr != nil {
			return fmt.Errorf("%w; the earlier results are in %s", err, old)
		}
		return err
	}
	syncDir(parent)
	return os.RemoveAll(old)
}

// writeDocFiles writes the result files into dir (resultFiles), the CSV
// files in the style opt says.
func writeDocFiles(dir string, doc *report.Document, opt report.CSVOptions) error {
	return report.WriteFilesWith(dir, doc, opt)
}

// writeResults writes the result directory of a locate run.
func writeResults(ctx context.Context, dir string, doc *report.Document, keep []string, opt report.CSVOptions) error {
	return stageDir(ctx, dir, keep, func(tmp string) error { return writeDocFiles(tmp, doc, opt) })
}

// csvOptions are the options of the CSV files the flags ask for.
func (o *locateOptions) csvOptions() report.CSVOptions {
	return report.CSVOptions{DecimalComma: o.csvDecimalComma}
}

// checkParentDir refuses an output path whose directory does not exist
// or cannot be written in.
// Like every problem with an output location found before the work (see
// checkOutDir), it is a usage error (exit status 2): the flag's value
// names a place that cannot be used.
func checkParentDir(path string) error {
	parent := filepath.Dir(filepath.Clean(path))
	fi, err := os.Stat(parent)
	switch {
	case errors.Is(err, os.ErrNotExist):
		return usageErrorf("output directory %s does not exist", parent)
	case err != nil:
		return usageErrorf("output directory %s: %v", parent, err)
	case !fi.IsDir():
		return usageErrorf("output directory %s is not a directory", parent)
	}
	// A directory that cannot be written in (permissions, a read-only
	// mount) is found here, before the work, as for -o DIR: before, the
	// whole job ran and then failed naming a hidden temporary file.
	return checkWritableDir(parent)
}

// minStepFraction turns --min-step (per cent, 0 for none) into
// report.BuildSettings.MinStep (a fraction, negative for none).
func minStepFraction(pct float64) float64 {
	if pct == 0 {
		return -1
	}
	return pct / 100
}

// parseMains reads --mains: a comma-separated list of mains frequencies
// (Hz), or none; empty (options made in code) is the default, 50,60.
func parseMains(text string) ([]float64, error) {
	switch strings.ToLower(strings.TrimSpace(text)) {
	case "none":
		return nil, nil
	case "":
		return []float64{50, 60}, nil
	}
	var out []float64
	for _, f := range strings.Split(text, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return nil, usageErrorf("--mains %q: want mains frequencies in Hz (50, 60 or 50,60) or none", text)
		}
		out = append(out, v)
	}
	return out, nil
}

// sourceCurrent writes a source's current for the summary table: to the
// decimal place of its sigma, as in the report, with the phase for AC, or
// "object" for a magnetised object.
func sourceCurrent(s report.Source) string {
	cur := report.PlusMinus(s.Current, s.CurrentSigma)
	switch {
	case s.Kind == report.KindDipole:
		cur = "object"
	case s.Phase != nil && s.PhaseSigma != nil:
		cur += " ∠" + report.PlusMinus(*s.Phase, *s.PhaseSigma) + "°"
	case s.Phase != nil:
		cur += fmt.Sprintf(" ∠%.0f°", *s.Phase)
	}
	return cur
}

// mainsNotesOrWarnings puts the statements that the mains were averaged
// out before the DC fits (dcmains.go) into doc: notes when a fit found a
// conductor after it (the averaging did its job), warnings, first, when
// none did (an AC survey located without --freq: the field averaged
// away was the one surveyed, and the statement names --freq).
func mainsNotesOrWarnings(doc *report.Document, notes []string) {
	if len(notes) == 0 {
		return
	}
	for _, g := range doc.Groups {
		if g.OK {
			doc.Notes = append(doc.Notes, notes...)
			return
		}
	}
	doc.Warnings = append(append([]string(nil), notes...), doc.Warnings...)
}

// parsePositionSigma reads --position-sigma H[,V] into posPlan and posUp:
// one value for both, or the plan's and the height's; lengths in metres,
// finite and not negative, not both zero. Not with --robust, whose Huber
// weights and covariance stand on the residuals alone
// (inverse.PositionSigmaRobustNote).
func (o *locateOptions) parsePositionSigma() error {
	o.posPlan, o.posUp = 0, 0
	t := strings.TrimSpace(o.positionSigma)
	if t == "" {
		return nil
	}
	parts := strings.Split(t, ",")
	if len(parts) > 2 {
		return usageErrorf("--position-sigma %q: want H or H,V (metres, across the plan and in height)", o.positionSigma)
	}
	var v [2]float64
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || !(x >= 0) || math.IsInf(x, 0) {
			return usageErrorf("--position-sigma %q: want H or H,V, each a length in metres >= 0 (as 0.2,0.15)", o.positionSigma)
		}
		v[i] = x
	}
	if len(parts) == 1 {
		v[1] = v[0]
	}
	if v[0] == 0 && v[1] == 0 {
		return usageErrorf("--position-sigma %q: both zero; leave the flag out for exact positions", o.positionSigma)
	}
	if o.robust {
		return usageErrorf("--position-sigma and --robust do not go together: the Huber weights and their uncertainties stand on the residuals alone; give one")
	}
	o.posPlan, o.posUp = v[0], v[1]
	return nil
}
