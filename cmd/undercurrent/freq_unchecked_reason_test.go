package main

import (
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// TestFrequencyUncheckedSaysWhy: the frequency check drops windows whose
// fitted frequencies lie far from their median, both in their own sigmas
// and by over a quarter of the window's frequency resolution (calibrate.CombineWindowFreqs),
// and when fewer than freqCheckMinWindows are left it cannot check the
// frequency. That is not the same as too few windows with a clear signal,
// which the warning said whatever the cause (a three-phase circuit whose
// 160 windows all had a signal hundreds of times their noise was said to
// have too few clear ones; found in review). Twenty still 0.2 s windows,
// each with a field 200 times its noise, whose fits landed 1.5 Hz apart
// from one to the next (35 to 63.5 Hz, each to 1e-3 Hz): only the median's
// own lies within 1.25 Hz of it. The warning must say the windows'
// frequencies disagree, counting the 20 clear ones, not that they lack a
// clear signal. TestFrequencyUncheckedSaysSo checks the other case.
func TestFrequencyUncheckedSaysWhy(t *testing.T) {
	const window = 0.2
	var ws []calibrate.Window
	for w := range 20 {
		ws = append(ws, calibrate.Window{
			Group: "T01", Time: 1.8e9 + window*float64(w),
			B:     [3]complex128{1000, 500i, 0},
			Sigma: [3]float64{5, 5, 5},
			Freq:  50 + 1.5*float64(w-10), FreqSigma: 1e-3,
		})
	}
	if est, ok := estimateWindowFreq(ws, window); ok {
		t.Fatalf("frequency estimated at %.6g ± %.2g Hz from windows 1.5 Hz apart, want none", est.freq, est.sigma)
	}
	last := uncheckedWarning(ws, 50)
	if !strings.Contains(last, "could not be checked") || !strings.Contains(last, "disagree") || strings.Contains(last, "fewer than 3 windows have a clear signal") {
		t.Errorf("warning %q, want one saying the windows' frequencies disagree", last)
	}
	if !strings.Contains(last, "20 of 20 windows have a clear signal") {
		t.Errorf("warning %q, want it to count the 20 clear windows", last)
	}
}
