package main

import (
	"math"
	"testing"
)

// sidebandSite is siteBase without the mains harmonic, with lines of sb
// A at 510 and 514 Hz on the tracer cable itself (its phase, 20°): a
// 512 Hz tracer whose current is modulated, as a transmitter that keys or
// sweeps its output gives, whose field shows the carrier and a sideband
// either side at the modulation's frequency (the review's t-fm).
func sidebandSite(lo, hi float64, seed int) string {
	site := siteBase
	site.harmAmps = 0
	text := site.scenario(512, 4096, seed)
	text += walkLine("lower sideband", 0, -1, lo, 510, 20)
	text += walkLine("upper sideband", 0, -1, hi, 514, 20)
	return text
}

// TestSidebandsHoldFreq: a 512 Hz tracer of 8 A with 0.6 A sidebands at
// 510 and 514 Hz. Before the mirror check, the second-tone check named
// one sideband (514.03 Hz on seed 1, 509.97 Hz on seed 2) as a second
// tone and fitted it alone; the other then pulled the check's 1 s
// windows, which read 512.0189 ± 0.0003 Hz (seed 1) and 511.9887 ±
// 0.0006 Hz (seed 2), and the run was demodulated there, its phases
// turning from traverse to traverse (163, 34, -95, 136, 7° for the 20°
// tracer; found in review). Without the tone check the two pulls cancel
// and the run stayed at 512 Hz with phases of 20.00°. Now the pair,
// symmetric about the signal at like amplitudes, is taken as the
// signal's modulation and fitted together: the run stays at 512 Hz (the
// simulated frequency, within max(3 sigma, 0.01 Hz) of any estimate it
// acts on), the tracer reads its 20° on every traverse, and the warning
// names the pair as sidebands, not as a second tone. A lower sideband of
// a third of the upper's amplitude (0.2 A) is fitted with it too: with
// the 514 Hz line fitted alone the check read 512.0042 ± 0.0002 Hz.
func TestSidebandsHoldFreq(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates tracer logs")
	}
	for _, seed := range []int{1, 2} {
		_, s := simulated(t, t.TempDir(), sidebandSite(0.6, 0.6, seed))
		o := &locateOptions{freq: 512, mains: []float64{50, 60}}
		res, _, warns, _, err := demodulateAC(o, s)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("seed %d: demodulated at %.5f Hz; %q", seed, res.Freq, warns)
		if math.Abs(res.Freq-512) > 0.01 {
			t.Errorf("seed %d: demodulated at %.5f Hz, want the simulated 512 Hz", seed, res.Freq)
		}
		if hasWarning(warns, "a second tone") {
			t.Errorf("seed %d: a sideband named as a second tone: %q", seed, warns)
		}
		if !hasWarning(warns, "pair of lines at 509.9", "and 514.0", "sidebands of the signal", "fitted together") && !hasWarning(warns, "pair of lines at 510.0", "and 514.0", "sidebands of the signal", "fitted together") {
			t.Errorf("seed %d: no warning naming the sidebands at 510 and 514 Hz: %q", seed, warns)
		}
	}
	_, s := simulated(t, t.TempDir(), sidebandSite(0.2, 0.6, 1))
	res, _, warns, _, err := demodulateAC(&locateOptions{freq: 512, mains: []float64{50, 60}}, s)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Freq-512) > 0.001 || !hasWarning(warns, "pair of lines at 509.9", "and 514.0", "fitted together") {
		t.Errorf("0.2 A at 510 Hz, 0.6 A at 514 Hz: demodulated at %.5f Hz, want the simulated 512 Hz, with both lines fitted: %q", res.Freq, warns)
	}
	// The phases along the route, from a full run.
	sc, log := simulateScenario(t, t.TempDir(), "fm", sidebandSite(0.6, 0.6, 1))
	doc := locateDoc(t, "--freq", "512", "--group-by", "group", "--reference-z", "0", log)
	checkTracer(t, doc, sc)
	for _, g := range doc.Groups {
		for _, src := range g.Sources {
			if src.Kind != "line" || math.Abs(src.Current-8) > 0.5 {
				continue
			}
			if src.Phase == nil || src.PhaseSigma == nil {
				t.Fatalf("%s: the tracer has no phase", g.Key)
			}
			if d := math.Abs(math.Remainder(*src.Phase-20, 360)); d > math.Max(4**src.PhaseSigma, 1) {
				t.Errorf("%s: the tracer's phase reads %.2f ± %.2f°, want the simulated 20°", g.Key, *src.Phase, *src.PhaseSigma)
			}
		}
	}
}

// TestEvenMainsHarmonicHoldsFreq: 3 A of the mains' 10th harmonic
// (500 Hz) and 2 A of its 11th (550 Hz) on the 50 Hz cable 3 m from a
// 512 Hz tracer (the review's t-harm500). The mains' fit beside the
// signal takes odd harmonics only, and the second-tone check left every
// line within 1 Hz of a mains harmonic to the mains checks, which know
// the odd ones only: the 500 Hz line, 12 Hz off and not fitted apart in
// 0.1 s windows, pulled the frequency check to 511.953 Hz, the run was
// demodulated there and every traverse read a go-and-return pair 25
// times the noise off (found in review). Now the even harmonic is the
// second-tone check's: it is named, fitted in the check, the run stays at
// the simulated 512 Hz and the tracer reads its current and depth.
func TestEvenMainsHarmonicHoldsFreq(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates a tracer log")
	}
	site := siteBase
	site.harmAmps = 0
	text := site.scenario(512, 4096, 1) + walkLine("10th harmonic", -3, -0.6, 3, 500, 30) + walkLine("11th harmonic", -3, -0.6, 2, 550, 60)
	_, s := simulated(t, t.TempDir(), text)
	res, _, warns, _, err := demodulateAC(&locateOptions{freq: 512, mains: []float64{50, 60}}, s)
	if err != nil {
		t.Fatal(err)
	}
	if res.Freq != 512 {
		t.Errorf("demodulated at %.4f Hz, want the simulated 512 Hz", res.Freq)
	}
	if !hasWarning(warns, "line at 500.0", "10th harmonic of the 50 Hz mains", "--window 0.2") {
		t.Errorf("no warning naming the 10th harmonic at 500 Hz and the window that fits it apart: %q", warns)
	}
	sc, log := simulateScenario(t, t.TempDir(), "h500", text)
	doc := locateDoc(t, "--freq", "512", "--group-by", "group", "--reference-z", "0", log)
	checkTracer(t, doc, sc)
}
