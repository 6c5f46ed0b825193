package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// defectRateMain is the review's evenly leaking pipe with one coating
// defect: 21 stations every 10 m over 200 m, 1.5 m below the sensors,
// carrying 2 exp(-a x) A (uniform leakage, the transmission-line model),
// with 0.3 A taken at a defect at 105 m, between the 11th and 12th
// stations, the current past it falling at the same rate:
// (2 - 0.3 exp(105 a)) exp(-a x). Station sigmas 0.011 A (the review's
// fits at 5 nT). The two stations 5 m either side of the defect each read
// a tenth of the step towards the other side, as locate's fits of a
// traverse beside a loss do (plateau.go nearStation: about a tenth at 5 m
// from the fault, 1.3 m deep; the review's residuals there were -2.3 to
// -3.7 and +2.8 to +4.1 sigma, 8-15% of the step). Simulated truth.
func defectRateMain(a float64, seed uint64) []Station {
	return defectsMain(a, []coatingDefect{{105, 0.3}}, seed)
}

// coatingDefect is a coating defect on defectsMain: its chainage, and
// the current taken there (A).
type coatingDefect struct{ x, loss float64 }

// defectsMain is defectRateMain's pipe with the coating defects given:
// past each, the current is less by its loss, the current past it
// falling at the same rate (loss exp(-a (x - x0)) at x), and the stations
// 5 m either side of each read a tenth of its step towards the other
// side. Simulated truth.
func defectsMain(a float64, defects []coatingDefect, seed uint64) []Station {
	const share = 0.1
	rng := rand.New(rand.NewPCG(seed, 71))
	st := make([]Station, 21)
	for i := range st {
		x := float64(i) * 10
		c := 2 * math.Exp(-a*x)
		for _, d := range defects {
			step := d.loss * math.Exp(-a*(x-d.x)) // the step's size at x
			switch {
			case x > d.x:
				c -= step
				if x-d.x < 10 {
					c += share * step
				}
			case d.x-x < 10:
				c -= share * step
			}
		}
		st[i] = Station{Key: key(i + 1), Point: [3]float64{x, 0, -1.5}, Dir: [3]float64{1, 0, 0},
			Current: c + 0.011*rng.NormFloat64(), CurrentSigma: 0.011, Depth: 1.5, DepthSigma: 0.003, OK: true}
	}
	return st
}

// TestLeakRateWithDefectUnbiased: on the leaking pipe with one defect
// (a = 2e-3 and 3e-3 per metre, 86.47% and 95.02% per km: 100 (1 -
// exp(-1000 a))), over 40 draws each, the attenuation reported has a mean
// pull (reported minus truth, over its sigma) within ±0.5 (three times
// the mean's standard error, 1/sqrt(40)) and lies within 2 sigma of the
// truth on at least 36 draws (38 expected). Before, the two stations
// beside the defect stayed in the rate's fit and steepened it: mean pulls
// near +1.7 (the review's ten seeds all read high, up to 3 sigma).
func TestLeakRateWithDefectUnbiased(t *testing.T) {
	const draws = 40
	for _, a := range []float64{2e-3, 3e-3} {
		want := 100 * (1 - math.Exp(-1000*a))
		var sum float64
		var n, within int
		for seed := uint64(1); seed <= draws; seed++ {
			r, err := Build(defectRateMain(a, seed), nil)
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range findings(r, KindAttenuation) {
				for _, v := range f.Values {
					if v.Unit != "%/km" || !(v.Sigma > 0) {
						continue
					}
					pull := (v.Value - want) / v.Sigma
					sum += pull
					n++
					if math.Abs(pull) <= 2 {
						within++
					}
				}
			}
		}
		if n < draws-2 {
			t.Errorf("a %g: a rate reported on %d of %d draws", a, n, draws)
			continue
		}
		mean := sum / float64(n)
		t.Logf("a %g: %d rates, mean pull %+.2f, %d within 2 sigma", a, n, mean, within)
		if math.Abs(mean) > 0.5 || within < n-4 {
			t.Errorf("a %g: mean pull %+.2f (want within ±0.5), %d of %d within 2 sigma (want %d or more)", a, mean, within, n, n-4)
		}
	}
}

// TestLeakRateWithManyDefectsReported: on the leaking pipe (a = 2e-3 per
// metre, 18.13% per 100 m: 100 (1 - exp(-100 a))) with none, one, two and
// three coating defects (those of the review's three-defect pipe: 0.25,
// 0.25 and 0.20 A at 45, 105 and 165 m, each between two stations), over
// 40 draws each, a rate is reported on every draw where every defect was
// found as a step, and over those draws (at least a third of them) its
// mean pull (reported minus truth, over its sigma) lies within three
// times the mean's standard error (3/sqrt(n)) and it lies within 2 sigma
// of the truth on all but a tenth and one (95% expected). Before, two
// stations each side of every step were left out of the rate's fit: with
// three defects 12 of the 21, and the rate fitted on the 9 left, 2-3
// stations to a level, never passed StepK of its sigma, so no rate was
// reported on any draw (the review's simulated runs: 0 of 7). Where the
// three defects are not all found (a known limit: the whole fall is then
// read as a steeper leak), the draw is not judged.
func TestLeakRateWithManyDefectsReported(t *testing.T) {
	const a, draws = 2e-3, 40
	want := 100 * (1 - math.Exp(-1000*a)) // per km, the value's unit
	all := []coatingDefect{{45, 0.25}, {105, 0.25}, {165, 0.20}}
	for nd := 0; nd <= len(all); nd++ {
		var sum float64
		var n, within, found int
		for seed := uint64(1); seed <= draws; seed++ {
			r, err := Build(defectsMain(a, all[:nd], seed), nil)
			if err != nil {
				t.Fatal(err)
			}
			if len(findings(r, KindCurrentStep)) != nd {
				continue
			}
			found++
			rate := false
			for _, f := range findings(r, KindAttenuation) {
				for _, v := range f.Values {
					if v.Unit != "%/km" || !(v.Sigma > 0) {
						continue
					}
					rate = true
					pull := (v.Value - want) / v.Sigma
					sum += pull
					n++
					if math.Abs(pull) <= 2 {
						within++
					}
				}
			}
			if !rate {
				t.Errorf("%d defects, draw %d: every defect found as a step, but no rate reported", nd, seed)
			}
		}
		if found < draws/3 {
			t.Errorf("%d defects: every defect found on %d of %d draws, too few to judge the rate", nd, found, draws)
			continue
		}
		if n == 0 {
			continue // said above, draw by draw
		}
		mean := sum / float64(n)
		t.Logf("%d defects: found on %d draws, %d rates, mean pull %+.2f, %d within 2 sigma", nd, found, n, mean, within)
		if lim := 3 / math.Sqrt(float64(n)); math.Abs(mean) > lim || within < n-n/10-1 {
			t.Errorf("%d defects: mean pull %+.2f (want within ±%.2f), %d of %d within 2 sigma (want %d or more)", nd, mean, lim, within, n, n-n/10-1)
		}
	}
}
