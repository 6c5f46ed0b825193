package main

// End-to-end tests: simulate a scenario from testdata/scenarios, run locate
// on the log as a user would (through the command line), and check that the
// result document recovers the scenario within its own reported
// uncertainty. The ground truth comes from the scenario (Crossings: where
// each traverse passes over each conductor), the forward models from the
// inverse package, whose field values are checked against the DOMAIN.md
// published values in its own tests.

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
	"undercurrent/ingest/ingesttest"

	"gonum.org/v1/gonum/mat"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// kSigma is how many reported standard deviations an estimate may differ
// from the truth. With about a hundred compared quantities, 4 sigma keeps
// the chance that an unbiased estimator trips the test by chance near 1%
// (two-sided normal tail 6.3e-5 per quantity); the seeds are fixed, so the
// test is deterministic.
const kSigma = 4

// resultDoc is the part of the result document the tests read, decoded by
// the field names the issue specifies (so a renamed field fails here).
type resultDoc struct {
	Warnings       []string `json:"warnings"`
	Notes          []string `json:"notes"`
	DepthReference struct {
		Kind        string  `json:"kind"`
		Z           float64 `json:"z_m"`
		GroundSigma float64 `json:"ground_sigma_m"`
	} `json:"depth_reference"`
	Signal struct {
		Mode       string    `json:"mode"`
		NuisanceHz []float64 `json:"nuisance_hz"`
	} `json:"signal"`
	Frame struct {
		Origin *struct {
			Lat float64 `json:"lat_deg"`
		} `json:"origin"`
	} `json:"frame"`
	Groups []struct {
		Key        string      `json:"key"`
		Log        string      `json:"log"`
		Chainage   *float64    `json:"chainage_m"`
		Points     int         `json:"points"`
		RMS        float64     `json:"rms_nt"`
		Chi2       float64     `json:"chi2"`
		DOF        int         `json:"dof"`
		Background [3]float64  `json:"background_nt"`
		OK         bool        `json:"ok"`
		Problem    string      `json:"problem"`
		Sources    []docSource `json:"sources"`
		Notes      []string    `json:"notes"`
		Widening   float64     `json:"sigma_widening"`
		RampHz     *float64    `json:"phase_ramp_hz"`
		RampSigma  *float64    `json:"phase_ramp_sigma_hz"`
		Criteria   []struct {
			Count    int    `json:"count"`
			Chosen   bool   `json:"chosen"`
			Rejected string `json:"rejected"`
		} `json:"criteria"`
	} `json:"groups"`
	Findings   []docFinding `json:"findings"`
	Conductors []struct {
		Number int     `json:"number"`
		Offset float64 `json:"offset_m"`
		Route  struct {
			Stations []struct {
				Key   string   `json:"key"`
				Used  bool     `json:"used"`
				Cover *float64 `json:"cover_m"`
			} `json:"stations"`
		} `json:"route"`
	} `json:"conductors"`
}

// docFinding is a finding as the result document writes it.
type docFinding struct {
	Kind      string     `json:"kind"`
	Severity  string     `json:"severity"`
	From      float64    `json:"chainage_from_m"`
	To        float64    `json:"chainage_to_m"`
	Position  [3]float64 `json:"position_m"`
	Groups    []string   `json:"groups"`
	Message   string     `json:"message"`
	Conductor int        `json:"conductor"`
	Values    []struct {
		Name  string  `json:"name"`
		Value float64 `json:"value"`
		Sigma float64 `json:"sigma"`
	} `json:"values"`
}

// value returns the finding's value of that name and its sigma, zeros when
// it has none.
func (f docFinding) value(name string) (v, sigma float64) {
	for _, x := range f.Values {
		if x.Name == name {
			return x.Value, x.Sigma
		}
	}
	return 0, 0
}

type docSource struct {
	Kind         string     `json:"kind"`
	Point        [3]float64 `json:"point_m"`
	Direction    [3]float64 `json:"direction"`
	Current      float64    `json:"current_a"`
	CurrentSigma float64    `json:"current_sigma_a"`
	Phase        *float64   `json:"phase_deg"`
	PhaseSigma   *float64   `json:"phase_sigma_deg"`
	Depth        float64    `json:"depth_m"`
	DepthSigma   float64    `json:"depth_sigma_m"`
	Offset       float64    `json:"offset_m"`
	OffsetSigma  float64    `json:"offset_sigma_m"`
	Azimuth      float64    `json:"azimuth_deg"`
	AzimuthSig   float64    `json:"azimuth_sigma_deg"`
}

// cli runs the command line in-process and returns its exit code and
// output.
func cli(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errOut bytes.Buffer
	code = run(context.Background(), args, &out, &errOut)
	return code, out.String(), errOut.String()
}

// mustCLI runs the command line and fails the test unless it succeeds.
func mustCLI(t *testing.T, args ...string) string {
	t.Helper()
	code, out, errOut := cli(t, args...)
	if code != 0 {
		t.Fatalf("undercurrent %s: exit %d\n%s", strings.Join(args, " "), code, errOut)
	}
	return out
}

// scenario loads a scenario from testdata/scenarios.
func scenario(t testing.TB, name string) (*simulate.Scenario, string) {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "scenarios", name)
	sc, err := simulate.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return sc, path
}

// locateJSON simulates the scenario (with its base station when it has
// one), runs locate with args on the log and decodes the document.
func locateJSON(t *testing.T, scenarioFile string, args ...string) (*simulate.Scenario, *resultDoc) {
	t.Helper()
	sc, path := scenario(t, scenarioFile)
	dir := t.TempDir()
	log := filepath.Join(dir, "log.csv")
	sim := []string{"simulate", path, "-o", log}
	if sc.Base != nil {
		sim = append(sim, "--base-log", filepath.Join(dir, "base.csv"))
	}
	mustCLI(t, sim...)
	for i, a := range args {
		if a == "BASE" {
			args[i] = filepath.Join(dir, "base.csv")
		}
	}
	out := mustCLI(t, append(append([]string{"locate", "--json"}, args...), log)...)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("locate --json output is not JSON: %v\n%.500s", err, out)
	}
	return sc, &doc
}

