package main

import (
	"regexp"
	"strconv"
	"testing"
)

// TestHarmonicWarningRoundsEstimate: a 1 A tracer at 640.05 Hz, located
// with --freq 640, beside a 40 A 50 Hz cable 4 m off (4 kHz logging,
// 20 nT; simulated), is demodulated at the windows' estimate, 9.9 Hz from
// the 650 Hz 13th harmonic. The harmonic warning, given again at the
// estimate, printed it in full ("the signal's 640.0554281726679 Hz";
// found in review), while the frequency warning gave "640.055 ± 0.002 Hz".
// It is now shown to the estimate's own decimals, and is still within
// 0.01 Hz of the simulated 640.05 Hz.
func TestHarmonicWarningRoundsEstimate(t *testing.T) {
	text := quillbankTracer(640.05, 1, 1, 1, 20, 4000, 51) + `
[[conductor]]
name = "c2"
kind = "line"
point = [0.0, 4.0, -0.7]
direction = [1.0, 0.0, 0.0]
current_a = 40
frequency_hz = 50
phase_deg = 0
`
	_, s := simulated(t, t.TempDir(), text)
	res, _, warns, _, err := demodulateAC(&locateOptions{freq: 640, mains: []float64{50, 60}}, s)
	if err != nil {
		t.Fatal(err)
	}
	if res.Freq == 640 {
		t.Fatalf("not demodulated at an estimate: %q", warns)
	}
	re := regexp.MustCompile(`the signal's (\d+)\.?(\d*) Hz lies [^ ]+ Hz from the 13th harmonic`)
	found := false
	for _, w := range warns {
		m := re.FindStringSubmatch(w)
		if m == nil {
			continue
		}
		found = true
		if len(m[2]) > 4 {
			t.Errorf("estimate shown with %d decimals: %q", len(m[2]), w)
		}
		f, _ := strconv.ParseFloat(m[1]+"."+m[2], 64)
		if !(f > 640.04 && f < 640.06) {
			t.Errorf("estimate shown as %s.%s Hz, simulated 640.05 Hz", m[1], m[2])
		}
	}
	if !found {
		t.Errorf("no warning naming the 13th harmonic: %q", warns)
	}
}
