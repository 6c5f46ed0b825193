package main

import (
	"math"
	"strings"
	"testing"
)

// TestConditionedWindowRounding: the default window counts as lengthened
// only when it becomes a larger whole multiple of itself. A 5 kHz
// logger's rate read from its stamps, 4999.2 Hz, rounds a 0.1 s window to
// 500 samples, 0.100016 s; before, that was warned about as "the sampling
// is close to twice the 512 Hz signal ... the windows are lengthened to
// 0.1 s", at ten times the signal (and 640 Hz alike, and 50 Hz at
// 299.7 Hz "lengthened to 0.2002 s"; found in review). Those must keep
// their default window with no warning; 50 Hz at 102 Hz (a beat of
// 0.5 s, the window of 0.2 s spanning 0.4 of it) must still be lengthened
// to a larger multiple with the warning that names twice the frequency.
func TestConditionedWindowRounding(t *testing.T) {
	for _, c := range []struct{ freq, fs float64 }{{512, 4999.2}, {640, 4999.2}, {50, 299.7}} {
		pl := demodPlan{mains: []float64{50, 60}, fs: c.fs}
		if isMains(c.freq) {
			pl.mains = nil
		}
		win := defaultWindow(c.freq)
		w, warn := pl.conditioned(c.freq, win)
		if w != win || warn != "" {
			t.Errorf("%g Hz at %g Hz sampling: window %g s of %g s, warning %q; want the default window and no warning", c.freq, c.fs, w, win, warn)
		}
	}
	pl := demodPlan{fs: 102}
	win := defaultWindow(50)
	w, warn := pl.conditioned(50, win)
	// A whole multiple as the sampling rounds it: within a sample.
	if m := math.Round(w / win); !(m >= 2) || math.Abs(w-m*win) > 1/pl.fs || !strings.Contains(warn, "close to twice") {
		t.Errorf("50 Hz at 102 Hz sampling: window %g s of %g s, warning %q; want a larger whole multiple and a warning naming twice the frequency", w, win, warn)
	}
}
