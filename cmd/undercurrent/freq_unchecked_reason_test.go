package main

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestFrequencyUncheckedSaysWhy: the frequency check drops windows whose
// fitted frequencies lie far from their median in their own sigmas, and
// when fewer than freqCheckMinWindows are left it cannot check the
// frequency. That is not the same as too few windows with a clear signal,
// which the warning said whatever the cause (a three-phase circuit whose
// 160 windows all had a signal hundreds of times their noise was said to
// have too few clear ones; found in review). A still sensor logs a 1000 nT
// field whose frequency hops by 0.05 Hz from one 0.2 s window to the next
// (50 ± 0.5 Hz): every window's signal is 200 times its noise, and each
// window's frequency is 50 or more of its sigmas (about 1e-3 Hz) from the
// others'. The warning must say the windows' frequencies disagree, not
// that they lack a clear signal. TestFrequencyUncheckedSaysSo checks the
// other case.
func TestFrequencyUncheckedSaysWhy(t *testing.T) {
	const (
		fs   = 2000.0
		per  = 400 // samples per 0.2 s window
		nWin = 20
	)
	rng := rand.New(rand.NewPCG(5, 6))
	s := &ingest.Samples{Source: "hopping.csv"}
	for w := range nWin {
		f := 50 + 0.05*float64(w-nWin/2)
		for i := range per {
			tt := float64(w*per+i) / fs
			b := 1000 * math.Cos(2*math.Pi*f*float64(i)/fs+0.3*float64(w))
			s.Time = append(s.Time, 1.8e9+tt)
			s.X, s.Y, s.Z = append(s.X, 2), append(s.Y, 0), append(s.Z, 0.3)
			s.Bx = append(s.Bx, 17000+b+5*rng.NormFloat64())
			s.By = append(s.By, 1500+0.5*b+5*rng.NormFloat64())
			s.Bz = append(s.Bz, -44000+5*rng.NormFloat64())
			s.Group = append(s.Group, "T01")
		}
	}
	_, _, warns, _, err := demodulateAC(&locateOptions{freq: 50, mains: []float64{50, 60}}, s)
	if err != nil {
		t.Fatal(err)
	}
	if len(warns) == 0 {
		t.Fatal("no warning")
	}
	last := warns[len(warns)-1]
	if !strings.Contains(last, "could not be checked") || !strings.Contains(last, "disagree") || strings.Contains(last, "fewer than 3 windows have a clear signal") {
		t.Errorf("last warning %q, want one saying the windows' frequencies disagree", last)
	}
	if !strings.Contains(last, "20 of 20 windows have a clear signal") {
		t.Errorf("last warning %q, want it to count the 20 clear windows", last)
	}
}