// within reports whether got is within kSigma reported sigmas of want.
func within(got, want, sigma float64) bool {
	return sigma > 0 && math.Abs(got-want) <= kSigma*sigma
}

// planDistance is the signed horizontal distance of p from the line through
// q with direction d, positive to the right looking along d.
func planDistance(p, q, d [3]float64) float64 {
	h := math.Hypot(d[0], d[1])
	return ((p[0]-q[0])*d[1] - (p[1]-q[1])*d[0]) / h
}

// matchSource returns the fitted source passing nearest (in plan) to the
// true crossing point.
func matchSource(srcs []docSource, c simulate.Crossing) (docSource, bool) {
	best, bestD := docSource{}, math.Inf(1)
	for _, s := range srcs {
		if d := math.Abs(planDistance(c.Point, s.Point, s.Direction)); d < bestD {
			best, bestD = s, d
		}
	}
	return best, !math.IsInf(bestD, 1)
}

// checkCrossing compares one fitted source with the true conductor under
// a traverse: current (signed along the fitted direction), depth below the
// ground (the tests run locate with --reference-z 0), horizontal position
// and, for AC, phase. tolFrac widens the current tolerance by a fraction
// of the current (and the phase tolerance by tolFrac radians), and tolM the
// depth and position tolerances by a length, where the test says why the
// model cannot match exactly.
func checkCrossing(t *testing.T, key string, s docSource, c simulate.Crossing, tolFrac, tolM float64) {
	t.Helper()
	align := s.Direction[0]*c.Dir[0] + s.Direction[1]*c.Dir[1] + s.Direction[2]*c.Dir[2]
	if math.Abs(align) < math.Cos(10*math.Pi/180) {
		t.Errorf("%s: fitted direction %v is more than 10 degrees from the true %v", key, s.Direction, c.Dir)
		return
	}
	want := c.Current * math.Copysign(1, align)
	phase := c.Phase
	if c.Frequency > 0 {
		// RMS currents are magnitudes; a reversed direction shows as a
		// phase turned by 180 degrees.
		want = math.Abs(c.Current)
		if c.Current*align < 0 {
			phase += 180
		}
	}
	if d := math.Abs(s.Current - want); d > kSigma*s.CurrentSigma+tolFrac*math.Abs(want) || s.CurrentSigma <= 0 {
		t.Errorf("%s: current %.5g ± %.2g A, true %.5g A (off by %.1f sigma)", key, s.Current, s.CurrentSigma, want, d/s.CurrentSigma)
	}
	if d := math.Abs(s.Depth - c.Depth); d > kSigma*s.DepthSigma+tolM || s.DepthSigma <= 0 {
		t.Errorf("%s: depth %.5g ± %.2g m, true %.5g m (off by %.1f sigma)", key, s.Depth, s.DepthSigma, c.Depth, math.Abs(s.Depth-c.Depth)/s.DepthSigma)
	}
	if off := planDistance(c.Point, s.Point, s.Direction); math.Abs(off) > kSigma*s.OffsetSigma+tolM+1e-9 {
		t.Errorf("%s: the true conductor passes %.4g m from the fitted one, sigma %.2g m", key, off, s.OffsetSigma)
	}
	if c.Frequency > 0 {
		if s.Phase == nil || s.PhaseSigma == nil {
			t.Fatalf("%s: AC source without phase_deg", key)
		}
		d := math.Remainder(*s.Phase-phase, 360)
		// A fractional error tolFrac in quadrature is a phase error of
		// tolFrac radians.
		if math.Abs(d) > kSigma**s.PhaseSigma+tolFrac*180/math.Pi {
			t.Errorf("%s: phase %.4g ± %.2g deg, true %.4g (off by %.1f sigma)", key, *s.Phase, *s.PhaseSigma, phase, math.Abs(d) / *s.PhaseSigma)
		}
	}
}

// crossingsByLine groups the scenario's crossings by survey line.
func crossingsByLine(sc *simulate.Scenario) map[string][]simulate.Crossing {
	m := map[string][]simulate.Crossing{}
	for _, c := range sc.Crossings() {
		m[c.Line] = append(m[c.Line], c)
	}
	return m
}

// TestE2ESingleLine: one straight DC line, seven traverses, fitted one
// traverse at a time, and all together after the base-station correction
// (where the azimuth is identifiable and must be recovered too).
func TestE2ESingleLine(t *testing.T) {
	sc, doc := locateJSON(t, "single-line.toml", "--group-by", "group", "--reference-z", "0")
	if doc.DepthReference.Kind != "ground" || doc.Signal.Mode != "dc" {
		t.Errorf("depth reference %q, signal %q; want ground, dc", doc.DepthReference.Kind, doc.Signal.Mode)
	}
	truth := crossingsByLine(sc)
	if len(doc.Groups) != len(sc.Lines()) {
		t.Fatalf("%d groups, want %d", len(doc.Groups), len(sc.Lines()))
	}
	for _, g := range doc.Groups {
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want 1", g.Key, len(g.Sources))
			continue
		}
		checkCrossing(t, g.Key, g.Sources[0], truth[g.Key][0], 0, 0)
	}
	for _, f := range doc.Findings {
		t.Errorf("unexpected finding on a clean survey: %s", f.Message)
	}

	// All traverses together, base-corrected: one group, azimuth free.
	_, all := locateJSON(t, "single-line.toml", "--base", "BASE", "--reference-z", "0", "--count", "1")
	if len(all.Groups) != 1 || all.Groups[0].Key != "" || len(all.Groups[0].Sources) != 1 {
		t.Fatalf("ungrouped run: %d groups", len(all.Groups))
	}
	s := all.Groups[0].Sources[0]
	c := sc.Conductors[0]
	tru := simulate.Crossing{Point: *c.Point, Dir: [3]float64{math.Sqrt(3) / 2, 0.5, 0}, Current: c.Current, Depth: -c.Point[2]}
	checkCrossing(t, "all traverses", s, tru, 0, 0)
	if !within(s.Azimuth, 60, s.AzimuthSig) {
		t.Errorf("azimuth %.5g ± %.2g deg, true 60", s.Azimuth, s.AzimuthSig)
	}
}

