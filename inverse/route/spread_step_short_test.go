package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// A step spread over several stations on a short route (7 to 15 usable
// stations) is not scatter (stepscatter.go). Where current leaves a
// go-and-return pair, Kirchhoff's current law puts the current lost in the
// change of the pair's net current (the sum of the two cores' currents)
// along the route; a traverse near that point sees a semi-infinite
// conductor (the Biot-Savart fraction (1 + d/sqrt(d^2 + h^2))/2 of
// plateau.go), and the pair's net current, fitted from the far field across
// the whole traverse, changes over several traverses. Before, the
// between-station scatter of a short route was estimated from the step
// itself and no step was reported.

// pairLossStations are the nine stations of a simulated DC go-and-return
// pair on the invented Rookery Bank site (cores 0.3 m apart at 1.0 m, the
// go core carrying 10 A to north 27.5 m and 7 A beyond, the return -10 A;
// traverses 8 m long every 5 m from north 5 m, 1 nT noise): the pair's net
// current and its sigma from each traverse's fit, as the route receives
// them, with each fit's chi-square per degree of freedom against the
// route's median noise (the two traverses nearest the point miss their
// readings by four times the noise: a line model of a pair whose current
// changes beside the traverse). By Kirchhoff's current law the net is 0 A before the point where
// the 3 A leaves (chainage 22.5 m) and -3 A after it.
func pairLossStations() []Station {
	cur := []float64{-0.0347, -0.0429, -0.0693, -0.1969, -0.8564, -2.1368, -2.7995, -2.9281, -2.9614}
	sig := []float64{0.0040, 0.0041, 0.0044, 0.0062, 0.0260, 0.0331, 0.0066, 0.0043, 0.0040}
	chi := []float64{0.854, 0.844, 1.000, 1.836, 16.2, 15.6, 1.77, 0.930, 0.835}
	st := make([]Station, len(cur))
	for i := range st {
		st[i] = Station{Key: key(i), Point: [3]float64{0, 5 * float64(i), -1.0}, Dir: [3]float64{0, 1, 0},
			Current: cur[i], CurrentSigma: sig[i], Depth: 1.0, DepthSigma: 0.01, Chi2: 470 * chi[i], DOF: 470, OK: true}
	}
	return st
}

// TestShortRouteSpreadStepFound: the pair's 3 A loss on nine stations is
// one step, falling by 3 A within three sigma, bracketing chainage 22.5 m.
// Before, the route estimated a between-station scatter of 0.36 A from the
// step and reported nothing ("findings: none").
func TestShortRouteSpreadStepFound(t *testing.T) {
	r, err := Build(pairLossStations(), nil)
	if err != nil {
		t.Fatal(err)
	}
	f := findings(r, KindCurrentStep)
	if len(f) != 1 {
		t.Fatalf("%d steps, want 1 (scatter %.3g A): %+v", len(f), r.ModelScatter, r.Findings)
	}
	v := f[0].Values[0]
	t.Logf("step %.3f ± %.3f A between %.1f and %.1f m; scatter %.3g A", v.Value, v.Sigma, f[0].From, f[0].To, r.ModelScatter)
	if math.Abs(v.Value+3) > 3*v.Sigma || v.Sigma > 0.5 {
		t.Errorf("step %.3f ± %.3f A, want -3 A within three sigma (and a sigma under 0.5 A)", v.Value, v.Sigma)
	}
	if f[0].From > 22.5 || f[0].To < 22.5 {
		t.Errorf("step between %.1f and %.1f m, want it to bracket 22.5 m", f[0].From, f[0].To)
	}
}

// pairLossScenario draws such routes: n stations 5 m apart, the net
// current 3 A falling to 0 at a point uniform in the middle interval,
// seen through a transition of effective width h, fit sigmas 0.004-0.03 A.
func pairLossScenario(n int, h float64) mcScenario {
	mid := float64(n/2-1) * 5
	return mcScenario{name: "pair loss", n: n, spacing: 5, i0: 3, d: 3, from: mid, to: mid + 5, h: h,
		sigma: [2]float64{0.004, 0.03}}
}

