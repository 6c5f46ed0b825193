package main

// A sensor whose axes are not what the log says (turned on its pole,
// leaning, rocking with no attitude logged, an offset turning with a
// sensor-frame log, a scale not fixed), checked against the simulated
// truth of the Kestrel Moor survey (testdata/scenarios/kestrel-moor-step.toml)
// with its sensor's matrix and offset replaced: the run must say so, and
// name the turn the scenario put in.

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"undercurrent/calibrate"
)

// kestrelSensor returns kestrel-moor-step.toml with its sensor's matrix
// and offset replaced (matrix "" for none), carried walking with sway
// (sensor-frame log with roll, pitch, yaw) when walking is set.
func kestrelSensor(t *testing.T, offset [3]float64, matrix string, walking bool) string {
	t.Helper()
	_, path := scenario(t, "kestrel-moor-step.toml")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	re := regexp.MustCompile(`(?s)offset_nt = \[[^\]]*\]\nmatrix = \[\[.*?\]\]\n`)
	if !re.MatchString(text) {
		t.Fatal("kestrel-moor-step.toml: no sensor offset_nt and matrix to replace")
	}
	repl := fmt.Sprintf("offset_nt = [%g, %g, %g]\n", offset[0], offset[1], offset[2])
	if matrix != "" {
		repl += "matrix = " + matrix + "\n"
	}
	text = re.ReplaceAllLiteralString(text, repl)
	if walking {
		text = strings.Replace(text, "[sensor]\n", "[sensor]\nattitude = \"walking\"\nsway_deg = 6.0\n", 1)
	}
	return text
}