// TestE2ETwoConductors: two parallel cables carrying opposite currents;
// the automatic choice must find two conductors under every traverse and
// recover both.
func TestE2ETwoConductors(t *testing.T) {
	sc, doc := locateJSON(t, "two-conductors.toml", "--group-by", "group", "--reference-z", "0")
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if len(g.Sources) != 2 {
			t.Errorf("%s: %d sources, want 2", g.Key, len(g.Sources))
			continue
		}
		if len(truth[g.Key]) != 2 {
			t.Fatalf("%s: %d true crossings", g.Key, len(truth[g.Key]))
		}
		for _, c := range truth[g.Key] {
			s, _ := matchSource(g.Sources, c)
			checkCrossing(t, g.Key+" "+sc.Conductors[c.Conductor].Name, s, c, 0, 0)
		}
	}
}

// TestE2ECurrentStep: the Kestrel Moor pipeline loses 0.30 A at a coating
// defect at chainage 250 m, between traverses T13 and T14, on top of a
// slow exponential decay; DC with a base-station correction and the
// sensor's calibration from its spin (kestrel-moor-spin.toml: the survey
// sensor has a hard-iron offset and soft iron, and without the calibration
// its currents are biased low by several sigma). The step must be found
// between exactly those traverses and nowhere else.
func TestE2ECurrentStep(t *testing.T) {
	cal := spinCalibration(t, "kestrel-moor-spin.toml")
	sc, doc := locateJSON(t, "kestrel-moor-step.toml", "--calibration", cal, "--base", "BASE", "--group-by", "group", "--reference-z", "0")
	truth := crossingsByLine(sc)
	// Each traverse is fitted as an infinite straight line. Two places
	// break that model in this scenario, and there the current may be off
	// by up to 2% beyond its sigma: T11 crosses the pipe at its bend, and
	// T13 and T14 lie 10 m from the defect, where the readings at the ends
	// of the 12 m traverse see the current change along the pipe.
	modelLimited := map[string]bool{"T11": true, "T13": true, "T14": true}
	for _, g := range doc.Groups {
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want 1", g.Key, len(g.Sources))
			continue
		}
		tol := 0.0
		if modelLimited[g.Key] {
			tol = 0.02
		}
		c := truth[g.Key][0]
		s := g.Sources[0]
		// The depth and position are checked on the traverses away from
		// the bend, where the pipe is straight within the traverse.
		if g.Key == "T11" {
			if math.Abs(s.Current-c.Current*math.Copysign(1, s.Direction[0]*c.Dir[0])) > 0.02*c.Current+kSigma*s.CurrentSigma {
				t.Errorf("T11: current %.4g A, true %.4g", s.Current, c.Current)
			}
			continue
		}
		checkCrossing(t, g.Key, s, c, tol, 0)
	}
	var steps int
	for _, f := range doc.Findings {
		if f.Kind != "current-step" {
			continue
		}
		steps++
		// The defect lies between T13 and T14. The end effect described
		// above can make the neighbours show part of the fall too, which
		// the route reports as one step over a run of traverses; the
		// finding's position is then the middle of its largest part. Either
		// way the bracket must hold the defect and the position must be
		// midway between T13 and T14 (the fitted pipe points at chainage
		// 240 and 260 m), near the defect at (248.95, 1.10).
		keys := strings.Join(f.Groups, ",")
		if !strings.Contains(keys, "T13,T14") || len(f.Groups) > 4 {
			t.Errorf("step found between %v, want T13 and T14: %s", f.Groups, f.Message)
			continue
		}
		if !(f.From < 250 && 250 < f.To) || f.To-f.From > 61 {
			t.Errorf("step bracketed at chainage %g-%g m, want it around 250 m", f.From, f.To)
		}
		if d := math.Hypot(f.Position[0]-248.95, f.Position[1]-1.10); d > 2 {
			t.Errorf("step placed at %v, %.2f m from the defect at (248.95, 1.10)", f.Position, d)
		}
		var size, sigma float64
		for _, v := range f.Values {
			if v.Name == "step" {
				size, sigma = v.Value, v.Sigma
			}
		}
		// The true step is the discontinuity at the defect, 1.7156 A
		// upstream to 1.4088 A downstream (the scenario's currents): the
		// levels either side carried to the defect by the smooth decay. It
		// must match within its reported sigma and stand out by more than
		// 10 sigma.
		const trueStep = 1.4088 - 1.7156
		if !within(size, trueStep, sigma) || math.Abs(size) < 10*sigma {
			t.Errorf("step %.4g ± %.2g A, true %.4g A: %s", size, sigma, trueStep, f.Message)
		}
		if f.Severity != "warning" {
			t.Errorf("step severity %q, want warning", f.Severity)
		}
	}
	if steps != 1 {
		t.Errorf("%d current steps found, want exactly 1", steps)
	}
	if doc.Frame.Origin == nil {
		t.Error("the geo-referenced log lost its origin")
	}
}

// TestE2EACWalk: a 50 Hz cable walked at 1 m/s with the sensor logging at
// 2 kHz; locate demodulates 0.1 s windows and fits RMS current and phase.
func TestE2EACWalk(t *testing.T) {
	sc, doc := locateJSON(t, "ac-walk-2khz.toml", "--freq", "50", "--window", "0.1", "--group-by", "group", "--reference-z", "0")
	if doc.Signal.Mode != "ac" {
		t.Errorf("signal %q, want ac", doc.Signal.Mode)
	}
	truth := crossingsByLine(sc)
	// The amplitude changes as the sensor walks over the cable. Its mean
	// over a window (about L^2/(12 h^2) below the field at the window's
	// centre near the peak) is modelled by the fit (inverse.Problem.Travel),
	// and its linear change across the window by the windows' sine fit
	// (calibrate.DemodSettings: without that, a change a1 of the amplitude
	// left a term a1/(2 omega) in quadrature, which the line fit read as a
	// shift of the cable by 1.4 mm, 20 sigma, alternating with the walking
	// direction, and as a weak second source). So current, depth, phase and
	// position need no allowance, and the fit must find the cable alone.
	for _, g := range doc.Groups {
		// 6 m at 1 m/s in 0.1 s windows.
		if g.Points < 55 || g.Points > 61 {
			t.Errorf("%s: %d windows, want about 60", g.Key, g.Points)
		}
		if len(g.Sources) == 0 {
			t.Errorf("%s: no sources", g.Key)
			continue
		}
		for _, extra := range g.Sources[1:] {
			t.Errorf("%s: a second source of %.3g A beside the %.3g A cable", g.Key, extra.Current, g.Sources[0].Current)
		}
		checkACCrossing(t, g.Key, g.Sources[0], truth[g.Key][0])
	}
}

