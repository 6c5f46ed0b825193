package main

// The README's walk-through ("A survey, start to finish"), run exactly as a
// user types it: simulate the sensor's calibration spin, calibrate, simulate
// the Kestrel Moor survey with its base station and truth file, inspect the
// survey log, locate with the calibration and the base station, and read
// results.json. The answers are checked against the scenario's own truth
// (the distortion in its [sensor] table, its noise, and truth.csv: where
// each traverse crosses the pipe, how deep, what current); the physics of
// the forward models is checked against published values elsewhere (the
// inverse and simulate packages' tests, DOMAIN.md check values).

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"undercurrent/calibrate"
	"undercurrent/inverse/simulate"
)

// spinCalibration simulates the spin log of a scenario in
// testdata/scenarios and calibrates from it with the calibrate command,
// returning the calibration file's path.
func spinCalibration(t *testing.T, scenarioFile string) string {
	t.Helper()
	_, path := scenario(t, scenarioFile)
	dir := t.TempDir()
	spin := filepath.Join(dir, "spin.csv")
	cal := filepath.Join(dir, "cal.json")
	mustCLI(t, "simulate", path, "-o", spin)
	mustCLI(t, "calibrate", "--spin", spin, "-o", cal)
	return cal
}

// spreadRE reads the |B| spread lines the calibrate command prints.
var spreadRE = regexp.MustCompile(`\|B\| (before|after)\s+mean ([0-9.]+) nT, std ([0-9.]+) nT`)

// truthRow is one row of the truth.csv that simulate --truth writes.
type truthRow struct {
	point, dir     [3]float64
	depth, current float64
}

// readTruth reads a truth.csv by its header names, keyed by survey line.
func readTruth(t *testing.T, path string) map[string]truthRow {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) < 2 {
		t.Fatalf("%s: %d lines", path, len(recs))
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	num := func(r []string, name string) float64 {
		i, ok := col[name]
		if !ok {
			t.Fatalf("%s: no column %q in %v", path, name, recs[0])
		}
		v, err := strconv.ParseFloat(r[i], 64)
		if err != nil {
			t.Fatalf("%s: column %s: %v", path, name, err)
		}
		return v
	}
	out := map[string]truthRow{}
	for _, r := range recs[1:] {
		out[r[col["line"]]] = truthRow{
			point:   [3]float64{num(r, "east_m"), num(r, "north_m"), num(r, "up_m")},
			dir:     [3]float64{num(r, "dir_east"), num(r, "dir_north"), num(r, "dir_up")},
			depth:   num(r, "depth_m"),
			current: num(r, "current_a"),
		}
	}
	return out
}

// readResults decodes a results.json.
func readResults(t *testing.T, path string) *resultDoc {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var doc resultDoc
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return &doc
}

// walkScore summarises how far a run's answers are from the truth on the
// traverses where the straight-line model holds: the mean signed error of
// the current in its sigmas, the RMS error of the depth in its sigmas, and
// the median residual RMS of the fits.
type walkScore struct {
	currentZ, depthZ, medianRMS float64
}

func scoreRun(doc *resultDoc, truth map[string]truthRow, skip map[string]bool) walkScore {
	var zc, zd float64
	var n int
	var rms []float64
	for _, g := range doc.Groups {
		rms = append(rms, g.RMS)
		tr, ok := truth[g.Key]
		if skip[g.Key] || !ok || len(g.Sources) != 1 {
			continue
		}
		s := g.Sources[0]
		// In the sigmas of the reading noise alone: a fit whose residuals
		// are correlated along the traverse (the uncalibrated run's smooth
		// misfit) widens its sigmas (sigma_widening), and the score is of
		// the bias against the noise.
		w := math.Max(1, g.Widening)
		align := math.Copysign(1, s.Direction[0]*tr.dir[0]+s.Direction[1]*tr.dir[1]+s.Direction[2]*tr.dir[2])
		zc += (s.Current - align*tr.current) / (s.CurrentSigma / w)
		dz := (s.Depth - (tr.depth + doc.DepthReference.Z)) / (s.DepthSigma / w)
		zd += dz * dz
		n++
	}
	sort.Float64s(rms)
	return walkScore{zc / float64(n), math.Sqrt(zd / float64(n)), rms[len(rms)/2]}
}