// simulateWithBase simulates text into dir with its base log.
func simulateWithBase(t *testing.T, dir, text string) (survey, base string) {
	t.Helper()
	toml := filepath.Join(dir, "sc.toml")
	if err := os.WriteFile(toml, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	survey, base = filepath.Join(dir, "survey.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", toml, "-o", survey, "--base-log", base)
	return survey, base
}

// offsetCalibration writes a calibration with the scenario's own offset
// and an identity matrix: what a spin finds for a sensor whose matrix is a
// pure rotation (the spin sees only |B|). noReference marks it made
// without --reference.
func offsetCalibration(t *testing.T, dir string, offset [3]float64, noReference bool) string {
	t.Helper()
	cal := &calibrate.Calibration{
		Version: 1, Method: calibrate.MethodEllipsoid, Created: time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC),
		Inputs:    []calibrate.Input{{Role: "spin", File: "spin.csv", SHA256: strings.Repeat("0", 64), Samples: 2401}},
		Offset:    offset,
		Matrix:    [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
		Reference: 50095.4,
	}
	if noReference {
		cal.Notes = []string{calibrate.NoReferenceNote + " the matrix maps the readings to the fitted ellipsoid's own size"}
	}
	p := filepath.Join(dir, "cal.json")
	if err := cal.Save(p); err != nil {
		t.Fatal(err)
	}
	return p
}

// warningNumber returns the number re's first group captures in the first
// warning that matches, and whether one did.
func warningNumber(warns []string, re *regexp.Regexp) (float64, bool) {
	for _, w := range warns {
		if m := re.FindStringSubmatch(w); m != nil {
			v, err := strconv.ParseFloat(m[1], 64)
			return v, err == nil
		}
	}
	return 0, false
}

var (
	headingRE  = regexp.MustCompile(`horizontal direction is turned ([0-9.]+)° (?:anti)?clockwise`)
	dipRE      = regexp.MustCompile(`it dips ([0-9.]+)° (?:steeper|shallower)`)
	cosRE      = regexp.MustCompile(`low by 1 - cos [0-9.]+° \(([0-9.]+)%\)`)
	mountYawRE = regexp.MustCompile(`--mount-yaw ([-0-9.]+) turns the readings back`)
	scaleRE    = regexp.MustCompile(`\|B\| of the survey after the corrections is [0-9]+ nT \(median\)[^,]*, ([-+0-9.]+)% from`)
)

// TestLocateWarnsOfTurnedSensor: the magnetometer turned 20° about the
// vertical on its pole (scenario matrix a rotation: the spin calibration
// finds the offset and an identity matrix) made every line turned 20° and
// currents 6% low, "sound", with no word; a pole leaning 3° across the
// route (a rotation about east) put a phantom return line beside the pipe.
// The base record's absolute field shows both: the warning must name the
// turn the scenario put in (20° anticlockwise seen from above; 3° of dip),
// and the unturned sensor must draw no such warning.
func TestLocateWarnsOfTurnedSensor(t *testing.T) {
	offset := [3]float64{2500, -1800, 3200}
	c20, s20 := math.Cos(20*math.Pi/180), math.Sin(20*math.Pi/180)
	c3, s3 := math.Cos(3*math.Pi/180), math.Sin(3*math.Pi/180)
	cases := []struct {
		name, matrix   string
		heading, dip   float64 // the scenario's turn, degrees (-1: no warning)
		anticlockwise  bool
		shallower, any bool
	}{
		{"heading 20", fmt.Sprintf("[[%.9f, %.9f, 0.0], [%.9f, %.9f, 0.0], [0.0, 0.0, 1.0]]", c20, -s20, s20, c20), 20, 0, true, false, true},
		{"lean 3 about east", fmt.Sprintf("[[1.0, 0.0, 0.0], [0.0, %.9f, %.9f], [0.0, %.9f, %.9f]]", c3, -s3, s3, c3), 0, 3, false, true, true},
		{"level", "", 0, 0, false, false, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			survey, base := simulateWithBase(t, dir, kestrelSensor(t, offset, tc.matrix, false))
			cal := offsetCalibration(t, dir, offset, false)
			doc := locateGrouped(t, "--calibration", cal, "--base", base, survey)
			h, okH := warningNumber(doc.Warnings, headingRE)
			d, okD := warningNumber(doc.Warnings, dipRE)
			if !tc.any {
				if okH || okD || containsAll(doc.Warnings, "|B| of the survey") {
					t.Errorf("a level, unturned sensor: warnings %q", doc.Warnings)
				}
				return
			}
			if !okH || !okD {
				t.Fatalf("no warning of the turn: %q", doc.Warnings)
			}
			// The base sits 35, -12, 20 nT off the survey's field and
			// the pipe's anomaly moves the survey's median by tens of nT:
			// a few tenths of a degree.
			if math.Abs(h-tc.heading) > 0.4 || math.Abs(d-tc.dip) > 0.4 {
				t.Errorf("turn read as %.1f° of heading and %.1f° of dip, the scenario's is %.1f° and %.1f°: %q", h, d, tc.heading, tc.dip, doc.Warnings)
			}
			if tc.anticlockwise && !containsAll(doc.Warnings, "° anticlockwise") {
				t.Errorf("a turn anticlockwise seen from above (the scenario's rotation about up): %q", doc.Warnings)
			}
			if tc.shallower && !containsAll(doc.Warnings, "° shallower") {
				t.Errorf("a lean that lifts north into up makes the field shallower: %q", doc.Warnings)
			}
			// 1 - cos 20° is 6.03% (the turn printed to 0.1°: ± 0.07%).
			if pct, ok := warningNumber(doc.Warnings, cosRE); tc.heading > 0 && (!ok || math.Abs(pct-100*(1-math.Cos(tc.heading*math.Pi/180))) > 0.15) {
				t.Errorf("the warning does not give 1 - cos of the turn: %q", doc.Warnings)
			}
			if tc.heading == 0 {
				return
			}
			// The --mount-yaw the warning names turns the readings back:
			// the currents are then those of the same sensor unturned
			// (the level case's run, the same seed), within their sigmas,
			// where without it they were 6% (tens of sigma) low.
			yaw, ok := warningNumber(doc.Warnings, mountYawRE)
			if !ok {
				t.Fatalf("the warning names no --mount-yaw: %q", doc.Warnings)
			}
			if math.Abs(yaw-tc.heading) > 0.4 {
				t.Errorf("--mount-yaw %g named for the scenario's %g° anticlockwise turn", yaw, tc.heading)
			}
			levelSurvey, levelBase := simulateWithBase(t, t.TempDir(), kestrelSensor(t, offset, "", false))
			level := locateGrouped(t, "--calibration", cal, "--base", levelBase, levelSurvey)
			back := locateGrouped(t, "--calibration", cal, "--base", base, "--mount-yaw", strconv.FormatFloat(yaw, 'f', -1, 64), survey)
			if _, ok := warningNumber(back.Warnings, headingRE); ok {
				t.Errorf("--mount-yaw %g given: %q", yaw, back.Warnings)
			}
			ref := map[string]docSource{}
			for _, g := range level.Groups {
				if len(g.Sources) > 0 {
					ref[g.Key] = g.Sources[0]
				}
			}
			pulls := func(d resultDoc) []float64 {
				var p []float64
				for _, g := range d.Groups {
					r, ok := ref[g.Key]
					if len(g.Sources) == 0 || !ok {
						continue
					}
					p = append(p, math.Abs(math.Abs(g.Sources[0].Current)-math.Abs(r.Current))/r.CurrentSigma)
				}
				return p
			}
			turned, turnedBack := finiteMedian(pulls(doc)), finiteMedian(pulls(back))
			t.Logf("currents against the unturned sensor's: median %.2f sigma off turned, %.2f with --mount-yaw %g", turned, turnedBack, yaw)
			if !(turned > 10) || !(turnedBack < 1.5) {
				t.Errorf("currents against the unturned sensor's: median %.1f sigma off turned, %.1f sigma with --mount-yaw %g (want over 10 and under 1.5)", turned, turnedBack, yaw)
			}
		})
	}
}

