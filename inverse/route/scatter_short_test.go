package route

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Short routes (7 to 15 usable stations): the between-station scatter is
// estimated only when a test at 1% finds it, and then widened for the
// few intervals it comes from (scatter.go, shortScatter). Before, a route
// this short took no scatter at all, and ten stations whose currents
// scatter by four times their fit sigmas gave a false step or anomaly on
// 73% of routes with no fault.

// shortScenario is a short straight route with no trend: n stations 7.5 m
// apart, 40 A, fit sigma sig, model scatter tau beyond it, and d amperes
// lost at a chainage drawn in the middle interval (none when d is 0).
func shortScenario(n int, sig, tau, d float64) mcScenario {
	mid := float64(n/2-1) * 7.5
	return mcScenario{name: "short", n: n, spacing: 7.5, i0: 40, d: d, from: mid, to: mid + 7.5,
		sigma: [2]float64{sig, sig}, tau: tau}
}

// falseAlarms returns the fraction of draws of sc (which must have no
// fault) that report a current step or a current anomaly.
func falseAlarms(t *testing.T, sc mcScenario, draws int, seed uint64) float64 {
	rng := rand.New(rand.NewPCG(seed, 6))
	bad := 0
	for range draws {
		st, _ := sc.route(rng)
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		if count(r, KindCurrentStep)+count(r, KindCurrentAnomaly) > 0 {
			bad++
		}
	}
	return float64(bad) / float64(draws)
}

// The false-alarm rate on short routes with no fault. The step test's
// nominal rate is the normal three-sigma tail (0.27%) per interval, about
// 2.5% of ten-station routes before anomalies; the bounds allow for the
// anomaly test and for the weaker test at seven and eight stations, where
// about one route in twenty still draws a scatter too small to tell from
// the fit sigmas (a known limit). Sampling error at 600 draws is under
// 0.01.
func TestShortRouteFalseAlarms(t *testing.T) {
	cases := []struct {
		n        int
		sig, tau float64
		max      float64
	}{
		{10, 0.05, 0.2, 0.05},
		{12, 0.05, 0.2, 0.04},
		{8, 0.05, 0.2, 0.08},
		{7, 0.05, 0.2, 0.09},
		{10, 0.1, 0, 0.03}, // no scatter beyond the fits' sigmas
	}
	for _, tc := range cases {
		got := falseAlarms(t, shortScenario(tc.n, tc.sig, tc.tau, 0), 600, 11)
		t.Logf("%d stations, sigma %g A, scatter %g A: %.3f of routes with a false finding", tc.n, tc.sig, tc.tau, got)
		if got > tc.max {
			t.Errorf("%d stations, sigma %g A, scatter %g A: false findings on %.3f of routes, want at most %.2f", tc.n, tc.sig, tc.tau, got, tc.max)
		}
	}
}

// Step sizes on short routes: found, and their sigmas not optimistic (the
// coverage bounds of coverage_test.go), with scatter beyond the fit sigmas
// and without; and a step of ten fit sigmas with no scatter is still found
// (the widening must not hide it when the fits' sigmas are honest).
func TestShortRouteSteps(t *testing.T) {
	cases := []struct {
		n             int
		sig, tau, d   float64
		maxMissedFrac float64
	}{
		{10, 0.05, 0.2, 9, 0.01},
		{8, 0.05, 0.2, 9, 0.08},
		{12, 0.6, 0, 6, 0.05},
	}
	for _, tc := range cases {
		sc := shortScenario(tc.n, tc.sig, tc.tau, tc.d)
		size, _, missed := runMC(t, &sc, mcDraws, 12)
		if f := float64(missed) / mcDraws; f > tc.maxMissedFrac {
			t.Errorf("%d stations, %g A step: missed in %.3f of draws, want at most %.2f", tc.n, tc.d, f, tc.maxMissedFrac)
		}
		checkCoverage(t, "size", size, true)
	}
}

// shortWidening against closed forms of Student's t quantile (a textbook
// result, from memory): nu = 1 is the Cauchy distribution, t = tan(pi (p -
// 1/2)); nu = 2 has t = (2p - 1)/sqrt(2 p (1 - p)); as nu grows t tends to
// the normal quantile, so the factor tends to 1.
func TestShortWidening(t *testing.T) {
	const k = 3.0
	p := distuv.UnitNormal.CDF(k)
	for _, tc := range []struct {
		nu, want float64
	}{
		{1, math.Tan(math.Pi*(p-0.5)) / k},
		{2, (2*p - 1) / math.Sqrt(2*p*(1-p)) / k},
		{1e7, 1},
	} {
		if got := shortWidening(tc.nu, k); math.Abs(got-tc.want) > 1e-6*tc.want {
			t.Errorf("nu %g: widening %.9g, want %.9g", tc.nu, got, tc.want)
		}
	}
}

// A step on a route of six usable stations or fewer, where no scatter can
// be estimated, says that its sigma may be optimistic; on a longer route
// with no scatter found it does not.
func TestTooShortForScatterNoted(t *testing.T) {
	for _, tc := range []struct {
		n    int
		note bool
	}{{5, true}, {7, true}, {8, false}} {
		// n stations, one of them a dipole (not usable) when n is 7: six usable.
		st := make([]Station, tc.n)
		for i := range st {
			cur := 40.0
			if i >= tc.n/2 {
				cur = 31
			}
			st[i] = Station{Key: key(i), Point: [3]float64{7.5 * float64(i), 0, -1.2}, Dir: [3]float64{1, 0, 0},
				Current: cur + 0.01*float64(i%2), CurrentSigma: 0.05, Depth: 1.2, DepthSigma: 0.01, OK: true}
		}
		if tc.n == 7 {
			st[1].Dipole = true
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		f := findings(r, KindCurrentStep)
		if len(f) != 1 {
			t.Fatalf("%d stations: %d steps, want 1: %+v", tc.n, len(f), r.Findings)
		}
		if got := strings.Contains(f[0].Message, "too few to estimate scatter"); got != tc.note {
			t.Errorf("%d stations: note %v, want %v: %s", tc.n, got, tc.note, f[0].Message)
		}
	}
}

// The gate of shortScatter passes a route with no scatter beyond its fit
// sigmas at gateP (1%), checked with draws other than those gateCrit was
// computed from: 40,000 routes for each of three lengths, where the
// sampling error of the rate is 0.05% and the bounds are five of it.
func TestGateFalsePassRate(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 12))
	for _, m := range []int{minShortIntervals, 10, minScatterIntervals - 1} {
		const draws = 40000
		cur := make([]float64, m+1)
		dI, dx, s, gs := make([]float64, m), make([]float64, m), make([]float64, m), make([]float64, m)
		pass := 0
		for range draws {
			for i := range cur {
				cur[i] = 0.1 * rng.NormFloat64()
			}
			var v0 float64
			for j := range m {
				dI[j], dx[j], s[j] = cur[j+1]-cur[j], 7.5, 0.1*math.Sqrt2
				gs[j] = dI[j] / dx[j]
				v0 += (s[j] / dx[j]) * (s[j] / dx[j])
			}
			vg := math.Pi / 2 * (v0 / float64(m)) / float64(m)
			if gateStat(dI, dx, s, medianOf(gs), vg) > gateCrit[m-minShortIntervals] {
				pass++
			}
		}
		rate := float64(pass) / draws
		t.Logf("%d intervals: gate passes %.4f of routes with no scatter", m, rate)
		if math.Abs(rate-gateP) > 0.0025 {
			t.Errorf("%d intervals: gate passes %.4f of routes with no scatter, want %.3f", m, rate, gateP)
		}
	}
}
