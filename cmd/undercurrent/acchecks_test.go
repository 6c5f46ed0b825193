package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestDefaultWindow: away from 50 and 60 Hz the default window is a whole
// multiple of 0.1 s, so that it holds whole cycles of both mains
// frequencies (over whole cycles a tone is orthogonal to the constant and
// to any other whole-cycle tone: the product-to-sum identities, e.g.
// Abramowitz and Stegun 4.3.32, leave sines of whole cycles, whose
// integrals vanish), and at least ten cycles of the signal; at 50 and
// 60 Hz it stays ten cycles.
func TestDefaultWindow(t *testing.T) {
	for _, c := range []struct{ freq, want float64 }{
		{50, 0.2}, {60, 1.0 / 6},
		{512, 0.1}, {150, 0.1}, {1000, 0.1}, {8192, 0.1},
		{16.7, 0.6}, {50.0 / 3, 0.6}, {25, 0.4}, {49, 0.3}, {100, 0.1}, {99, 0.2},
	} {
		got := defaultWindow(c.freq)
		if math.Abs(got-c.want) > 1e-12 {
			t.Errorf("defaultWindow(%g) = %.15g, want %g", c.freq, got, c.want)
		}
		if c.freq == 50 || c.freq == 60 {
			continue
		}
		if cyc := got * c.freq; cyc < 10-1e-9 {
			t.Errorf("defaultWindow(%g) = %g s holds %.3g cycles, want at least 10", c.freq, got, cyc)
		}
		for _, mains := range []float64{50, 60} {
			if cyc := got * mains; math.Abs(cyc-math.Round(cyc)) > 1e-9 {
				t.Errorf("defaultWindow(%g) = %g s holds %.6g cycles of %g Hz, want a whole number", c.freq, got, cyc, mains)
			}
		}
	}
}

// acWalkAt writes the AC walk scenario (ac-walk-2khz.toml: one 20 A cable
// at 50 Hz) with the cable at freq Hz and the extra TOML appended, into
// dir, simulates it and returns the scenario and the log's path.
func acWalkAt(t *testing.T, dir, freq, extra string) (*simulate.Scenario, string) {
	return acWalk(t, dir, freq, extra, false)
}

// acWalk is acWalkAt, with every traverse walked the same way when oneWay
// is set.
func acWalk(t *testing.T, dir, freq, extra string, oneWay bool) (*simulate.Scenario, string) {
	t.Helper()
	return acWalkEdit(t, dir, freq, extra, oneWay, nil)
}

// acWalkEdit is acWalk with the scenario's text passed through edit (when
// not nil) before it is written.
func acWalkEdit(t *testing.T, dir, freq, extra string, oneWay bool, edit func(string) string) (*simulate.Scenario, string) {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "ac-walk-2khz.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(raw)
	if !strings.Contains(text, "frequency_hz = 50.0") {
		t.Fatal("ac-walk-2khz.toml no longer sets frequency_hz = 50.0")
	}
	text = strings.Replace(text, "frequency_hz = 50.0", "frequency_hz = "+freq, 1) + extra
	if oneWay {
		text = strings.Replace(text, "[survey]\n", "[survey]\nzigzag = false\n", 1)
	}
	if edit != nil {
		text = edit(text)
	}
	return simulateScenario(t, dir, "walk", text)
}

// simulateScenario writes text to dir/name.toml, loads it as a scenario
// and simulates it into dir/name.arrows: the scenario and the log.
func simulateScenario(t *testing.T, dir, name, text string) (*simulate.Scenario, string) {
	t.Helper()
	path := filepath.Join(dir, name+".toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	sc, err := simulate.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, name+".arrows")
	mustCLI(t, "simulate", path, "-o", log)
	return sc, log
}

// locateDoc runs locate --json with args and decodes the document.
func locateDoc(t *testing.T, args ...string) *resultDoc {
	t.Helper()
	return locateInto[resultDoc](t, args...)
}

// locateInto runs locate --json with args and decodes the document into a
// T (the fields a test reads).
func locateInto[T any](t *testing.T, args ...string) *T {
	t.Helper()
	out := mustCLI(t, append([]string{"locate", "--json"}, args...)...)
	var doc T
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("locate --json output is not JSON: %v\n%.500s", err, out)
	}
	return &doc
}