// checkACCrossing is checkCrossing for the AC walk: current, phase, depth
// and the position across the cable within kSigma sigma, with no allowance.
func checkACCrossing(t *testing.T, key string, s docSource, c simulate.Crossing) {
	t.Helper()
	checkCrossing(t, key, s, c, 0, 0)
	if d := math.Abs(s.Depth - c.Depth); d > kSigma*s.DepthSigma {
		t.Errorf("%s: depth %.5g ± %.2g m, true %.5g m (off by %.1f sigma)", key, s.Depth, s.DepthSigma, c.Depth, d/s.DepthSigma)
	}
}

// TestE2EWindowTravel: a window of 0.2 s walked at 1 m/s averages the
// field over 0.2 m of travel. Over the cable of the AC walk (0.8 m deep,
// sensor 0.3 m up: 1.1 m away) the field of a line near its peak falls as
// 1 - x^2/h^2 (Biot-Savart), so the average reads low by L^2/(12 h^2) =
// 0.28%, far more than the noise allows. locate models each window's path
// average (inverse.Problem.Travel), so 0.2 s windows recover the cable as
// well as 0.1 s windows do, under the same allowances as TestE2EACWalk, and
// raise no travel warning. Windows of 1.4 s (1.27 times the distance) leave
// a quadrature remainder of about 3.6e-4 (L/h)^6 = 0.15%, over the 0.1% at
// which locate warns.
func TestE2EWindowTravel(t *testing.T) {
	sc, doc := locateJSON(t, "ac-walk-2khz.toml", "--freq", "50", "--window", "0.2", "--group-by", "group", "--reference-z", "0")
	for _, w := range doc.Warnings {
		if strings.HasPrefix(w, "AC windows") {
			t.Errorf("0.2 s windows (travel modelled) warned: %s", w)
		}
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if len(g.Sources) == 0 {
			t.Errorf("%s: no sources", g.Key)
			continue
		}
		checkACCrossing(t, g.Key, g.Sources[0], truth[g.Key][0])
	}
	_, doc = locateJSON(t, "ac-walk-2khz.toml", "--freq", "50", "--window", "1.4", "--group-by", "group", "--reference-z", "0")
	l := sc.Survey.Speed * 1.4
	h := 0.8 + sc.Sensor.Height
	want := 100 * 720 * math.Pow(l/(2*h), 6) / 31500
	var got float64
	for _, w := range doc.Warnings {
		if i := strings.Index(w, "% near the peak"); i > 0 && strings.HasPrefix(w, "AC windows") {
			j := strings.LastIndex(w[:i], " ")
			got, _ = strconv.ParseFloat(w[j+1:i], 64)
		}
	}
	// The warning takes the fitted depth and the travel from the windows'
	// positions; the sixth power magnifies their errors: allow 25%.
	if math.Abs(got-want) > 0.25*want {
		t.Errorf("window travel remainder %.3g%%, want %.3g%% (warnings %q)", got, want, doc.Warnings)
	}
}