// TestLocateWarnsOfUnfixedScale: a sensor reading 0.4% high (matrix 1.004
// times the identity), calibrated by a spin without --reference, which
// keeps the sensor's own scale: currents 0.4% high, "sound". The base
// record's |B| shows it; the warning must give the scenario's 0.4% and
// name --reference.
func TestLocateWarnsOfUnfixedScale(t *testing.T) {
	offset := [3]float64{310, -240, 180}
	dir := t.TempDir()
	survey, base := simulateWithBase(t, dir, kestrelSensor(t, offset, "[[1.004, 0.0, 0.0], [0.0, 1.004, 0.0], [0.0, 0.0, 1.004]]", false))
	cal := offsetCalibration(t, dir, offset, true)
	doc := locateGrouped(t, "--calibration", cal, "--base", base, survey)
	pct, ok := warningNumber(doc.Warnings, scaleRE)
	if !ok {
		t.Fatalf("no warning of the scale: %q", doc.Warnings)
	}
	// The base's 35, -12, 20 nT offset moves its |B| by about 20 nT, 0.04%.
	if math.Abs(pct-0.4) > 0.06 {
		t.Errorf("scale read as %+.2f%%, the scenario's is +0.40%%: %q", pct, doc.Warnings)
	}
	if !containsAll(doc.Warnings, "without --reference") || !containsAll(doc.Warnings, "--reference 500") {
		t.Errorf("the warning does not name --reference with the base's |B|: %q", doc.Warnings)
	}
	// Without a base log nothing checks it: the warning says what the
	// calibration leaves open.
	nobase := locateGrouped(t, "--calibration", cal, survey)
	if !containsAll(nobase.Warnings, "leaves open: the sensor frame is fixed only up to a rotation") || !containsAll(nobase.Warnings, "absolute scale is the sensor's own") {
		t.Errorf("no base log: warnings %q", nobase.Warnings)
	}
	// The calibration's caveat reaches the result document.
	type calDoc struct {
		Calibration struct {
			Summary string `json:"summary"`
		} `json:"calibration"`
	}
	cd := locateInto[calDoc](t, "--group-by", "group", "--calibration", cal, "--base", base, survey)
	for _, want := range []string{"left open", "only up to a rotation", "absolute scale is the sensor's own"} {
		if !strings.Contains(cd.Calibration.Summary, want) {
			t.Errorf("calibration summary lacks %q: %q", want, cd.Calibration.Summary)
		}
	}
}

