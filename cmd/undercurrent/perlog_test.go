package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// twoSensorDay is an invented scenario: one crew's day over a DC pipe
// 1.30 m deep carrying 2 A, four traverses from chainage first m, with
// its own sensor's offset and soft-iron matrix; base adds a base station.
func twoSensorDay(seed int, start string, first float64, off [3]float64, m [3][3]float64, base bool) string {
	b := ""
	if base {
		b = `
[base]
sample_rate_hz = 1.0
noise_nt = 0.05
offset_nt = [30.0, -10.0, 15.0]
margin_s = 120.0
`
	}
	return fmt.Sprintf(`name = "two-sensor-day"
site = "Wrenfold Lane water main (invented)"
seed = %d
start = %q
[origin]
lat_deg = 53.70410
lon_deg = -1.62270
height_m = 88.0

[earth]
field_nt = [-380.0, 17900.0, -46500.0]

[sensor]
height_m = 0.25
noise_nt = 1.0
sample_rate_hz = 5.0
offset_nt = [%g, %g, %g]
matrix = [[%g, %g, %g], [%g, %g, %g], [%g, %g, %g]]

[survey]
route = [[0.0, 0.0], [250.0, 20.0]]
count = 4
spacing_m = 10.0
first_at_m = %g
length_m = 12.0
speed_m_s = 0.6
turn_s = 20.0
%s
[[conductor]]
name = "Wrenfold Lane water main"
kind = "polyline"
vertices = [[-39.873, -3.190, -1.30], [299.045, 23.924, -1.30]]
currents_a = [2]
`, seed, start, off[0], off[1], off[2], m[0][0], m[0][1], m[0][2], m[1][0], m[1][1], m[1][2], m[2][0], m[2][1], m[2][2], first, b)
}

