package main

import (
	"regexp"
	"strings"
	"testing"
)

// TestLocateShortWindowAdviceFits: the AC walk's 20 A cable at 50 Hz
// (ac-walk-2khz.toml, simulated truth) logged at 250 Hz, where the 2nd
// harmonic (100 Hz) is the only one of the signal's own fitted under 0.45
// of the sample rate. At --window 0.04 and 0.045 s the warning that the
// 2nd harmonic is not fitted advised "windows of 0.05 s or longer", which
// hold 13 samples for the 12 parameters fitted with it (calibrate's
// Demodulate asks for two more samples than parameters): the run left it
// out after all, with a warning that nested the raw error of the failed
// fit and its "use a window of at least 0.056 s" (found in review). The
// window advised must now fit it: located with it, no warning says a
// harmonic is not fitted. At 0.05 s the warning must say in its own words
// why (13 samples, 12 parameters), without the nested error, and name a
// window that fits it. Each located run must find the cable, its current
// and depth within kSigma of the truth (checkOnly).
func TestLocateShortWindowAdviceFits(t *testing.T) {
	sc, log := acWalkEdit(t, t.TempDir(), "50.0", "", false, func(s string) string {
		if !strings.Contains(s, "sample_rate_hz = 2000.0") {
			t.Fatal("ac-walk-2khz.toml no longer sets sample_rate_hz = 2000.0")
		}
		return strings.Replace(s, "sample_rate_hz = 2000.0", "sample_rate_hz = 250.0", 1)
	})
	advice := regexp.MustCompile(`windows of ([0-9.]+) s or longer fit`)
	cyclesIn := regexp.MustCompile(`s windows \(([0-9.]+) cycles`)
	holds := regexp.MustCompile(`holds only ([0-9.]+) cycles`)
	notFitted := func(doc *resultDoc) []string {
		var out []string
		for _, w := range doc.Warnings {
			// "could not be fitted" was the old fallback's wording.
			if strings.Contains(w, "harmonic") && (strings.Contains(w, "not fitted") || strings.Contains(w, "could not be fitted")) {
				out = append(out, w)
			}
		}
		return out
	}
	for _, win := range []string{"0.04", "0.045", "0.05"} {
		doc := locateDoc(t, "--freq", "50", "--window", win, "--group-by", "group", "--reference-z", "0", log)
		checkOnly(t, doc, sc, 50, 0, 0)
		ws := notFitted(doc)
		if len(ws) != 1 {
			t.Errorf("--window %s: %d warnings that a harmonic is not fitted, want one: %q", win, len(ws), doc.Warnings)
			continue
		}
		w := ws[0]
		for _, bad := range []string{"calibrate", "demodulate:", "use a window of at least", "them all"} {
			if strings.Contains(w, bad) {
				t.Errorf("--window %s: the warning holds %q (a nested error, or the plural for one harmonic): %s", win, bad, w)
			}
		}
		if win == "0.05" && !(strings.Contains(w, "13 samples") && strings.Contains(w, "12 parameters")) {
			t.Errorf("--window 0.05: the warning does not say the 13 samples are too few for the 12 parameters: %s", w)
		}
		// Both warnings count the cycles the window's samples hold
		// (0.045 s at 250 Hz: 11 samples, 2.20 cycles; the harmonics
		// warning said 2.25).
		if c := cyclesIn.FindStringSubmatch(w); c != nil {
			for _, o := range doc.Warnings {
				if h := holds.FindStringSubmatch(o); h != nil && h[1] != c[1] {
					t.Errorf("--window %s: %s cycles in one warning, %s in the other: %q", win, c[1], h[1], doc.Warnings)
				}
			}
		}
		m := advice.FindStringSubmatch(w)
		if m == nil {
			t.Errorf("--window %s: no window advised: %s", win, w)
			continue
		}
		again := locateDoc(t, "--freq", "50", "--window", m[1], "--group-by", "group", "--reference-z", "0", log)
		if left := notFitted(again); len(left) > 0 {
			t.Errorf("--window %s advised %s s, which does not fit it either: %q", win, m[1], left)
		}
		checkOnly(t, again, sc, 50, 0, 0)
	}
}
