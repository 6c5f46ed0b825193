package calibrate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestDemodulateMissingSamplesKeepTheirTimes: a 50 Hz tone of known RMS
// phasors (the phasor of IEEE Std C37.118.1: RMS magnitude, phase at
// absolute time) logged at 2000 Hz with exact times from a whole second,
// every 10th sample missing. Its steps of 0.5 and 1 ms are also those of
// 1800 Hz written to 0.5 ms, but the samples keep their own times: re-timed
// at 1800 Hz they moved by up to 0.22 ms and every amplitude came out
// 0.1% low (tens of sigma). The mean amplitude over the windows is within
// 4 sigma of the truth on each axis, and no word of quantised stamps.
func TestDemodulateMissingSamplesKeepTheirTimes(t *testing.T) {
	rng := rand.New(rand.NewPCG(71, 72))
	const fs = 2000
	c := columnsWithout(acLog(rng, fs, 40*fs, 1.7e9, 50, testPhasors, 1), func(i int) bool { return i%10 == 9 })
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.2})
	if err != nil {
		t.Fatal(err)
	}
	if res.Quantum != nil || anyContains(res.Warnings, "quantised") {
		t.Errorf("taken as quantised: %+v, %q", res.Quantum, res.Warnings)
	}
	if len(res.Windows) < 150 {
		t.Fatalf("%d windows, want about 200", len(res.Windows))
	}
	for k := 0; k < 3; k++ {
		var amp, s2 float64
		for _, w := range res.Windows {
			amp += cmplx.Abs(w.B[k])
			s2 += w.Sigma[k] * w.Sigma[k]
		}
		m := float64(len(res.Windows))
		sig := math.Sqrt(s2) / m
		if d := math.Abs(amp/m - cmplx.Abs(testPhasors[k])); d > 4*sig {
			t.Errorf("axis %d: mean amplitude %.4f nT, true %.4f: off by %.1f sigma", k, amp/m, cmplx.Abs(testPhasors[k]), d/sig)
		}
	}
}

// TestDemodulateRandomDropsAdvice: 2000 Hz with exact times, 12% of the
// samples missing at random, loses windows to pauses; the warning advises
// fixing the logger, not writing the times with more digits (they are
// exact, and none repeats).
func TestDemodulateRandomDropsAdvice(t *testing.T) {
	rng := rand.New(rand.NewPCG(73, 74))
	const fs = 2000
	c := columnsWithout(acLog(rng, fs, 20*fs, 1.7e9, 50, testPhasors, 1), func(int) bool { return rng.Float64() < 0.12 })
	res, err := DemodulateColumns(c, &DemodSettings{Freq: 50, Window: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	if res.Quantum != nil {
		t.Errorf("taken as quantised: %+v", res.Quantum)
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.Contains(w, "fix the logger's time stamps")
		if strings.Contains(w, "quantised") || strings.Contains(w, "more digits") {
			t.Errorf("warning of quantised stamps: %s", w)
		}
	}
	if !found {
		t.Errorf("no advice to fix the logger's time stamps: %q", res.Warnings)
	}
}
