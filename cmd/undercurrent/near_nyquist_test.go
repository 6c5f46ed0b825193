package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// TestLocateNearNyquist: the AC walk's 20 A cable (ac-walk-2khz.toml)
// logged just above twice its frequency: 50 Hz at 102 Hz and 60 Hz at
// 128 Hz (legal rates, below them the signal aliases). Before, the
// default ten-cycle window at 102 Hz was near-singular (a 40 A cable read
// "no current found" on every traverse), and at 128 Hz the frequency
// check put the field at 59.9965 Hz, 7 of its sigmas from the true 60,
// and demodulated there with a "currents would read low" warning (found
// in review). Now the default window must be lengthened with a warning
// saying so, no warning may say the frequency is off (the check may say
// it could not tell), and each traverse
// must find the cable alone, its current and depth within kSigma of the
// simulated truth (checkOnly) and its phase within kSigma of the 35° it
// was simulated with.
func TestLocateNearNyquist(t *testing.T) {
	for _, c := range []struct{ freq, rate string }{{"50.0", "102.0"}, {"60.0", "128.0"}} {
		t.Run(c.freq+"@"+c.rate, func(t *testing.T) {
			sc, log := acWalkEdit(t, t.TempDir(), c.freq, "", false, func(s string) string {
				return strings.Replace(s, "sample_rate_hz = 2000.0", "sample_rate_hz = "+c.rate, 1)
			})
			doc := locateDoc(t, "--freq", strings.TrimSuffix(c.freq, ".0"), "--group-by", "group", "--reference-z", "0", log)
			lengthened := false
			for _, w := range doc.Warnings {
				if strings.Contains(w, "AC frequency estimated") || strings.Contains(w, "wandered") || strings.Contains(w, "read low") {
					t.Errorf("warning on a field at exactly %s Hz: %s", c.freq, w)
				}
				lengthened = lengthened || strings.Contains(w, "windows are lengthened")
			}
			if !lengthened {
				t.Errorf("no warning that the default window was lengthened: %q", doc.Warnings)
			}
			checkOnly(t, doc, sc, sc.Conductors[0].Frequency, 0, 1e-9)
			for _, g := range doc.Groups {
				if len(g.Sources) == 0 || g.Sources[0].Phase == nil || g.Sources[0].PhaseSigma == nil {
					continue // checkOnly has said so
				}
				s := g.Sources[0]
				if d := math.Abs(*s.Phase - 35); d > kSigma**s.PhaseSigma {
					t.Errorf("%s: phase %.4g ± %.2g°, true 35°", g.Key, *s.Phase, *s.PhaseSigma)
				}
			}
		})
	}
}

// TestLocateNearNyquistSmallOffset: the same walk (ac-walk-2khz.toml,
// walked both ways) with the field 0.005 Hz off the frequency given, 50
// Hz sampled at 102 Hz and 60 Hz at 128 Hz: a turn of 11° across a 6 s
// traverse. Before, the frequency-estimating fit took a walked sensor's
// change of amplitude partly as a change of phase there, and the check
// acted near twice the frequency only beyond 0.01 Hz, leaving this offset
// to the groups' phase ramps. Now the check must act on it: one warning
// that the frequency was estimated, at a value within kSigma of its sigma
// of the field's (simulated truth), and each traverse must find the cable
// alone with its current and depth within kSigma of the truth (checkOnly).
func TestLocateNearNyquistSmallOffset(t *testing.T) {
	for _, c := range []struct{ nominal, freq, rate string }{{"50", "50.005", "102.0"}, {"60", "60.005", "128.0"}} {
		t.Run(c.freq+"@"+c.rate, func(t *testing.T) {
			sc, log := acWalkEdit(t, t.TempDir(), c.freq, "", false, func(s string) string {
				return strings.Replace(s, "sample_rate_hz = 2000.0", "sample_rate_hz = "+c.rate, 1)
			})
			doc := locateDoc(t, "--freq", c.nominal, "--group-by", "group", "--reference-z", "0", log)
			f := sc.Conductors[0].Frequency
			var est []string
			for _, w := range doc.Warnings {
				if strings.Contains(w, "AC frequency estimated at") {
					est = append(est, w)
				}
			}
			if len(est) != 1 {
				t.Fatalf("%d warnings that the frequency was estimated, want 1: %q", len(est), doc.Warnings)
			}
			var got, sigma float64
			if _, err := fmt.Sscanf(est[0][strings.Index(est[0], "estimated at"):], "estimated at %g ± %g Hz", &got, &sigma); err != nil {
				t.Fatalf("%v: %s", err, est[0])
			}
			if d := math.Abs(got - f); !(d <= kSigma*sigma) {
				t.Errorf("estimated %g ± %g Hz, the field runs at %g Hz", got, sigma, f)
			}
			checkOnly(t, doc, sc, f, 0, 1e-9)
		})
	}
}
