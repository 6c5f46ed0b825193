package main

import (
	"math"
	"testing"
)

// TestSecondToneHoldsFreq: a tone that is not the mains, 516 Hz on a
// cable 3 m from a 512 Hz tracer (the layout of TestMainsPullHoldsFreq,
// the cable's 150 Hz harmonic swapped for the tone), lies in no column of
// the windows' frequency fits, and in 0.1 s windows pulled their
// estimate: 2.4 A there (30% of the tracer's 8 A) read 512.094 ± 0.002 Hz
// and 8 A 512.434 ± 0.002 Hz, with no word; the run was demodulated
// there and every traverse read nonsense (found in review). Now the tone
// is found beside the signal (findSecondTone, to about a hundredth of a
// hertz here), the frequency is checked in 0.5 s windows with it fitted
// beside the signal, the estimate lands on the simulated 512 Hz within
// its sigmas, the run stays at 512 Hz, and a warning names the tone with
// its amplitude. The tracer alone draws no such warning.
func TestSecondToneHoldsFreq(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates tracer logs")
	}
	for _, amps := range []float64{0, 0.8, 2.4, 8} {
		site := siteBase
		site.harmAmps, site.harmHz = amps, 516
		_, s := simulated(t, t.TempDir(), site.scenario(512, 4096, 1))
		o := &locateOptions{freq: 512, mains: []float64{50, 60}}
		res, _, warns, _, err := demodulateAC(o, s)
		if err != nil {
			t.Fatal(err)
		}
		if res.Freq != 512 {
			t.Errorf("%g A at 516 Hz: demodulated at %.4f Hz, want the simulated 512 Hz", amps, res.Freq)
		}
		if amps == 0 {
			if hasWarning(warns, "second tone") {
				t.Errorf("tracer alone: %q", warns)
			}
			continue
		}
		if !hasWarning(warns, "second tone at 516.0", "nT", "--window 0.5") {
			t.Errorf("%g A at 516 Hz: no warning naming the tone at 516 Hz, its amplitude and the window that fits it apart: %q", amps, warns)
		}
		// The estimate itself, from the check the run made.
		pl := demodPlan{mains: o.mains, fs: logRate(s)}
		tone, ok := pl.findSecondTone(s, res, 512, 0.1)
		if !ok || math.Abs(tone.freq-516) > 0.02 {
			t.Fatalf("%g A at 516 Hz: tone found %v at %.4f Hz, want 516 Hz", amps, ok, tone.freq)
		}
		fit, err := pl.withTone(tone.freq).freqCheck(s, 512, toneWindow(tone.freq-512, 0.1), len(res.Windows)/5, nil)
		if err != nil {
			t.Fatal(err)
		}
		est, ok := estimateWindowFreq(fit.Windows, 0.5)
		t.Logf("%g A at 516 Hz: tone %.4f Hz (%.3g nT, share %.2f); estimate with it fitted %.5f ± %.5f Hz", amps, tone.freq, tone.nT, tone.share, est.freq, est.sigma)
		if !ok || !(math.Abs(est.freq-512) <= math.Max(3*est.sigma, 0.01)) {
			t.Errorf("%g A at 516 Hz: with the tone fitted the frequency reads %.4f ± %.4f Hz (ok %v), want the simulated 512 Hz", amps, est.freq, est.sigma, ok)
		}
	}
}

// TestSecondToneFittedInLongWindows: given a window that fits the tone
// apart (--window 0.5 for 4 Hz), it is fitted beside the signal in the
// demodulation too, and the tracer reads its simulated current and depth;
// in the default 0.1 s windows 8 A at 516 Hz left the fits 744 times the
// noise off.
func TestSecondToneFittedInLongWindows(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates a tracer log")
	}
	site := siteBase
	site.harmAmps, site.harmHz = 8, 516
	text := site.scenario(512, 4096, 1)
	sc, _ := simulated(t, t.TempDir(), text)
	_, log := simulateScenario(t, t.TempDir(), "tone", text)
	doc := locateDoc(t, "--freq", "512", "--window", "0.5", "--group-by", "group", "--reference-z", "0", log)
	if warned(doc, "fitted beside the signal in the 0.5 s windows") == "" {
		t.Errorf("no warning that the 516 Hz tone is fitted: %q", doc.Warnings)
	}
	checkTracer(t, doc, sc)
}