// TestShortRouteSpreadStepMonteCarlo: 3 A lost through transitions 0.8 to
// 1.2 station spacings wide, on 7, 8 and 9 stations, is found (a step
// whose bracket reaches within 2 m of the point) on at least 95% of routes
// (90% on 7 stations, where the F test has two degrees of freedom left;
// measured: 0, 2, 0 and 5.5% missed). Before, it was missed on 14, 96.5,
// 79 and 100% of them (the same draws).
func TestShortRouteSpreadStepMonteCarlo(t *testing.T) {
	for _, tc := range []struct {
		n         int
		h, missed float64
	}{{9, 4, 0.05}, {9, 6, 0.05}, {8, 4, 0.05}, {7, 4, 0.10}} {
		sc := pairLossScenario(tc.n, tc.h)
		rng := rand.New(rand.NewPCG(uint64(tc.n), 0x10ad))
		const draws = 200
		missed := 0
		for range draws {
			st, xf := sc.route(rng)
			r, err := Build(st, nil)
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, f := range findings(r, KindCurrentStep) {
				if f.From-2 <= xf && xf <= f.To+2 {
					found = true
				}
			}
			if !found {
				missed++
			}
		}
		t.Logf("%d stations, h %g m: missed %d of %d", tc.n, tc.h, missed, draws)
		if f := float64(missed) / draws; f > tc.missed {
			t.Errorf("%d stations, h %g m: 3 A step missed on %.3f of routes, want at most %.2f", tc.n, tc.h, f, tc.missed)
		}
	}
}

// TestShortRouteScatterNoStepFalseAlarms: the step fitted to explain the
// scatter of a short route must not turn scatter into steps. Routes of 7,
// 8, 9 and 11 stations with no fault whose currents scatter by four times
// their fit sigmas, about a flat level and about a steady leakage, report a
// false step or anomaly on no more routes than before the step was fitted
// (measured on the same draws before: 0.5, 0.5, 0.8 and 4.3%; after: 0.8,
// 0.5, 1.0 and 4.3%) plus 1%, about twice the sampling error at 600 draws.
func TestShortRouteScatterNoStepFalseAlarms(t *testing.T) {
	cases := []struct {
		sc  mcScenario
		max float64
	}{
		{shortScenario(7, 0.05, 0.2, 0), 0.015},
		{shortScenario(8, 0.05, 0.2, 0), 0.015},
		{mcScenario{name: "9 leakage", n: 9, spacing: 7.5, i0: 40, decay: 0.02, sigma: [2]float64{0.05, 0.05}, tau: 0.2}, 0.018},
		{mcScenario{name: "11 leakage, sigmas 0.02-0.1 A", n: 11, spacing: 5, i0: 3, decay: 0.01, sigma: [2]float64{0.02, 0.1}, tau: 0.15}, 0.053},
	}
	for _, tc := range cases {
		got := falseAlarms(t, tc.sc, 600, 31)
		t.Logf("%s, %d stations, scatter %g A: %.3f of routes with a false finding", tc.sc.name, tc.sc.n, tc.sc.tau, got)
		if got > tc.max {
			t.Errorf("%s: false findings on %.3f of routes, want at most %.2f", tc.sc.name, got, tc.max)
		}
	}
}

// TestStepFPassRate: the F test of stepScatter passes routes whose
// stations scatter about a straight line, with no step, at stepAlpha (1%)
// whatever the scatter, checked with draws other than those stepFCrit was
// computed from: 3000 routes of 7 and of 10 stations, equal sigmas, where
// the sampling error of the rate is 0.18% and the bound 0.6%.
func TestStepFPassRate(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 0xf7e5))
	for _, n := range []int{7, 10} {
		const draws = 3000
		pts := make([]lvPoint, n)
		pass := 0
		for range draws {
			for i := range pts {
				pts[i] = lvPoint{x: 5 * float64(i), y: 0.3 * rng.NormFloat64(), s: 0.3, w: 1 / 0.09}
			}
			rss0, rss1, _ := stepFit(pts)
			if (rss0-rss1)/3/(rss1/float64(n-5)) > stepFCrit[n-1-minShortIntervals] {
				pass++
			}
		}
		rate := float64(pass) / draws
		t.Logf("%d stations: F test passes %.4f of routes with no step", n, rate)
		if math.Abs(rate-stepAlpha) > 0.006 {
			t.Errorf("%d stations: F test passes %.4f of routes with no step, want %.3f", n, rate, stepAlpha)
		}
	}
}