// TestDemo runs the demo into a new directory and checks it holds the log
// and the four result files, that the report is a page with plots and the
// cautions, and that the findings include the scenario's earth fault and
// shallow stretch where they are.
func TestDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo simulates 155,000 readings")
	}
	dir := filepath.Join(t.TempDir(), "demo")
	out := mustCLI(t, "demo", "-o", dir)
	if !strings.Contains(out, filepath.Join(dir, "report.html")) {
		t.Errorf("demo does not say where the report is:\n%s", out)
	}
	// The printed command reruns the fit with every setting the demo used,
	// the cover code and an output directory included, and its summary
	// gives each AC current's phase with its sigma.
	_, rerun, ok := strings.Cut(out, "rerun the fit with:\n  ")
	rerun, _, _ = strings.Cut(rerun, "\n")
	args := shellWords(rerun)
	if !ok || len(args) < 2 || args[0] != "undercurrent" || !strings.Contains(rerun, "--cover-code 'UK 11 kV") || !strings.Contains(rerun, " -o ") {
		t.Fatalf("demo's rerun command %q lacks settings", rerun)
	}
	summary := mustCLI(t, args[1:]...)
	if !regexp.MustCompile(`± [0-9.]+ ∠-?[0-9.]+ ± [0-9.]+°`).MatchString(summary) {
		t.Errorf("AC summary lacks the phase sigma:\n%s", summary)
	}
	if _, err := os.Stat(filepath.Join(dir+"-rerun", "results.json")); err != nil {
		t.Errorf("the rerun wrote no results: %v", err)
	}
	for _, name := range append([]string{demoLog}, resultFiles...) {
		fi, err := os.Stat(filepath.Join(dir, name))
		if err != nil || fi.Size() == 0 {
			t.Errorf("%s: missing or empty (%v)", name, err)
		}
	}
	html, _ := os.ReadFile(filepath.Join(dir, "report.html"))
	// The summary's depth range, the cover first: the shallowest from
	// every station (the shallow stretch: 0.401 ± 0.020 m of cover at T13,
	// the scenario's 0.4029 m, 0.70 m below the sensors), the deepest from those
	// that fit soundly (1.29 m below the sensors; the poor fit at the
	// bend, T19, read 1.34 m), saying so.
	for _, want := range []string{"<svg", "live", "Fenwick Lane", "Conductor 1: cover (depth below ground) is 0.401 to 0.992 m (shallowest at chainage 60 m; deeper only where the fit is poor); that is 0.70 to 1.29 m below the sensors"} {
		if !bytes.Contains(html, []byte(want)) {
			t.Errorf("report.html does not contain %q", want)
		}
	}
	data, err := os.ReadFile(filepath.Join(dir, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc resultDoc
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Groups) != 31 {
		t.Errorf("%d groups, want 31 traverses", len(doc.Groups))
	}
	demoStationsAgreeWithTruth(t, data)
	// Each group names its log as inputs[] does, where the log now is,
	// not the staging directory it was fitted in (found in review: a
	// .demo.tmp-DIGITS path that no longer exists), and so do the CSV
	// and the GeoJSON.
	var inputs struct {
		Inputs []struct {
			Path string `json:"path"`
		} `json:"inputs"`
	}
	if err := json.Unmarshal(data, &inputs); err != nil || len(inputs.Inputs) != 1 || inputs.Inputs[0].Path != filepath.Join(dir, demoLog) {
		t.Errorf("inputs %+v (%v), want the log at %s", inputs.Inputs, err, filepath.Join(dir, demoLog))
	}
	for _, g := range doc.Groups {
		if g.Log != filepath.Join(dir, demoLog) {
			t.Errorf("%s: log %q, want %q as inputs[] names it", g.Key, g.Log, filepath.Join(dir, demoLog))
			break
		}
	}
	for _, name := range []string{"results.json", "results.csv", "route.geojson", "findings.csv", "report.html"} {
		b, _ := os.ReadFile(filepath.Join(dir, name))
		if bytes.Contains(b, []byte(".demo.tmp-")) {
			t.Errorf("%s names the staging directory", name)
		}
	}
	// Each automatic count stops at a count it rejects, and says why
	// (or at the most it may try, which it then chooses: T07's refit
	// with the magnetised object); only a count whose lines collapsed
	// into a line dipole is passed over for more lines.
	for _, g := range doc.Groups {
		chosen := 0
		for i, c := range g.Criteria {
			if c.Chosen {
				chosen++
			}
			if last := i == len(g.Criteria)-1; last && !c.Chosen && c.Rejected == "" {
				t.Errorf("%s: the count stopped at %d lines without saying why: %+v", g.Key, c.Count, g.Criteria)
			} else if !last && c.Rejected != "" && !strings.Contains(c.Rejected, "more lines tried") {
				t.Errorf("%s: %d lines rejected (%s) but more were tried", g.Key, c.Count, c.Rejected)
			}
		}
		if chosen != 1 {
			t.Errorf("%s: %d counts chosen", g.Key, chosen)
		}
	}
	var fault, shallow, object bool
	for _, f := range doc.Findings {
		switch f.Kind {
		case "current-step":
			// The fault is at chainage 112.5 m, between T23 and T24; it
			// is the only step.
			if f.From <= 112.5 && 112.5 <= f.To && f.Values != nil && f.Values[0].Value < 0 {
				fault = true
				// 42 A upstream, 33 A downstream (the scenario's
				// currents): sized from the levels either side, not
				// from the smeared traverses beside the fault.
				if v := f.Values[0]; v.Name != "step" || !within(v.Value, 33-42, v.Sigma) {
					t.Errorf("earth fault sized %+v, want -9 A within %d sigma: %s", v, kSigma, f.Message)
				}
				// And located: most likely at 112.5 m within its sigma's
				// reach. A rule that merged steps touching the bend at
				// T19 into one across it dropped the location (found in
				// review).
				located := false
				for _, v := range f.Values {
					if v.Name == "location (chainage)" {
						located = true
						if !within(v.Value, 112.5, v.Sigma) {
							t.Errorf("earth fault located at %.2f ± %.2f m, want 112.5 m within %d sigma", v.Value, v.Sigma, kSigma)
						}
					}
				}
				if !located {
					t.Errorf("earth fault not located: %s", f.Message)
				}
			} else {
				t.Errorf("a step where there is none: %s", f.Message)
			}
		case "dipole-anomaly":
			// The buried steel object of the scenario, at (29.67, 5.99)
			// and 0.60 m below ground (0.90 m below the sensors carried
			// 0.3 m up): found by a dipole search beside T07, placed
			// within its reported sigmas.
			if strings.Join(f.Groups, ",") != "T07" {
				t.Errorf("a magnetised object away from T07: %s", f.Message)
				continue
			}
			object = true
			want := map[string]float64{"east": 29.67, "north": 5.99, "depth below ground": 0.60}
			// The object's position comes out 17-19 mm east of the truth
			// whether the windows are demodulated with a constant
			// amplitude or with its slope, while its sigma, which counts
			// the reading noise only (README, "Uncertainty"), fell from
			// 8 mm to 3 mm with the slope's better fit: a bias of the
			// scene's model (the conductors beside it fitted as straight
			// lines, most likely; not traced), allowed for here as 2 cm.
			allow := map[string]float64{"east": 0.02, "north": 0.02}
			seen := 0
			for _, v := range f.Values {
				if w, ok := want[v.Name]; ok {
					seen++
					if !(math.Abs(v.Value-w) <= kSigma*v.Sigma+allow[v.Name]) || !(v.Sigma > 0) {
						t.Errorf("object %s %.3f ± %.3f m, true %.2f m", v.Name, v.Value, v.Sigma, w)
					}
				}
			}
			if seen != 3 {
				t.Errorf("object finding gives %d of east, north and depth: %+v", seen, f.Values)
			}
			if d := math.Hypot(f.Position[0]-29.67, f.Position[1]-5.99); d > 0.5 {
				t.Errorf("object finding placed at %v, %.2f m from the object", f.Position, d)
			}
		case "current-anomaly":
			// The steel object lies 4 m from the cable at T07 (chainage
			// 30 m); the finding may name T07's neighbours too.
			if strings.Contains(strings.Join(f.Groups, ","), "T07") && f.From >= 24.9 && f.From <= 30.1 && f.To >= 29.9 && f.To <= 35.1 {
				object = true
			} else {
				t.Errorf("an anomaly away from the steel object: %s", f.Message)
			}
		case "weak-source":
			// The scenario has no third conductor; a weak, steep source
			// the fit adds where the cable rises (chainage 52-58 m) or
			// dives again (72-78 m) is reported as a caution at most,
			// near the change of depth. (Since a single traverse's
			// azimuth is searched 80 degrees either side of square, T17,
			// 2 m past the lower kink, fitted one there: 0.85 A dipping 72
			// degrees, its RMS misfit down from 7.0 to 1.1 nT. Since the
			// demo's cables run on beyond the survey it is T13, 2 m past
			// the upper kink: 1.03 A dipping 71 degrees, 13.3 to 1.3 nT.)
			if f.From < 50 || f.From > 82 || f.Severity == "warning" {
				t.Errorf("weak source away from the cable's rise, or a warning: %s", f.Message)
			}
		case "shallow-cover":
			// 0.4 m of cover from chainage 58 m to 72 m, its sigma
			// including the demo's 0.02 m for the ground level.
			if f.From <= 65 && 65 <= f.To && f.Conductor == 0 {
				shallow = true
				if v := f.Values[0]; v.Sigma < 0.02 || !within(v.Value, 0.40, v.Sigma) {
					t.Errorf("shallow cover %+v, want 0.40 m within %d sigma and a sigma of at least the ground's 0.02 m", v, kSigma)
				}
				// The cover is under the 0.60 m minimum from about 55.8
				// to 74.2 m (the scenario's vertices, interpolated as
				// inverse/route's TestCoverBracketHoldsTrueCrossings does),
				// between traverses: the range must hold both, not stop at
				// the failing T13 and T15 (60-70 m; found in review).
				if f.From > 55.8 || f.To < 74.2 {
					t.Errorf("shallow stretch %.1f-%.1f m, want it to hold 55.8-74.2 m", f.From, f.To)
				}
			}
		}
	}
	// The summary line counts as sound only the traverses no poor-fit
	// caution or warning names and that are not left out of the profile
	// as a magnetised object (a dipole-anomaly finding names it first).
	poor := map[string]bool{}
	for _, f := range doc.Findings {
		if f.Kind == "poor-fit" && f.Severity != "info" {
			for _, k := range f.Groups {
				poor[k] = true
			}
		}
	}
	objects := 0
	for _, f := range doc.Findings {
		if f.Kind == "dipole-anomaly" && len(f.Groups) > 0 && !poor[f.Groups[0]] {
			objects++
		}
	}
	if want := fmt.Sprintf("located: %d of 31 traverses fitted soundly", 31-len(poor)-objects); !strings.Contains(out, want) {
		t.Errorf("demo summary does not say %q (%d traverses have poor-fit cautions, %d objects):\n%s", want, len(poor), objects, out)
	}
	if g := doc.DepthReference.GroundSigma; g != 0.02 {
		t.Errorf("depth_reference.ground_sigma_m %g, want the demo's 0.02", g)
	}
	// The LV feeder, 2.6 m to the south of the cable (to the right looking
	// along it) at 0.7 m of cover, is followed as conductor 2, at T07 too,
	// where the magnetised object is fitted beside the conductors (that
	// group gave no track a source before, and the feeder's cover there
	// went unchecked).
	if len(doc.Conductors) != 1 {
		t.Errorf("%d further conductors followed, want the LV feeder", len(doc.Conductors))
	} else if c := doc.Conductors[0]; math.Abs(c.Offset-2.6) > 0.2 || len(c.Route.Stations) < 25 {
		t.Errorf("conductor 2 at offset %.2f m on %d traverses, want about 2.6 m on most of 31", c.Offset, len(c.Route.Stations))
	} else {
		var t07 bool
		for _, st := range c.Route.Stations {
			t07 = t07 || st.Key == "T07" && st.Used && st.Cover != nil
		}
		if !t07 {
			t.Error("conductor 2 has no usable station with a cover at T07")
		}
		for _, st := range c.Route.Stations {
			if st.Used && st.Cover != nil && math.Abs(*st.Cover-0.70) > 0.05 {
				t.Errorf("LV feeder cover %.3f m at %s, laid at 0.70 m", *st.Cover, st.Key)
			}
		}
	}
	if !fault {
		t.Error("the earth fault at chainage 112.5 m was not found")
	}
	if !shallow {
		t.Error("the shallow stretch at chainage 58-72 m was not found")
	}
	if !object {
		t.Error("the steel object at T07 was not reported")
	}
	var gj struct {
		Type     string `json:"type"`
		Features []struct {
			Geometry struct {
				Type        string          `json:"type"`
				Coordinates json.RawMessage `json:"coordinates"`
			} `json:"geometry"`
		} `json:"features"`
	}
	data, _ = os.ReadFile(filepath.Join(dir, "route.geojson"))
	if err := json.Unmarshal(data, &gj); err != nil || gj.Type != "FeatureCollection" || len(gj.Features) == 0 {
		t.Errorf("route.geojson is not a GeoJSON feature collection: %v", err)
	}
	// Run it again into the same directory: an earlier demo is replaced.
	mustCLI(t, "demo", "-o", dir)
	leftovers, _ := filepath.Glob(filepath.Join(filepath.Dir(dir), ".demo.*"))
	if len(leftovers) != 0 {
		t.Errorf("staging directories left behind: %v", leftovers)
	}
}