// TestREADMEWalkthrough runs the README's survey walk-through end to end
// through the command line.
func TestREADMEWalkthrough(t *testing.T) {
	spinSc, spinPath := scenario(t, "kestrel-moor-spin.toml")
	surveySc, surveyPath := scenario(t, "kestrel-moor-step.toml")
	dir := t.TempDir()
	p := func(name string) string { return filepath.Join(dir, name) }

	// The spin and the survey are the same sensor (the brief of the
	// scenarios): the same distortion in both files.
	if spinSc.Sensor.Offset != surveySc.Sensor.Offset || spinSc.Sensor.Matrix == nil || surveySc.Sensor.Matrix == nil ||
		*spinSc.Sensor.Matrix != *surveySc.Sensor.Matrix {
		t.Fatalf("kestrel-moor-spin and kestrel-moor-step describe different sensors")
	}

	// 1. Calibrate the sensor from its spin.
	out := mustCLI(t, "simulate", spinPath, "-o", p("spin.csv"))
	if !strings.Contains(out, "2401 readings") {
		t.Errorf("simulate spin: %s", out)
	}
	out = mustCLI(t, "calibrate", "--spin", p("spin.csv"), "-o", p("cal.json"))
	spread := map[string]float64{}
	for _, m := range spreadRE.FindAllStringSubmatch(out, -1) {
		spread[m[1]], _ = strconv.ParseFloat(m[3], 64)
	}
	// After the correction the spread of |B| is the sensor noise along the
	// field: the scenario's 1 nT per axis (2,401 readings estimate it to
	// about 1.5%). Before, it is the soft iron's few percent of the field.
	noise := spinSc.Sensor.Noise
	if a := spread["after"]; !(a > 0.9*noise && a < 1.1*noise) {
		t.Errorf("|B| std after calibration %g nT, want the %g nT noise:\n%s", a, noise, out)
	}
	if b := spread["before"]; !(b > 100*noise) {
		t.Errorf("|B| std before calibration %g nT, want the soft iron's spread (hundreds of nT):\n%s", b, out)
	}
	cal, err := calibrate.Load(p("cal.json"))
	if err != nil {
		t.Fatal(err)
	}
	// The fitted offset is the scenario's hard iron (within 1 nT, the
	// noise), and the fitted matrix inverts its soft iron (symmetric, so the
	// symmetric correction is exact up to scale; its determinant is 1.0001,
	// so the default volume-keeping scale is right within 1e-4).
	for k := range 3 {
		if d := cal.Offset[k] - spinSc.Sensor.Offset[k]; math.Abs(d) > noise {
			t.Errorf("offset[%d] = %.2f nT, scenario %.2f nT", k, cal.Offset[k], spinSc.Sensor.Offset[k])
		}
	}
	m := spinSc.Sensor.Matrix
	for i := range 3 {
		for j := range 3 {
			var wm float64
			for k := range 3 {
				wm += cal.Matrix[i][k] * m[k][j]
			}
			want := 0.0
			if i == j {
				want = 1
			}
			if math.Abs(wm-want) > 3e-4 {
				t.Errorf("(W M)[%d][%d] = %.6f, want %g: the calibration does not invert the scenario's soft iron", i, j, wm, want)
			}
		}
	}

	// 2. Simulate the survey with its base station and truth, and look at it.
	mustCLI(t, "simulate", surveyPath, "-o", p("survey.csv"), "--base-log", p("base.csv"), "--truth", p("truth.csv"))
	out = mustCLI(t, "inspect", p("survey.csv"))
	for _, want := range []string{"rows      4221", "frame     enu", "(10 Hz)", "20 gaps"} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect output lacks %q:\n%s", want, out)
		}
	}

	// 3. Locate with the calibration and the base station.
	mustCLI(t, "locate", "--calibration", p("cal.json"), "--base", p("base.csv"), "--group-by", "group", p("survey.csv"), "-o", p("results"))
	for _, f := range []string{"results.json", "results.csv", "route.geojson", "report.html"} {
		if _, err := os.Stat(filepath.Join(p("results"), f)); err != nil {
			t.Errorf("results: %v", err)
		}
	}

	// 4. Read the results against truth.csv.
	doc := readResults(t, filepath.Join(p("results"), "results.json"))
	truth := readTruth(t, p("truth.csv"))
	if doc.DepthReference.Kind != "mean-sensor-height" || math.Abs(doc.DepthReference.Z-surveySc.Sensor.Height) > 1e-9 {
		t.Errorf("depth reference %q at %g m, want mean-sensor-height at the scenario's %g m",
			doc.DepthReference.Kind, doc.DepthReference.Z, surveySc.Sensor.Height)
	}
	if len(doc.Groups) != len(truth) {
		t.Fatalf("%d groups, truth has %d traverses", len(doc.Groups), len(truth))
	}
	// As in TestE2ECurrentStep: T11 crosses the pipe at its bend (current
	// only, within 2%), and at T13 and T14, 10 m from the defect, the
	// straight-line model is off by up to 2% in current.
	modelLimited := map[string]bool{"T11": true, "T13": true, "T14": true}
	for _, g := range doc.Groups {
		tr := truth[g.Key]
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want 1", g.Key, len(g.Sources))
			continue
		}
		s := g.Sources[0]
		// truth.csv depths are below the ground; the document's are below
		// the mean sensor height.
		c := simulate.Crossing{Point: tr.point, Dir: tr.dir, Current: tr.current, Depth: tr.depth + doc.DepthReference.Z}
		if g.Key == "T11" {
			if math.Abs(s.Current-c.Current*math.Copysign(1, s.Direction[0]*c.Dir[0])) > 0.02*c.Current+kSigma*s.CurrentSigma {
				t.Errorf("T11: current %.4g A, true %.4g", s.Current, c.Current)
			}
			continue
		}
		tol := 0.0
		if modelLimited[g.Key] {
			tol = 0.02
		}
		checkCrossing(t, g.Key, s, c, tol, 0)
	}
	// The current step: truth.csv's currents at T13 and T14 either side of
	// the defect at chainage 250 m.
	trueStep := truth["T14"].current - truth["T13"].current
	var steps int
	for _, f := range doc.Findings {
		if f.Kind != "current-step" {
			continue
		}
		steps++
		if keys := strings.Join(f.Groups, ","); !strings.Contains(keys, "T13,T14") {
			t.Errorf("step between %v, want T13 and T14: %s", f.Groups, f.Message)
		}
		for _, v := range f.Values {
			if v.Name == "step" && !within(v.Value, trueStep, v.Sigma) {
				t.Errorf("step %.4g ± %.2g A, truth.csv gives %.4g A", v.Value, v.Sigma, trueStep)
			}
		}
	}
	if steps != 1 {
		t.Errorf("%d current-step findings, want 1", steps)
	}

	// Without the calibration the same survey comes out worse: the soft
	// iron scales and mixes the pipe's field, so the currents are biased
	// low by several sigma on average, the depths miss by more, and the
	// fits no longer match the 1 nT noise.
	mustCLI(t, "locate", "--base", p("base.csv"), "--group-by", "group", p("survey.csv"), "-o", p("results-raw"))
	raw := readResults(t, filepath.Join(p("results-raw"), "results.json"))
	skip := map[string]bool{"T11": true, "T13": true, "T14": true}
	with, without := scoreRun(doc, truth, skip), scoreRun(raw, truth, skip)
	t.Logf("calibrated:   mean current error %+.2f sigma, RMS depth error %.2f sigma, median residual %.3f nT", with.currentZ, with.depthZ, with.medianRMS)
	t.Logf("uncalibrated: mean current error %+.2f sigma, RMS depth error %.2f sigma, median residual %.3f nT", without.currentZ, without.depthZ, without.medianRMS)
	if math.Abs(with.currentZ) > 1 || with.depthZ > 2 || math.Abs(with.medianRMS-noise) > 0.1*noise {
		t.Errorf("calibrated run does not match the truth: %+v", with)
	}
	if !(without.currentZ < -2 && math.Abs(without.currentZ) > 2*math.Abs(with.currentZ)) {
		t.Errorf("uncalibrated currents are off by %+.2f sigma on average, calibrated %+.2f: the calibration should matter", without.currentZ, with.currentZ)
	}
	if !(without.depthZ > 1.5*with.depthZ) {
		t.Errorf("uncalibrated depths off by %.2f sigma RMS, calibrated %.2f: the calibration should matter", without.depthZ, with.depthZ)
	}
	if !(without.medianRMS > 1.2*noise) {
		t.Errorf("uncalibrated fits' median residual %.3f nT, want visibly above the %g nT noise", without.medianRMS, noise)
	}
}
