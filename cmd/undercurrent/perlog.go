package main

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/report"
)

// Settings given per log: a survey merged from logs of different sensors,
// crews or days needs each log's own calibration (--calibration
// LOG=CAL.json). Before, the flag was one value for every log, and a
// two-sensor merge was wrong on one side whichever calibration was given (found in review).

// perLogValue is one LOG=VALUE of a flag given per log: the log and the
// value as first split, and the whole text as given, which resolvePerLog
// splits at another "=" when the log's path holds one.
type perLogValue struct {
	log, value string
	raw        string
}

// splitPerLog parts the values given to flag into the bare one, which
// applies to every log not named (at most one), and those given as
// LOG=VALUE. isBare says whether a value with "=" in it is a bare value
// still (a calibration file whose name holds "="); nil: never. cutLast
// splits LOG=VALUE at the last "=" (a value that never holds one, as a
// height), else at the first; resolvePerLog may split it elsewhere.
func splitPerLog(flag string, values []string, isBare func(string) bool, cutLast bool) (bare string, named []perLogValue, err error) {
	hasBare := false
	for _, v := range values {
		log, val, ok := strings.Cut(v, "=")
		if i := strings.LastIndex(v, "="); cutLast && i >= 0 {
			log, val = v[:i], v[i+1:]
		}
		if ok && isBare != nil && isBare(v) {
			ok = false
		}
		if !ok {
			if hasBare {
				return "", nil, usageErrorf("--%s given twice without a log (%s and %s): a bare value applies to every log not named; give the others as --%s LOG=VALUE", flag, bare, v, flag)
			}
			bare, hasBare = v, true
			continue
		}
		log, val = strings.TrimSpace(log), strings.TrimSpace(val)
		if log == "" || val == "" {
			return "", nil, usageErrorf("--%s %s: want LOG=VALUE, the log as given on the command line (or its base name) and its own value", flag, v)
		}
		named = append(named, perLogValue{log: log, value: val, raw: v})
	}
	return bare, named, nil
}

// namesLog says whether name names exactly one of logs, by the path as
// given or by its base name.
func namesLog(name string, logs []string) bool {
	hits := 0
	for _, l := range logs {
		if l == name || filepath.Clean(l) == filepath.Clean(name) {
			return true
		}
		if filepath.Base(l) == name {
			hits++
		}
	}
	return hits == 1
}

// resplit splits a LOG=VALUE given as raw at the "=" whose left part
// names a log, the longest such part first, so that a log whose path
// holds "=" ("d=1/line.csv=cal.json") can be named; nv as split at first
// if no left part names a log.
func resplit(nv perLogValue, logs []string) perLogValue {
	for i := strings.LastIndex(nv.raw, "="); i > 0; i = strings.LastIndex(nv.raw[:i], "=") {
		log, val := strings.TrimSpace(nv.raw[:i]), strings.TrimSpace(nv.raw[i+1:])
		if val != "" && namesLog(log, logs) {
			return perLogValue{log: log, value: val, raw: nv.raw}
		}
	}
	return nv
}

// resolvePerLog matches each named log to the survey logs, by the path as
// given or by its base name, and returns the value of each log index that
// was named. A name that is none of the logs is refused, naming it; so is
// a log named twice, and a base name that several logs share.
func resolvePerLog(flag string, named []perLogValue, logs []string) (map[int]string, error) {
	if len(named) == 0 {
		return nil, nil
	}
	out := map[int]string{}
	for _, nv := range named {
		if nv.raw != "" {
			nv = resplit(nv, logs)
		}
		k := -1
		for i, l := range logs {
			if l == nv.log || filepath.Clean(l) == filepath.Clean(nv.log) {
				k = i
				break
			}
		}
		if k < 0 {
			var hits []int
			for i, l := range logs {
				if filepath.Base(l) == nv.log {
					hits = append(hits, i)
				}
			}
			if len(hits) > 1 {
				return nil, usageErrorf("--%s %s=%s: %s is the name of %d of the logs (%s and %s): name the log by its path as given", flag, nv.log, nv.value, nv.log, len(hits), logs[hits[0]], logs[hits[1]])
			}
			if len(hits) == 1 {
				k = hits[0]
			}
		}
		if k < 0 {
			return nil, usageErrorf("--%s %s=%s: %s is not one of the logs given (%s); name a log as given on the command line or by its base name", flag, nv.log, nv.value, nv.log, strings.Join(logs, ", "))
		}
		if prev, ok := out[k]; ok {
			return nil, usageErrorf("--%s names %s twice (%s and %s): give one value for each log", flag, logs[k], prev, nv.value)
		}
		out[k] = nv.value
	}
	return out, nil
}