// saveInverseCalibration writes into dir a calibration file (cal.json)
// that undoes a sensor reading m·B + off, and returns its path.
func saveInverseCalibration(t *testing.T, dir string, m [3][3]float64, off [3]float64) string {
	t.Helper()
	var inv mat.Dense
	if err := inv.Inverse(mat.NewDense(3, 3, []float64{m[0][0], m[0][1], m[0][2], m[1][0], m[1][1], m[1][2], m[2][0], m[2][1], m[2][2]})); err != nil {
		t.Fatal(err)
	}
	cal := &calibrate.Calibration{Version: calibrate.Version, Method: calibrate.MethodEllipsoid, Created: time.Now().UTC(), Offset: off}
	for i := range 3 {
		for j := range 3 {
			cal.Matrix[i][j] = inv.At(i, j)
		}
	}
	calPath := filepath.Join(dir, "cal.json")
	if err := cal.Save(calPath); err != nil {
		t.Fatal(err)
	}
	return calPath
}

// TestE2ECalibration: the sensor of the single-line survey reads through a
// soft-iron matrix and a hard-iron offset. Given the calibration that
// inverts them, locate recovers the line within its uncertainty and the
// background is the Earth's field; without it the current is visibly
// wrong.
func TestE2ECalibration(t *testing.T) {
	sc, _ := scenario(t, "single-line.toml")
	m := [3][3]float64{{1.04, 0.02, -0.01}, {0.01, 0.97, 0.03}, {-0.02, 0.015, 1.02}}
	off := [3]float64{180, -95, 240}
	sc.Sensor.Matrix, sc.Sensor.Offset = &m, off
	if err := sc.Validate(); err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	log := filepath.Join(dir, "distorted.parquet")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	calPath := saveInverseCalibration(t, dir, m, off)
	decode := func(args ...string) *resultDoc {
		out := mustCLI(t, append([]string{"locate", "--json", "--group-by", "group", "--reference-z", "0"}, append(args, log)...)...)
		var doc resultDoc
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		return &doc
	}
	truth := crossingsByLine(sc)
	doc := decode("--calibration", calPath)
	for _, g := range doc.Groups {
		checkCrossing(t, g.Key, g.Sources[0], truth[g.Key][0], 0, 0)
		// The background is the Earth's field plus the drift at the
		// traverse's time (under 2 nT here), not the sensor offset.
		for k, e := range sc.Earth.Field {
			if math.Abs(g.Background[k]-e) > 3 {
				t.Errorf("%s: background %v nT, want the Earth's field %v", g.Key, g.Background, sc.Earth.Field)
				break
			}
		}
	}
	// Without the calibration the distortion shows: the currents are off
	// by more than 1% (the matrix scales the field by up to 4%) and the
	// fits leave residuals many times the noise.
	raw := decode()
	for i, g := range raw.Groups {
		s := g.Sources[0]
		if math.Abs(math.Abs(s.Current)-25) < 0.25 || g.RMS < 5*doc.Groups[i].RMS {
			t.Errorf("%s without calibration: current %.4g A, rms %.3g nT (calibrated %.3g nT): the distortion does not show", g.Key, s.Current, g.RMS, doc.Groups[i].RMS)
		}
	}
}