// TestLocateNamesOffsetTurningWithSensor: a sensor-frame walking log
// (roll, pitch, yaw; 6° of sway) with a pure hard-iron offset of 2500,
// -1800, 3200 nT and no --calibration: the offset turns with the sensor,
// and the run blamed conductors closer together than the fit can part.
// The warning must name the missing calibration and give the offset the
// scenario put in (fitted from how the field follows the attitude).
func TestLocateNamesOffsetTurningWithSensor(t *testing.T) {
	offset := [3]float64{2500, -1800, 3200}
	dir := t.TempDir()
	survey, base := simulateWithBase(t, dir, kestrelSensor(t, offset, "", true))
	doc := locateGrouped(t, "--base", base, survey)
	re := regexp.MustCompile(`offset that turns with the sensor: roughly \(([-0-9]+), ([-0-9]+), ([-0-9]+)\) nT in the sensor's x, y, z \(± ([0-9]+) nT`)
	var m []string
	for _, w := range doc.Warnings {
		if m = re.FindStringSubmatch(w); m != nil {
			if !strings.Contains(w, "no --calibration was given") || !strings.Contains(w, "calibrate --spin") {
				t.Errorf("the warning does not name the missing calibration: %q", w)
			}
			break
		}
	}
	if m == nil {
		t.Fatalf("no warning of an offset turning with the sensor: %q", doc.Warnings)
	}
	se, _ := strconv.ParseFloat(m[4], 64)
	for k := 0; k < 3; k++ {
		v, _ := strconv.ParseFloat(m[1+k], 64)
		// Within 4 standard errors plus the 1 nT rounding; the pipe's
		// field is the only other thing that follows the attitude.
		if math.Abs(v-offset[k]) > 4*se+1 {
			t.Errorf("offset %c read as %.0f ± %.0f nT, the scenario's is %.0f", "xyz"[k], v, se, offset[k])
		}
	}
	// With the offset taken out (the scenario's own hard iron, no soft
	// iron), nothing turns with the sensor.
	cal := offsetCalibration(t, dir, offset, false)
	ok := locateGrouped(t, "--calibration", cal, "--base", base, survey)
	if containsAll(ok.Warnings, "turns with the sensor") {
		t.Errorf("a calibrated walking log: %q", ok.Warnings)
	}
}

// TestLocateNamesTurningSensor: the same walking log read as east, north,
// up (--frame enu: the attitude not applied, a sensor rocking with nothing
// logging it). The components swing with the sway by thousands of nT
// while |B| barely changes; the run blamed close conductors. The warning
// must say the field turned, by about the scenario's sway (6°: the robust
// spread of a sway of ±6° lies between a few degrees and its amplitude
// plus the traverse's heading changes).
func TestLocateNamesTurningSensor(t *testing.T) {
	offset := [3]float64{2500, -1800, 3200}
	dir := t.TempDir()
	survey, base := simulateWithBase(t, dir, kestrelSensor(t, offset, "", true))
	cal := offsetCalibration(t, dir, offset, false)
	doc := locateGrouped(t, "--frame", "enu", "--calibration", cal, "--base", base, survey)
	re := regexp.MustCompile(`the field turned within ([0-9]+) of ([0-9]+) groups rather than changed: .* a turn of about ([0-9.]+)°`)
	found := false
	for _, w := range doc.Warnings {
		if m := re.FindStringSubmatch(w); m != nil {
			found = true
			if m[1] != m[2] {
				t.Errorf("every traverse sways: %s of %s groups", m[1], m[2])
			}
			if a, _ := strconv.ParseFloat(m[3], 64); a < 2 || a > 12 {
				t.Errorf("turn of about %g°, the scenario sways ±6°: %q", a, w)
			}
		}
	}
	if !found {
		t.Fatalf("no warning that the sensor turned: %q", doc.Warnings)
	}
	// The same log with its attitude applied does not turn.
	ok := locateGrouped(t, "--calibration", cal, "--base", base, survey)
	if containsAll(ok.Warnings, "the field turned within") {
		t.Errorf("the attitude applied: %q", ok.Warnings)
	}
}
