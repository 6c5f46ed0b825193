package route

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"
)

// twoCrews is a 2 A main along x losing 0.35 A at x = 185 m (simulated
// truth), walked by one crew at x = 0-120 m (day1.csv, sigmas 0.0022 A
// and 0.0018 m) and by another a day later at x = 100-230 m (day2.csv,
// sigmas 0.005 A and 0.005 m) with the supply turned down to 0.8 of the
// first day's: every current scaled, the loss's too. The walks meet at
// 100-120 m, upstream of the loss, where both read one level. The
// second crew's depths read deeper by deeper, m (its sensors higher
// over the ground than the height given for both).
func twoCrews(seed uint64, deeper float64) []Station {
	rng := rand.New(rand.NewPCG(seed, 11))
	t0 := time.Date(2026, 5, 12, 7, 30, 0, 0, time.UTC)
	truth := func(x float64) float64 {
		if x < 185 {
			return 2
		}
		return 1.65
	}
	var st []Station
	for walk := 0; walk < 2; walk++ {
		first, n, scale, sig, dsig, name := 0.0, 13, 1.0, 0.0022, 0.0018, "day1.csv"
		if walk == 1 {
			first, n, scale, sig, dsig, name = 100, 14, 0.8, 0.005, 0.005, "day2.csv"
		}
		for k := 0; k < n; k++ {
			x := first + 10*float64(k)
			key := "T" + string(rune('0'+(k+1)/10)) + string(rune('0'+(k+1)%10))
			start := t0.Add(time.Duration(k) * time.Minute)
			depth := 1.3
			if walk == 1 {
				x += 1e-5 * rng.NormFloat64()
				key = name + ":" + key
				start = start.Add(23 * time.Hour)
				depth += deeper
			}
			st = append(st, Station{Key: key, Point: [3]float64{x, 0.002 * rng.NormFloat64(), -1.3}, Dir: [3]float64{1, 0.001 * rng.NormFloat64(), 0},
				Current: scale*truth(x) + sig*rng.NormFloat64(), CurrentSigma: sig,
				Depth: depth + dsig*rng.NormFloat64(), DepthSigma: dsig, OK: true, Walk: name, Start: start})
		}
	}
	return st
}

// TestWalksOneLevelChangeOrRatio: on twoCrews, the repeats all read one
// level, where an added change (-0.4 A) and a ratio (0.8) fit them alike;
// the route took the change alone, and gave the far end at the first
// day's level as 1.7244 +/- 0.0057 A, 13 sigma from the ratio's 1.65 A
// (the truth here), and the loss only as levels 1.997 and 1.721 A (a
// 13.9% loss, where 17.5% left), with no share of the current at all
// (found in review). Over ten noise draws the walks-differ caution says
// the two fit alike and gives the ratio (within 3 sigma of 0.8); the last
// station's current at the first walk's level lies within 2 sigma of
// 1.65 A; and the step at 185 m gives day2.csv's own step as a share of
// its current, within 3 sigma of 17.5% and more than 3 sigma from 13.9%.
func TestWalksOneLevelChangeOrRatio(t *testing.T) {
	for seed := uint64(1); seed <= 10; seed++ {
		r, err := Build(twoCrews(seed, 0), &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		fs := walksDifferOf(r)
		if len(fs) != 1 {
			t.Fatalf("seed %d: %d walks-differ findings, want one: %v", seed, len(fs), r.Findings)
		}
		if !strings.Contains(fs[0].Message, "an added change and a ratio") {
			t.Errorf("seed %d: the caution does not say a change and a ratio fit alike: %s", seed, fs[0].Message)
		}
		if q, ok := valueNamed(fs[0], "ratio day2.csv"); !ok || !(q.Sigma > 0) || math.Abs(q.Value-0.8) > 3*q.Sigma {
			t.Errorf("seed %d: ratio %.4f ± %.4f, want 0.8 within 3 sigma", seed, q.Value, q.Sigma)
		}
		last := r.Stations[len(r.Stations)-1]
		if last.Walk != "day2.csv" || math.Abs(last.FirstWalkCurrent-1.65) > 2*last.FirstWalkCurrentSigma {
			t.Errorf("seed %d: %s at the first walk's level %.4f ± %.4f A, want 1.65 A within 2 sigma", seed, last.Key, last.FirstWalkCurrent, last.FirstWalkCurrentSigma)
		}
		var share Value
		var found bool
		for _, f := range findings(r, KindCurrentStep) {
			if f.From < 185 && 185 < f.To {
				share, found = valueNamed(f, "share day2.csv")
				if !strings.Contains(f.Message, "day2.csv's own currents") {
					t.Errorf("seed %d: the step does not give day2.csv's own step: %s", seed, f.Message)
				}
			}
		}
		if !found || !(share.Sigma > 0) || math.Abs(share.Value+17.5) > 3*share.Sigma || math.Abs(share.Value+13.9) < 3*share.Sigma {
			t.Errorf("seed %d: share of day2.csv's current lost at 185 m %.2f ± %.2f%% (found %v), want -17.5%% within 3 sigma and not -13.9%%: %v", seed, share.Value, share.Sigma, found, r.Findings)
		}
	}
}

// TestWalksDepthDiffer: twoCrews with the second crew's depths 0.055 m
// deeper (its staff 5 cm taller than the height given for both: the
// review's 1.3517 +/- 0.0053 m against 1.2967 +/- 0.0018 m at one
// station, which passed unremarked) gives one walks-depth-differ caution
// naming both logs and the stations, its difference within 3 sigma of
// 0.055 m; with one depth for both (simulated truth) over twenty noise
// draws, none.
func TestWalksDepthDiffer(t *testing.T) {
	for seed := uint64(1); seed <= 20; seed++ {
		r, err := Build(twoCrews(seed, 0), &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range findings(r, KindWalksDepthDiffer) {
			t.Errorf("seed %d, one depth: %s", seed, f.Message)
		}
	}
	for seed := uint64(1); seed <= 5; seed++ {
		r, err := Build(twoCrews(seed, 0.055), &Settings{SensorHeight: 0.3})
		if err != nil {
			t.Fatal(err)
		}
		fs := findings(r, KindWalksDepthDiffer)
		if len(fs) != 1 {
			t.Fatalf("seed %d: %d walks-depth-differ findings, want one: %v", seed, len(fs), r.Findings)
		}
		f := fs[0]
		if f.Severity != SeverityCaution {
			t.Errorf("seed %d: severity %s, want caution", seed, f.Severity)
		}
		for _, want := range []string{"day2.csv reads the conductor", "deeper than day1.csv", "T11", "day2.csv:T01", "sensors stood at another height"} {
			if !strings.Contains(f.Message, want) {
				t.Errorf("seed %d: the caution does not say %q: %s", seed, want, f.Message)
			}
		}
		if d, ok := valueNamed(f, "depth change day2.csv"); !ok || !(d.Sigma > 0) || math.Abs(d.Value-0.055) > 3*d.Sigma {
			t.Errorf("seed %d: depth change %.4f ± %.4f m, want 0.055 m within 3 sigma", seed, d.Value, d.Sigma)
		}
	}
}