// TestE2ERealBaseStation walks the single-line survey slowly on the
// morning of 2014-11-01 at Boulder, so that the rover sees the real
// diurnal variation recorded by the Boulder observatory (INTERMAGNET data
// from the USGS, file bou20141101vmin.min, IAGA-2002 1-minute H D Z). With
// that file as --base the variation is removed and one fit over all
// traverses recovers the line; without it the fit is visibly worse.
func TestE2ERealBaseStation(t *testing.T) {
	basePath := ingesttest.IAGAFile(t, "bou20141101vmin.min")
	base, err := ingest.ReadSamples(basePath, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	sc, _ := scenario(t, "single-line.toml")
	sc.Start = "2014-11-01T16:30:00Z"
	sc.Survey.Speed = 0.1 // 80 s per 8 m traverse: about 16 minutes in all
	sc.Survey.Turn = 60
	sc.Earth.Drift = [3]float64{}
	if err := sc.Validate(); err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	// Add the observatory's departure from its first value during the
	// survey, linearly interpolated between minutes, to the rover.
	col := [3][]float64{base.Bx, base.By, base.Bz}
	rov := [3][]float64{s.Bx, s.By, s.Bz}
	i0 := -1
	lo, hi := [3]float64{math.Inf(1), math.Inf(1), math.Inf(1)}, [3]float64{math.Inf(-1), math.Inf(-1), math.Inf(-1)}
	j := 0
	for i, tm := range s.Time {
		for j+1 < base.Len() && base.Time[j+1] <= tm {
			j++
		}
		if base.Time[j] > tm || j+1 >= base.Len() {
			t.Fatalf("rover time %v outside the base record", tm)
		}
		if i0 < 0 {
			i0 = j
		}
		f := (tm - base.Time[j]) / (base.Time[j+1] - base.Time[j])
		for k := range 3 {
			d := col[k][j] + f*(col[k][j+1]-col[k][j]) - col[k][i0]
			if math.IsNaN(d) {
				t.Fatalf("missing base value near %v", tm)
			}
			rov[k][i] += d
			lo[k], hi[k] = math.Min(lo[k], d), math.Max(hi[k], d)
		}
	}
	if r := math.Max(hi[0]-lo[0], hi[1]-lo[1]); r < 3 {
		t.Fatalf("the real variation over the survey is only %.2f nT: choose a livelier hour", r)
	}
	dir := t.TempDir()
	log := filepath.Join(dir, "boulder-morning.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	decode := func(args ...string) *resultDoc {
		out := mustCLI(t, append([]string{"locate", "--json", "--count", "1", "--reference-z", "0"}, append(args, log)...)...)
		var doc resultDoc
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		if has := strings.Contains(out, `"base_station"`); has != (len(args) > 0) {
			t.Errorf("base_station in the document: %v, want %v", has, len(args) > 0)
		}
		return &doc
	}
	corrected := decode("--base", basePath)
	c := sc.Conductors[0]
	tru := simulate.Crossing{Point: *c.Point, Dir: [3]float64{math.Sqrt(3) / 2, 0.5, 0}, Current: c.Current, Depth: -c.Point[2]}
	checkCrossing(t, "base-corrected", corrected.Groups[0].Sources[0], tru, 0, 0)
	raw := decode()
	if raw.Groups[0].RMS < 1.1*corrected.Groups[0].RMS {
		t.Errorf("rms %.3g nT without the base station, %.3g nT with it: the correction does not show", raw.Groups[0].RMS, corrected.Groups[0].RMS)
	}
	t.Logf("variation over the survey: east %.2f, north %.2f, up %.2f nT; rms %.3g nT raw, %.3g nT corrected",
		hi[0]-lo[0], hi[1]-lo[1], hi[2]-lo[2], raw.Groups[0].RMS, corrected.Groups[0].RMS)
}

// TestE2ETilt: the single-line survey with the sensor carried facing along
// each traverse and swaying by up to 10 degrees; the log is in the sensor
// frame with roll, pitch and yaw. locate turns it to east-north-up
// (calibrate.Tilt) and recovers the line within its uncertainty.
func TestE2ETilt(t *testing.T) {
	sc, _ := scenario(t, "single-line.toml")
	sc.Sensor.Attitude, sc.Sensor.Sway = "walking", 10
	if err := sc.Validate(); err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(t.TempDir(), "walking.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	back, err := ingest.ReadSamples(log)
	if err != nil {
		t.Fatal(err)
	}
	if back.Frame != ingest.FrameSensor || back.Roll == nil {
		t.Fatalf("the log read back is in frame %v with roll %v: the sensor frame was lost", back.Frame, back.Roll != nil)
	}
	var doc resultDoc
	if err := json.Unmarshal([]byte(mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", log)), &doc); err != nil {
		t.Fatal(err)
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want 1", g.Key, len(g.Sources))
			continue
		}
		checkCrossing(t, g.Key, g.Sources[0], truth[g.Key][0], 0, 0)
	}
}

// shellWords splits a command line printed for a POSIX shell: words
// separated by spaces, single quotes around a word with spaces.
func shellWords(s string) []string {
	var words []string
	var w strings.Builder
	in, any := false, false
	for _, r := range s {
		switch {
		case r == '\'':
			in, any = !in, true
		case r == ' ' && !in:
			if any {
				words = append(words, w.String())
			}
			w.Reset()
			any = false
		default:
			w.WriteRune(r)
			any = true
		}
	}
	if any {
		words = append(words, w.String())
	}
	return words
}

// TestDemoOtherSeeds: the demo route drawn with ten other noise seeds
// reports the earth fault, and no other step, on every one. The shallow
// stretch's end (T16-T17) and the bend (T19) make the straight-line fits'
// currents 1% off in ways their sigmas do not carry; before the 2% step
// threshold (route.Settings.MinStep) five to seven of these seeds reported
// a false "current joining" step there, and before tracks were closed
// after maxTrackGap missed groups one linked a deep spurious source at
// T16 with two at T30-T31 into a conductor with a step of its own.
func TestDemoOtherSeeds(t *testing.T) {
	if testing.Short() {
		t.Skip("ten simulated surveys")
	}
	text := string(simulate.DemoText())
	if !strings.Contains(text, "\nseed = 1402\n") {
		t.Fatal("the demo scenario no longer sets seed = 1402")
	}
	for seed := 11; seed <= 20; seed++ {
		t.Run(strconv.Itoa(seed), func(t *testing.T) {
			dir := t.TempDir()
			path := filepath.Join(dir, "demo.toml")
			if err := os.WriteFile(path, []byte(strings.Replace(text, "\nseed = 1402\n", fmt.Sprintf("\nseed = %d\n", seed), 1)), 0o644); err != nil {
				t.Fatal(err)
			}
			log := filepath.Join(dir, "demo.arrows")
			mustCLI(t, "simulate", path, "-o", log)
			out := mustCLI(t, "locate", "--json", "--freq", "50", "--window", "0.1", "--group-by", "group",
				"--sensor-height", "0.3", "--ground-sigma", "0.02", "--min-cover", "0.6", log)
			var doc resultDoc
			if err := json.Unmarshal([]byte(out), &doc); err != nil {
				t.Fatal(err)
			}
			fault := 0
			for _, f := range doc.Findings {
				if f.Kind != "current-step" {
					continue
				}
				if f.From <= 112.5 && 112.5 <= f.To && f.Values != nil && f.Values[0].Value < 0 && f.Conductor <= 1 {
					fault++
				} else {
					t.Errorf("a step where there is none: %s", f.Message)
				}
			}
			if fault != 1 {
				t.Errorf("%d steps at the earth fault, want 1", fault)
			}
		})
	}
}

// demoStationsAgreeWithTruth checks the demo's results.json (data) against
// the simulated truth: every station of conductor 1 (the 11 kV cable) reads
// the current the scenario gives it where its traverse crosses it
// (simulate.Crossings: 42 A before the earth fault, 33 A after) within 4 of
// its own sigmas, widened or not, and the survey's reference noise is within
// 1.5 times the windows' own noise, 4 nT / √50 = 0.57 nT (the sensor's
// 4 nT over the 50 readings a 0.1 s window averages at 500 Hz).
//
// Until the demo's cables ran on beyond the survey they stopped dead 25 m
// beyond T01 and T31, an end no real cable has: its field took 0.02-0.08 A
// off T02-T09 and T31 (4-19 sigma: T02 41.917 ± 0.0044 A), and those
// quiet-looking end stations set the reference noise at 1.18 nT, which hid
// the model's error elsewhere (T14 -8 sigma, unwidened).
func demoStationsAgreeWithTruth(t *testing.T, data []byte) {
	t.Helper()
	sc, err := simulate.Demo()
	if err != nil {
		t.Fatal(err)
	}
	truth := map[string]float64{}
	for _, c := range sc.Crossings() {
		if c.Conductor == 0 {
			truth[c.Line] = c.Current
		}
	}
	var doc struct {
		Groups []struct {
			Key            string  `json:"key"`
			ReferenceNoise float64 `json:"reference_noise_nt"`
		} `json:"groups"`
		Route struct {
			Stations []struct {
				Key          string  `json:"key"`
				Current      float64 `json:"current_a"`
				CurrentSigma float64 `json:"current_sigma_a"`
			} `json:"stations"`
		} `json:"route"`
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Route.Stations) != 31 {
		t.Errorf("%d stations of conductor 1, want 31", len(doc.Route.Stations))
	}
	for _, st := range doc.Route.Stations {
		want, ok := truth[st.Key]
		if !ok {
			t.Errorf("%s: the 11 kV cable does not cross that traverse in the scenario", st.Key)
			continue
		}
		if pull := (st.Current - want) / st.CurrentSigma; !(math.Abs(pull) <= 4) {
			t.Errorf("%s: %.4f ± %.4f A, true %.0f A: %.1f sigma", st.Key, st.Current, st.CurrentSigma, want, pull)
		}
	}
	own := sc.Sensor.Noise / math.Sqrt(0.1*sc.Sensor.SampleRate)
	for _, g := range doc.Groups {
		if !(g.ReferenceNoise > 0 && g.ReferenceNoise <= 1.5*own) {
			t.Errorf("%s: reference noise %.3f nT, want within 1.5 times the windows' own %.3f nT", g.Key, g.ReferenceNoise, own)
		}
	}
}