// twoSensorSurvey simulates the two days into dir: day 1 (sensor A, with a
// base record of that day only) and day 2 (sensor B, the next day), and
// writes each sensor's calibration, the inverse of its distortion.
func twoSensorSurvey(t *testing.T, dir string) (day1, day2, base1, calA, calB string) {
	t.Helper()
	mA := [3][3]float64{{1.040, 0.012, -0.008}, {0.012, 0.965, 0.015}, {-0.008, 0.015, 0.997}}
	offA := [3]float64{310, -240, 180}
	mB := [3][3]float64{{0.975, -0.010, 0.006}, {-0.010, 1.030, -0.012}, {0.006, -0.012, 1.004}}
	offB := [3]float64{-520, 410, -260}
	write := func(name, text string) string {
		p := filepath.Join(dir, name+".toml")
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	day1, day2, base1 = filepath.Join(dir, "day1.csv"), filepath.Join(dir, "day2.csv"), filepath.Join(dir, "base1.csv")
	mustCLI(t, "simulate", write("day1", twoSensorDay(701, "2026-05-12T07:30:00Z", 0, offA, mA, true)), "-o", day1, "--base-log", base1)
	mustCLI(t, "simulate", write("day2", twoSensorDay(702, "2026-05-13T06:45:00Z", 20, offB, mB, false)), "-o", day2)
	for _, d := range []string{"a", "b"} {
		if err := os.Mkdir(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	// Each made in the site's field, as a spin there with --reference
	// would be: the Earth's field of the scenario, |B| 49828 nT.
	ref := math.Sqrt(380*380 + 17900*17900 + 46500*46500)
	cal := func(sub string, m [3][3]float64, off [3]float64) string {
		p := saveInverseCalibration(t, filepath.Join(dir, sub), m, off)
		c, err := calibrate.Load(p)
		if err != nil {
			t.Fatal(err)
		}
		c.Reference = ref
		if err := c.Save(p); err != nil {
			t.Fatal(err)
		}
		return p
	}
	calA, calB = cal("a", mA, offA), cal("b", mB, offB)
	return day1, day2, base1, calA, calB
}

// TestLocatePerLogCalibration: two logs of two sensors, merged in one
// locate, each corrected by its own calibration (--calibration
// LOG=CAL.json, the log by its base name or as given, a bare file for the
// rest), fit the simulated 2 A pipe at every traverse; one calibration
// for both leaves day 2's sensor distortion in (residuals three times
// the noise, currents 2% off, and the mismatch warning says how to give each log its own).
// Before, --calibration took one file for every log and
// "day2.csv=cal.json" was read as a file's name (the run failed).
func TestLocatePerLogCalibration(t *testing.T) {
	dir := t.TempDir()
	day1, day2, _, calA, calB := twoSensorSurvey(t, dir)
	good := locateDoc(t, "--group-by", "group", "--reference-z", "0", "--calibration", calA, "--calibration", "day2.csv="+calB, day1, day2)
	if len(good.Groups) != 8 {
		t.Fatalf("%d groups, want 8 (four traverses a day)", len(good.Groups))
	}
	rms := map[string]float64{}
	for _, g := range good.Groups {
		rms[g.Key] = g.RMS
		if len(g.Sources) == 0 {
			t.Errorf("%s: no conductor fitted", g.Key)
			continue
		}
		s := g.Sources[0]
		// Truth: the simulated 2 A at 1.30 m below the ground the
		// sensors were carried over (reference-z 0 is the ground).
		if math.Abs(math.Abs(s.Current)-2) > math.Max(4*s.CurrentSigma, 0.01) || math.Abs(s.Depth-1.30) > math.Max(4*s.DepthSigma, 0.01) {
			t.Errorf("%s: %.4f ± %.4f A at %.4f ± %.4f m, want 2 A at 1.30 m", g.Key, s.Current, s.CurrentSigma, s.Depth, s.DepthSigma)
		}
	}
	if oneHasAll(good.Warnings, "another sensor") {
		t.Errorf("each log with its own sensor's calibration: warnings %q", good.Warnings)
	}
	// The same by the path as given, with no bare file.
	both := locateDoc(t, "--group-by", "group", "--reference-z", "0", "--calibration", day1+"="+calA, "--calibration", day2+"="+calB, day1, day2)
	for i, g := range both.Groups {
		if i < len(good.Groups) && g.RMS != good.Groups[i].RMS {
			t.Errorf("%s: rms %.4g nT with both logs named, %.4g nT with one", g.Key, g.RMS, good.Groups[i].RMS)
		}
	}
	// Sensor A's calibration on sensor B's log: the distortion shows.
	one := locateDoc(t, "--group-by", "group", "--reference-z", "0", "--calibration", calA, day1, day2)
	worse := 0
	for _, g := range one.Groups {
		// Sensor B's soft iron, a few per cent, left in: residuals of
		// 3 nT against the 1 nT noise, and the current over 1% off.
		if r, ok := rms[g.Key]; ok && g.RMS > 2.5*r && len(g.Sources) > 0 && math.Abs(math.Abs(g.Sources[0].Current)-2) > 0.02 {
			worse++
		}
	}
	if worse < 4 {
		t.Errorf("one calibration for two sensors: %d groups with residuals over 2.5 times those of their own calibration and the current over 1%% off, want day 2's four", worse)
	}
	if !oneHasAll(one.Warnings, "another sensor", "--calibration day2.csv=CAL.json") {
		t.Errorf("one calibration for two sensors: the mismatch warning does not say how to give each log its own: %q", one.Warnings)
	}
}

// TestLocatePerLogCalibrationRefusals: a LOG that is none of the logs
// given is refused, naming it and the logs; so is a log named twice, and
// two bare files.
func TestLocatePerLogCalibrationRefusals(t *testing.T) {
	dir := t.TempDir()
	day1, day2, _, calA, calB := twoSensorSurvey(t, dir)
	for _, c := range []struct {
		args []string
		want []string
	}{
		{[]string{"--calibration", "day3.csv=" + calB}, []string{"day3.csv is not one of the logs given", day1}},
		{[]string{"--calibration", "day2.csv=" + calB, "--calibration", day2 + "=" + calA}, []string{"names " + day2 + " twice"}},
		{[]string{"--calibration", calA, "--calibration", calB}, []string{"given twice without a log", "LOG=VALUE"}},
	} {
		code, _, errOut := cli(t, append(append([]string{"locate", "--group-by", "group"}, c.args...), day1, day2)...)
		if code != 2 || !oneHasAll([]string{errOut}, c.want...) {
			t.Errorf("%v: exit %d, want 2 (usage) naming %q:\n%s", c.args, code, c.want, errOut)
		}
	}
}

// TestLocateBaseOfOneDay: a base record made on day 1 only, given with
// the logs of two days, corrects day 1 and leaves day 2 as read, with a
// warning naming day 2 and what to do; given with day 2 alone, which it
// does not overlap, it is refused, saying what to do. Before, the merged
// run was refused whole.
func TestLocateBaseOfOneDay(t *testing.T) {
	dir := t.TempDir()
	day1, day2, base1, calA, calB := twoSensorSurvey(t, dir)
	type baseDoc struct {
		resultDoc
		BaseStation *struct {
			Summary string `json:"summary"`
		} `json:"base_station"`
	}
	doc := locateInto[baseDoc](t, "--group-by", "group", "--reference-z", "0", "--calibration", calA, "--calibration", "day2.csv="+calB, "--base", base1, day1, day2)
	if !oneHasAll(doc.Warnings, "does not overlap "+day2, "left without the base correction", "give a base record for each day") {
		t.Errorf("a base record of day 1 only: warnings %q", doc.Warnings)
	}
	if doc.BaseStation == nil || !strings.Contains(doc.BaseStation.Summary, filepath.Base(day1)) || !strings.Contains(doc.BaseStation.Summary, "not corrected (outside the base record): "+day2) {
		t.Errorf("base station summary %+v: want day 1 corrected and day 2 named as not", doc.BaseStation)
	}
	if len(doc.Groups) != 8 {
		t.Errorf("%d groups, want 8", len(doc.Groups))
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--calibration", calB, "--base", base1, day2)
	if code == 0 || !oneHasAll([]string{errOut}, "does not overlap", "leave --base out") {
		t.Errorf("a base record of another day only: exit %d, want a refusal saying what to do:\n%s", code, errOut)
	}
	// Two logs, neither of its day: refused too.
	m := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	sc := filepath.Join(dir, "day3.toml")
	if err := os.WriteFile(sc, []byte(twoSensorDay(703, "2026-05-14T08:00:00Z", 20, [3]float64{}, m, false)), 0o644); err != nil {
		t.Fatal(err)
	}
	day3 := filepath.Join(dir, "day3.csv")
	mustCLI(t, "simulate", sc, "-o", day3)
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--base", base1, day2, day3)
	if code == 0 || !oneHasAll([]string{errOut}, "does not overlap", "overlaps none of the 2 logs", "leave --base out") {
		t.Errorf("a base record of neither log's day: exit %d, want a refusal saying what to do:\n%s", code, errOut)
	}
}

// TestLocateSeveralLogsColumnHint: a column missing from one of several
// logs points to convert, each log with its own input flags.
func TestLocateSeveralLogsColumnHint(t *testing.T) {
	dir := t.TempDir()
	day1, day2, _, _, _ := twoSensorSurvey(t, dir)
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--column", "bx=MagX", day1, day2)
	if code == 0 || !oneHasAll([]string{errOut}, "no column", "undercurrent convert", "on each log with its own --column") {
		t.Errorf("exit %d, want a refusal pointing to convert:\n%s", code, errOut)
	}
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--column", "bx=MagX", day1)
	if code == 0 || strings.Contains(errOut, "on each log with its own") {
		t.Errorf("one log: exit %d, want a refusal without the several-logs hint:\n%s", code, errOut)
	}
}

// oneHasAll says whether one of list holds every one of subs.
func oneHasAll(list []string, subs ...string) bool {
	for _, s := range list {
		all := true
		for _, sub := range subs {
			all = all && strings.Contains(s, sub)
		}
		if all {
			return true
		}
	}
	return false
}