// calibrationIsBare says whether a --calibration value with "=" in it is a
// file's name (an existing file whose name holds "=") rather than LOG=FILE.
func calibrationIsBare(v string) bool {
	if _, f, _ := strings.Cut(v, "="); f != "" {
		if st, err := os.Stat(f); err == nil && !st.IsDir() {
			return false
		}
	}
	st, err := os.Stat(v)
	return err == nil && !st.IsDir()
}

// withPerLogNote adds perLogNote to err when it is about a log's columns
// (a column missing, or a mapping naming a column the log lacks) and
// several logs were given; a usage error stays one.
func withPerLogNote(err error, logs []string) error {
	n := perLogNote(logs)
	if err == nil || n == "" || !strings.Contains(err.Error(), "no column") {
		return err
	}
	var ue *usageError
	if errors.As(err, &ue) {
		return usageErrorf("%s%s", err.Error(), n)
	}
	return fmt.Errorf("%w%s", err, n)
}

// perLogNote is the hint added to an error about a log's columns when
// several logs were given: the input flags apply to every log alike.
func perLogNote(logs []string) string {
	if len(logs) < 2 {
		return ""
	}
	return fmt.Sprintf("; the input flags (--column, --unit, --time-offset, ...) apply to all %d logs alike: for logs from different instruments or crews, run \"undercurrent convert\" on each log with its own --column, --unit and --time-offset first, then locate the converted logs together", len(logs))
}

// loadCalibrations loads the calibration of each log: the one named for
// it (--calibration LOG=CAL.json), else the bare one, else none (nil, "").
// Each file is loaded once and recorded among doc's inputs; doc's
// calibration names them, with the logs each was applied to when they are
// not one for all.
func loadCalibrations(o *locateOptions, logs []string, doc *report.Document) ([]*calibrate.Calibration, []string, error) {
	cals, paths := make([]*calibrate.Calibration, len(logs)), make([]string, len(logs))
	named, err := resolvePerLog("calibration", o.calPerLog, logs)
	if err != nil {
		return nil, nil, err
	}
	loaded := map[string]*calibrate.Calibration{}
	var order []string // the files in the order first applied
	for k := range logs {
		p, ok := named[k]
		if !ok {
			p = o.calibration
		}
		if p == "" {
			continue
		}
		c, ok := loaded[p]
		if !ok {
			if c, err = calibrate.Load(p); err != nil {
				return nil, nil, err
			}
			loaded[p] = c
			order = append(order, p)
			doc.Inputs = append(doc.Inputs, fileInput("calibration", p, 0))
		}
		cals[k], paths[k] = c, p
	}
	if len(order) == 0 {
		return cals, paths, nil
	}
	all := true
	for k := range logs {
		all = all && paths[k] == order[0]
	}
	if all {
		doc.Calibration = &report.Correction{File: order[0], Summary: loaded[order[0]].Summary()}
		return cals, paths, nil
	}
	// Several calibrations, or some logs without: each file with the logs
	// it corrected, and the logs left as read.
	var files, sums []string
	for _, p := range order {
		var on []string
		for k, l := range logs {
			if paths[k] == p {
				on = append(on, l)
			}
		}
		files = append(files, p)
		sums = append(sums, fmt.Sprintf("%s on %s: %s", p, strings.Join(on, ", "), loaded[p].Summary()))
	}
	var none []string
	for k, l := range logs {
		if paths[k] == "" {
			none = append(none, l)
		}
	}
	if len(none) > 0 {
		sums = append(sums, "no calibration on "+strings.Join(none, ", "))
	}
	doc.Calibration = &report.Correction{File: strings.Join(files, " + "), Summary: strings.Join(sums, "; ")}
	return cals, paths, nil
}

