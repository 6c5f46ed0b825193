package main

import (
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