// checkOnly checks each group's sources against the scenario's conductor
// at freq Hz: one source, its current and depth within kSigma sigma of
// the truth plus tolFrac of the current and 1 mm, and any further source
// under extraFrac of its current. Windows of a whole number of samples
// hold a whole number of cycles only to a fraction of a sample at an
// off-nominal frequency (399 samples for 399.2 at 50.1 Hz and 2 kHz);
// with a constant-amplitude sine fit the walk's change of amplitude then
// cost about 0.05% of the current and at times a phantom source of 0.1%
// of it. The windows' slope columns (calibrate.DemodSettings) take that
// change, and the callers now give tolFrac 0 and no room for a further
// source.
func checkOnly(t *testing.T, doc *resultDoc, sc *simulate.Scenario, freq, tolFrac, extraFrac float64) {
	t.Helper()
	truth := map[string]simulate.Crossing{}
	for _, c := range sc.Crossings() {
		if c.Frequency == freq {
			truth[c.Line] = c
		}
	}
	if len(doc.Groups) != 3 {
		t.Fatalf("%d groups, want the walk's 3", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		c, ok := truth[g.Key]
		if !ok {
			t.Fatalf("group %q is not a line of the walk", g.Key)
		}
		if len(g.Sources) == 0 {
			t.Errorf("%s: no sources", g.Key)
			continue
		}
		s := g.Sources[0]
		for _, x := range g.Sources[1:] {
			if !(x.Current < extraFrac*s.Current) {
				t.Errorf("%s: a second source of %.3g A at %.3g m beside the %.3g A conductor", g.Key, x.Current, x.Depth, s.Current)
			}
		}
		want := math.Abs(c.Current)
		if d := math.Abs(s.Current - want); !(d <= kSigma*s.CurrentSigma+tolFrac*want) {
			t.Errorf("%s: current %.5g ± %.2g A, true %.5g A", g.Key, s.Current, s.CurrentSigma, want)
		}
		if d := math.Abs(s.Depth - c.Depth); !(d <= kSigma*s.DepthSigma+1e-3) {
			t.Errorf("%s: depth %.5g ± %.2g m, true %.5g m", g.Key, s.Depth, s.DepthSigma, c.Depth)
		}
	}
}

// TestLocateOffNominalMains: a cable at 50.1 Hz and at 50.02 Hz (a grid off
// its nominal 50 Hz, as grids run by ±0.2 Hz) located with --freq 50.
// Demodulated at 50 Hz the phasor turns 36° (7.2°) a second and the 6 s
// traverses read half the current (10.0 ± 1.2 A of 20 A, depth 0.63 m of
// 1.1 m at 50.1 Hz); locate must estimate the frequency, say so, and
// demodulate at the estimate.
func TestLocateOffNominalMains(t *testing.T) {
	for _, f := range []string{"50.1", "50.02"} {
		t.Run(f, func(t *testing.T) {
			sc, log := acWalkAt(t, t.TempDir(), f, "")
			for _, win := range []string{"", "0.1"} {
				args := []string{"--freq", "50", "--group-by", "group", "--reference-z", "0", log}
				if win != "" {
					args = append([]string{"--window", win}, args...)
				}
				doc := locateDoc(t, args...)
				checkOnly(t, doc, sc, sc.Conductors[0].Frequency, 0, 1e-9)
				// A window of n samples averages the reading noise of
				// sigma per axis to sigma/sqrt(n/2) on its RMS phasor (the
				// least-squares variance of a sine fit's coefficients,
				// IEEE Std 1057, 2 sigma²/n, over the RMS scale's 2): the
				// fit's residual must come near it, not the hundreds of nT
				// of a phasor turning across the traverse.
				w := 0.2
				if win != "" {
					w = 0.1
				}
				floor := sc.Sensor.Noise / math.Sqrt(w*sc.Sensor.SampleRate/2)
				for _, g := range doc.Groups {
					if !(g.RMS < 3*floor) {
						t.Errorf("window %q: %s: residual %.3g nT, want under %.3g nT (three times the %.2g nT of the averaged noise)", win, g.Key, g.RMS, 3*floor, floor)
					}
				}
				var said bool
				truth, _ := strconv.ParseFloat(f, 64)
				for _, w := range doc.Warnings {
					m := estimatedRE.FindStringSubmatch(w)
					if m == nil || !strings.Contains(w, "not the 50 Hz given") {
						continue
					}
					said = true
					est, _ := strconv.ParseFloat(m[1], 64)
					sig, _ := strconv.ParseFloat(m[2], 64)
					if !(math.Abs(est-truth) <= kSigma*sig+0.5e-4) {
						t.Errorf("window %q: frequency estimated at %s ± %s Hz, true %s Hz", win, m[1], m[2], f)
					}
				}
				if !said {
					t.Errorf("window %q: no warning that the frequency was estimated: %q", win, doc.Warnings)
				}
			}
		})
	}
}

// estimatedRE reads the estimate and its sigma from locate's warning.
var estimatedRE = regexp.MustCompile(`AC frequency estimated at ([0-9.]+) ± ([0-9.]+) Hz`)

// TestDemodulateACExact: a log at exactly the frequency given is
// demodulated exactly as without the check (the same windows, bit for bit,
// and no warning), with the default window and with --window: at 50 Hz
// with the signal's 2nd, 3rd, 5th and 7th harmonics and a linear term fitted in
// every window (demodPlan.settings).
func TestDemodulateACExact(t *testing.T) {
	sc, _ := scenario(t, "ac-walk-2khz.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	for _, win := range []float64{0, 0.1} {
		o := &locateOptions{freq: 50, window: win}
		got, gotWin, warns, _, err := demodulateAC(o, s)
		if err != nil {
			t.Fatal(err)
		}
		w := win
		if w == 0 {
			w = 10.0 / 50
		}
		want, err := calibrate.Demodulate(s, &calibrate.DemodSettings{Freq: 50, Window: w, Harmonics: []int{2, 3, 5, 7}, Drift: true})
		if err != nil {
			t.Fatal(err)
		}
		if gotWin != w {
			t.Errorf("window %g: used %g s, want %g s", win, gotWin, w)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("window %g: the exact 50 Hz log was demodulated differently from a plain 50 Hz demodulation", win)
		}
		if len(warns) != 0 {
			t.Errorf("window %g: warnings %q", win, warns)
		}
	}
}

// TestLocateWrongFreqRefused: a 50 Hz log located with --freq 60 is too far
// off for the windows to follow: locate refuses and names the frequency.
func TestLocateWrongFreqRefused(t *testing.T) {
	_, log := acWalkAt(t, t.TempDir(), "50.0", "")
	code, _, errOut := cli(t, "locate", "--freq", "60", log)
	if code != 1 || !strings.Contains(errOut, "does not run at the 60 Hz given") || !strings.Contains(errOut, "about 50.00 Hz") {
		t.Errorf("exit %d, stderr %q; want 1 and a message naming 50 Hz", code, errOut)
	}
}

// walkLine is a [[conductor]] table for the AC walk scenario: a line along
// east through (0, north, up) carrying current A RMS at freq Hz and phase
// degrees.
func walkLine(name string, north, up, current, freq, phase float64) string {
	return fmt.Sprintf("\n[[conductor]]\nname = %q\nkind = \"line\"\npoint = [0.0, %g, %g]\ndirection = [1.0, 0.0, 0.0]\ncurrent_a = %g\nfrequency_hz = %g\nphase_deg = %g\n",
		name, north, up, current, freq, phase)
}

// TestLocateTracerBesideMains: a 0.5 A line traced at 512 Hz beside the
// 20 A, 50 Hz cable and its 3 A third harmonic. Ten cycles of 512 Hz
// (19.5 ms, about one mains cycle) let the mains field leak into the
// 512 Hz phasors, which the fit took for milliampere conductors a few
// centimetres under the sensors; the default window at 512 Hz (0.1 s, five
// and six whole cycles of 50 and 60 Hz) leaves only the traced line, with
// its current and depth, and the mains fitted alongside leave its
// precision at the reading noise's.
func TestLocateTracerBesideMains(t *testing.T) {
	extra := walkLine("traced line", -0.6, -1.2, 0.5, 512, -40) + walkLine("third harmonic", 0.4, -0.8, 3, 150, 10)
	sc, log := acWalkAt(t, t.TempDir(), "50.0", extra)
	doc := locateDoc(t, "--freq", "512", "--group-by", "group", "--reference-z", "0", log)
	checkOnly(t, doc, sc, 512, 0, 0)
	// The mains field (3600 nT of the 20 A cable at 1.1 m) changes as the
	// sensor walks, and a changing tone leaks into the tracer's columns
	// even over whole cycles of both. Fitted alongside (--mains, default
	// 50,60), the mains leave the windows' residual at the reading noise
	// (10 nT per sample, 2 kHz, 0.1 s windows: 10/sqrt(200/2) = 1 nT on the
	// RMS phasor, IEEE Std 1057's 2σ²/n per coefficient); with --mains none
	// it is ten times that, and the tracer's sigmas with it.
	floor := sc.Sensor.Noise / math.Sqrt(0.1*sc.Sensor.SampleRate/2)
	none := locateDoc(t, "--freq", "512", "--mains", "none", "--group-by", "group", "--reference-z", "0", log)
	for i, g := range doc.Groups {
		if !(g.RMS < 1.3*floor) {
			t.Errorf("%s: residual %.3g nT with the mains fitted, want under 1.3 times the %.2g nT floor", g.Key, g.RMS, floor)
		}
		if h := none.Groups[i]; !(h.RMS > 5*floor) || !(h.Sources[0].CurrentSigma > 5*g.Sources[0].CurrentSigma) {
			t.Errorf("%s: with --mains none residual %.3g nT and current sigma %.2g A (fitted: %.3g nT, %.2g A): the mains no longer leak?", g.Key, h.RMS, h.Sources[0].CurrentSigma, g.RMS, g.Sources[0].CurrentSigma)
		}
	}
	if got := fmt.Sprint(doc.Signal.NuisanceHz); got != "[50 60 150 180 250 300 420 450 540 550]" {
		t.Errorf("result document lists the mains fitted as %s", got)
	}
	if none.Signal.NuisanceHz != nil {
		t.Errorf("--mains none: the document lists %v", none.Signal.NuisanceHz)
	}
	// With the mains left out, the run says that a strong 50 Hz field is
	// there and not fitted; with them fitted it does not.
	said := func(d *resultDoc) bool {
		for _, w := range d.Warnings {
			if strings.Contains(w, "a 50 Hz field of") && strings.Contains(w, "give --mains 50") {
				return true
			}
		}
		return false
	}
	if !said(none) || said(doc) {
		t.Errorf("unfitted-mains warning: with --mains none %v, with the default %v; want only the first", said(none), said(doc))
	}
	// With the mains fitted the tracer's frequency can be checked too.
	for _, w := range doc.Warnings {
		if strings.Contains(w, "could not be checked") {
			t.Errorf("warning: %s", w)
		}
	}
}

// syntheticWindows makes n windows of group g, 0.2 s apart from t0, each
// with a clear signal, the frequency f ± sigma (alternating about f by
// sigma so that the windows agree with their sigmas) and a half-travel of
// dir·0.1 m along east.
func syntheticWindows(g string, t0 float64, n int, f, sigma, dir float64) []calibrate.Window {
	ws := make([]calibrate.Window, n)
	for i := range ws {
		d := sigma
		if i%2 == 1 {
			d = -sigma
		}
		ws[i] = calibrate.Window{
			Time: t0 + 0.2*float64(i), Group: g, Freq: f + d, FreqSigma: sigma,
			B: [3]complex128{1000, 0, 0}, Sigma: [3]float64{1, 1, 1},
			Travel: [3]float64{0.1 * dir, 0, 0},
		}
	}
	return ws
}

// TestEstimateWindowFreq: the walk's own share of a window's frequency
// turns with the walking direction, so windows walked both ways are
// averaged way by way (the mean of +0.004 and -0.004 Hz about 50 Hz is
// 50 Hz, whatever the numbers of windows) and trusted; windows walked one
// way give their own mean, not trusted; still windows are trusted.
func TestEstimateWindowFreq(t *testing.T) {
	const sigma = 1e-3
	var ws []calibrate.Window
	ws = append(ws, syntheticWindows("T01", 0, 30, 50.004, sigma, 1)...)
	ws = append(ws, syntheticWindows("T02", 10, 10, 49.996, sigma, -1)...)
	est, ok := estimateWindowFreq(ws, 0.2)
	if !ok || !est.trusted || math.Abs(est.freq-50) > 1e-9 || est.windows != 40 {
		t.Errorf("both ways: %+v, %v; want 50 Hz from 40 windows, trusted", est, ok)
	}
	// One way: the plain inverse-variance mean, sigma/sqrt(n), widened by
	// the square root of the reduced chi-square, here n/(n-1) (every
	// window one sigma from the mean): sigma/sqrt(n-1).
	est, ok = estimateWindowFreq(ws[:30], 0.2)
	if !ok || est.trusted || math.Abs(est.freq-50.004) > 1e-9 || math.Abs(est.sigma-sigma/math.Sqrt(29)) > 1e-12 {
		t.Errorf("one way: %+v, %v; want 50.004 ± %.3g Hz, not trusted", est, ok, sigma/math.Sqrt(29))
	}
	still := syntheticWindows("S", 0, 6, 50.1, sigma, 0)
	est, ok = estimateWindowFreq(still, 0.2)
	if !ok || !est.trusted || math.Abs(est.freq-50.1) > 1e-9 {
		t.Errorf("still: %+v, %v; want 50.1 Hz, trusted", est, ok)
	}
	// Weak windows do not count: too few left.
	for i := range still {
		still[i].B = [3]complex128{10, 0, 0}
	}
	if est, ok = estimateWindowFreq(still, 0.2); ok {
		t.Errorf("windows at 10 sigma gave an estimate: %+v", est)
	}
}

// TestGroupWander: a group whose own frequency is 0.02 Hz off the one used
// (a turn of 360° × 0.02 Hz × 6 s = 43° across it) is named; one within
// its sigma, or off by less than freqCheckUntrustedHz, is not.
func TestGroupWander(t *testing.T) {
	const sigma = 1e-3
	var ws []calibrate.Window
	ws = append(ws, syntheticWindows("T01", 0, 30, 50.0005, sigma, 1)...)
	ws = append(ws, syntheticWindows("T02", 10, 30, 50.02, sigma, -1)...)
	ws = append(ws, syntheticWindows("T03", 20, 30, 50.006, sigma, 1)...)
	w := groupWander(ws, 50, 0.2)
	if len(w) != 1 || math.Abs(w["T02"]-50.02) > 3*sigma {
		t.Errorf("wandering groups %v, want T02 alone, at 50.02 Hz", w)
	}
	if w := groupWander(ws[:30], 50, 0.2); len(w) != 0 {
		t.Errorf("one group: %v", w)
	}
}

// TestLocateOneWay: with every traverse walked the same way the walk's
// share of the windows' frequencies cannot be told from the grid's, so a
// small offset (50.005 Hz: 11° across a 6 s traverse) is not acted on
// from the windows alone (following it made a walk-induced offset worse);
// each group's fit, whose lines' phasors explain the phase changing along
// a traverse, then finds it as a phase ramp, says so and keeps the
// cable's current and depth. A large one (50.1 Hz) is still corrected
// from the windows, and an exact log gets no warning.
func TestLocateOneWay(t *testing.T) {
	for _, c := range []struct {
		freq, want string
	}{
		{"50.0", ""},
		{"50.005", "each of those groups was fitted with a phase ramp"},
		{"50.1", "AC frequency estimated at 50.1"},
	} {
		sc, log := acWalk(t, t.TempDir(), c.freq, "", true)
		if *sc.Survey.Zigzag {
			t.Fatal("the one-way walk is a zigzag")
		}
		doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
		var got []string
		for _, w := range doc.Warnings {
			if strings.Contains(w, "Hz") {
				got = append(got, w)
			}
		}
		switch {
		case c.want == "" && len(got) != 0:
			t.Errorf("%s Hz: warnings %q, want none", c.freq, got)
		case c.want != "" && (len(got) != 1 || !strings.Contains(got[0], c.want)):
			t.Errorf("%s Hz: warnings %q, want one with %q", c.freq, got, c.want)
		}
		if c.freq != "50.0" {
			f, _ := strconv.ParseFloat(c.freq, 64)
			checkOnly(t, doc, sc, f, 0, 1e-9)
		}
	}
}

// TestLocateFollowsWander: a survey whose first traverses ran at exactly
// 50 Hz and whose later ones (ten minutes on) at 50.03 Hz, as a grid's
// frequency wanders, demodulated as one log with --freq 50: the groups of
// each half get their own frequency and the cable's 20 A, and the warning
// counts and names the groups that wandered.
func TestLocateFollowsWander(t *testing.T) {
	dir := t.TempDir()
	scA, logA := acWalk(t, filepath.Join(dir), "50.0", "", false)
	dirB := filepath.Join(dir, "b")
	if err := os.Mkdir(dirB, 0o755); err != nil {
		t.Fatal(err)
	}
	_, logB := acWalk(t, dirB, "50.03", "", false)
	a, err := ingest.ReadSamples(logA)
	if err != nil {
		t.Fatal(err)
	}
	b, err := ingest.ReadSamples(logB)
	if err != nil {
		t.Fatal(err)
	}
	shift := a.Time[a.Len()-1] - b.Time[0] + 600
	all := &ingest.Samples{Meta: a.Meta}
	for _, s := range []*ingest.Samples{a, b} {
		for i := range s.Len() {
			tt, g := s.Time[i], s.Group[i]
			if s == b {
				tt, g = tt+shift, "U"+g
			}
			all.Time = append(all.Time, tt)
			all.X, all.Y, all.Z = append(all.X, s.X[i]), append(all.Y, s.Y[i]), append(all.Z, s.Z[i])
			all.Bx, all.By, all.Bz = append(all.Bx, s.Bx[i]), append(all.By, s.By[i]), append(all.Bz, s.Bz[i])
			all.Group = append(all.Group, g)
		}
	}
	both := filepath.Join(dir, "both.arrows")
	if err := ingest.WriteSamples(both, all); err != nil {
		t.Fatal(err)
	}
	doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", both)
	var wander []string
	for _, w := range doc.Warnings {
		if strings.Contains(w, "wandered") {
			wander = append(wander, w)
		}
	}
	if len(wander) != 1 || !strings.Contains(wander[0], "in 3 group(s)") {
		t.Errorf("warnings %q, want one naming the 3 groups that wandered", doc.Warnings)
	}
	want := scA.Conductors[0].Current
	if len(doc.Groups) != 6 {
		t.Fatalf("%d groups, want 6", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if len(g.Sources) == 0 {
			t.Errorf("%s: no source", g.Key)
			continue
		}
		s := g.Sources[0]
		// Within 0.5% (demodulated at 50 Hz, the first half read 18.4 ±
		// 0.6 A) and within a few sigmas.
		if math.Abs(s.Current-want) > math.Min(5*s.CurrentSigma+1e-3*want, 5e-3*want) {
			t.Errorf("%s: %.4f ± %.4f A, want %g A", g.Key, s.Current, s.CurrentSigma, want)
		}
	}
}

// TestFrequencyUncheckedSaysSo: a log in which no window has a clear
// signal at --freq (here noise alone, as when a stronger field at another
// frequency sets the windows' noise) cannot have its frequency checked,
// and locate says the results assume the frequency given instead of
// staying silent.
func TestFrequencyUncheckedSaysSo(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	s := &ingest.Samples{Source: "quiet.csv"}
	for i := range 4000 {
		tt := float64(i) / 2000
		s.Time = append(s.Time, 1.8e9+tt)
		s.X, s.Y, s.Z = append(s.X, -2+0.5*tt), append(s.Y, 0), append(s.Z, 0.3)
		s.Bx = append(s.Bx, 17000+5*rng.NormFloat64())
		s.By = append(s.By, 1500+5*rng.NormFloat64())
		s.Bz = append(s.Bz, -44000+5*rng.NormFloat64())
		s.Group = append(s.Group, "T01")
	}
	_, _, warns, _, err := demodulateAC(&locateOptions{freq: 512}, s)
	if err != nil {
		t.Fatal(err)
	}
	if len(warns) == 0 || !strings.Contains(warns[len(warns)-1], "could not be checked") || !strings.Contains(warns[len(warns)-1], "exactly 512 Hz") {
		t.Errorf("warnings %q, want one saying the frequency could not be checked", warns)
	}
}
