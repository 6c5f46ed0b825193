package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// scattered is spur with an extra model error of standard deviation tau
// (A) added to every station's current but not to its CurrentSigma: what a
// straight-line fit near bends reports, a sigma from its own readings and
// a current off by an error it cannot see.
func scattered(seed uint64, tau, step float64, stepAfter int) []Station {
	st := spur(seed, step, stepAfter)
	rng := rand.New(rand.NewPCG(seed, 7))
	for i := range st {
		st[i].Current += tau * rng.NormFloat64()
	}
	return st
}

// A smooth route whose model scatter is six times the fit sigmas (as over a
// bending cable fitted traverse by traverse) gives no steps: tested against
// the fit sigmas alone (a difference sigma of 0.071 A against a true 0.43
// A), more than half the intervals would exceed 3 sigma. The false rate
// must stay at the level TestNoFalseSteps allows, and the estimated scatter
// must average within 10% of the true one.
func TestModelScatterNoFalseSteps(t *testing.T) {
	const runs = 200
	const tau = 6 * cpSigma
	falses, anomalies := 0, 0
	var sum float64
	for seed := uint64(0); seed < runs; seed++ {
		r, err := Build(scattered(seed, tau, 0, cpCount), nil)
		if err != nil {
			t.Fatal(err)
		}
		falses += count(r, KindCurrentStep)
		anomalies += count(r, KindCurrentAnomaly)
		sum += r.ModelScatter
	}
	rate := float64(falses) / float64(runs*(cpCount-1))
	t.Logf("false step rate %.4f, anomalies %d, mean scatter %.4f A (true %.4f A)", rate, anomalies, sum/runs, tau)
	if rate > 0.01 {
		t.Errorf("false step rate %.4f with model scatter %.2f A, want <= 0.01", rate, tau)
	}
	if a := float64(anomalies) / float64(runs*cpCount); a > 0.01 {
		t.Errorf("false anomaly rate %.4f, want <= 0.01", a)
	}
	// The MAD estimate of the total sigma sqrt(s^2 + 2 tau^2) per interval,
	// corrected for the fit sigma, is close to unbiased for 30 intervals.
	if m := sum / runs; math.Abs(m-tau) > 0.1*tau {
		t.Errorf("mean estimated scatter %.4f A, true %.4f A", m, tau)
	}
}

// Without model error the estimate is small: the stations scatter as their
// sigmas say, and the median ratio exceeds the normal one in about half
// the runs only, by little.
func TestModelScatterZeroWhenConsistent(t *testing.T) {
	var sum float64
	const runs = 100
	for seed := uint64(0); seed < runs; seed++ {
		r, err := Build(spur(seed, 0, cpCount), nil)
		if err != nil {
			t.Fatal(err)
		}
		sum += r.ModelScatter
	}
	if m := sum / runs; m > 0.5*cpSigma {
		t.Errorf("mean scatter %.4f A without model error, want under %.4f A", m, 0.5*cpSigma)
	}
}

// A real step is still found among model scatter six times the fit sigmas:
// 3 A lost after station 15 (about 7 sigma of the difference of two
// stations' model errors), bracketed by stations 15 and 16 and sized within
// kStep of the sigma reported, which must include the scatter of both
// levels.
func TestModelScatterStepFound(t *testing.T) {
	const tau = 6 * cpSigma
	for seed := uint64(0); seed < 20; seed++ {
		r, err := Build(scattered(seed, tau, 3, 15), nil)
		if err != nil {
			t.Fatal(err)
		}
		var found int
		for _, f := range r.Findings {
			if f.Kind != KindCurrentStep {
				continue
			}
			found++
			if !(f.From <= 15*cpSpacing+1e-6 && 16*cpSpacing-1e-6 <= f.To) {
				t.Errorf("seed %d: step bracketed %g-%g m, want 300-320 m: %s", seed, f.From, f.To, f.Message)
			}
			v := f.Values[0]
			if floor := math.Sqrt2 * r.ModelScatter; math.Abs(v.Value+3) > kStep*v.Sigma || !(r.ModelScatter > 0) || v.Sigma < floor {
				t.Errorf("seed %d: step %.3g ± %.2g A, want -3 A within %d sigma and a sigma of at least sqrt(2) times the estimated scatter (%.2g A)", seed, v.Value, v.Sigma, kStep, floor)
			}
		}
		if found != 1 {
			t.Errorf("seed %d: %d steps, want 1: %v", seed, found, r.Findings)
		}
	}
}