// baseApartHint says what to do with a base record that overlaps no
// survey log.
const baseApartHint = "give the base record made during the survey (check its date and the logs' time zones, --time-offset), or leave --base out to locate without the base correction"

// baseUncovered is the warning for the survey logs (apart) that the base
// record lies wholly outside of, left as read beside the logs it corrected;
// errs are the errors that said so, one for each. When it covers none of
// the logs, the run is refused with the first of them and what to do.
func baseUncovered(basePath string, logs, apart []string, errs []error) (string, error) {
	if len(apart) == len(logs) {
		return "", fmt.Errorf("%w; the base record overlaps none of the %d logs: %s", errs[0], len(logs), baseApartHint)
	}
	return fmt.Sprintf("--base %s: the base record does not overlap %s, which %s left without the base correction (the Earth's daily variation is left in %s readings, as in a run without --base); the other logs were corrected. To correct every log, give a base record for each day (--base may be given more than once); to treat the logs alike, leave --base out, or locate the logs the base covers in a run of their own",
		basePath, strings.Join(apart, ", "), map[bool]string{true: "is", false: "are"}[len(apart) == 1], map[bool]string{true: "its", false: "their"}[len(apart) == 1]), nil
}

// splitSensorHeights parts --sensor-height's values (o.sensorHeights) into
// the bare height (o.sensorHeight) and those given per log
// (o.heightPerLog), refusing a height that is not a number, or is
// negative, NaN or infinite; a named log's height of 0 is refused too (for
// sensors on the ground --reference-z is the flag).
func (o *locateOptions) splitSensorHeights() error {
	bare, named, err := splitPerLog("sensor-height", o.sensorHeights, nil, true)
	if err != nil {
		return err
	}
	o.sensorHeight, o.heightPerLog = 0, named
	if bare != "" {
		if o.sensorHeight, err = parseHeight(bare); err != nil {
			return usageErrorf("--sensor-height %s: want a height in metres >= 0", bare)
		}
	}
	for _, nv := range named {
		h, err := parseHeight(nv.value)
		if err != nil || h == 0 {
			return usageErrorf("--sensor-height %s=%s: want a height in metres > 0 (for sensors on the ground give --reference-z)", nv.log, nv.value)
		}
	}
	return nil
}

// parseHeight reads a height in metres, finite and not negative.
func parseHeight(v string) (float64, error) {
	h, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
	if err != nil || h < 0 || math.IsNaN(h) || math.IsInf(h, 0) {
		return 0, fmt.Errorf("bad height %q", v)
	}
	return h, nil
}

// logSensorHeights returns each log's sensor height above the ground (the
// one named for it, --sensor-height LOG=H, else the bare one), by its path
// as given, and the datum the depths are referred to: the bare height, or
// with every log named, the first log's. Empty (and the bare height, maybe
// 0) when no log was named. With logs named and no bare height, a log left
// without a height is refused: its cover would be read from a height that
// is not its own.
//
// The fits' depths are below their own sensors; report.Build refers those
// of a log whose height h differs from the datum H to the plane H above
// the ground (depth - (h - H)), so that cover = depth - H holds for every
// group and the route averages and compares repeats on one footing.
func logSensorHeights(o *locateOptions, logs []string) (map[string]float64, float64, error) {
	named, err := resolvePerLog("sensor-height", o.heightPerLog, logs)
	if err != nil || len(named) == 0 {
		return nil, o.sensorHeight, err
	}
	out := make(map[string]float64, len(logs))
	var missing []string
	for k, l := range logs {
		v, ok := named[k]
		if !ok {
			if o.sensorHeight > 0 {
				out[l] = o.sensorHeight
			} else {
				missing = append(missing, l)
			}
			continue
		}
		h, err := parseHeight(v)
		if err != nil {
			return nil, 0, usageErrorf("--sensor-height %s=%s: want a height in metres > 0", l, v)
		}
		out[l] = h
	}
	if len(missing) > 0 {
		return nil, 0, usageErrorf("--sensor-height names the sensor height of some logs but not of %s: give each log its own as LOG=H, or a bare --sensor-height H for the logs not named", strings.Join(missing, ", "))
	}
	datum := o.sensorHeight
	if datum == 0 {
		datum = out[logs[0]]
	}
	return out, datum, nil
}
