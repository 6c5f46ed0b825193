package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestUniformLeakageNoStep: a straight main with no defect whose current
// falls as 5 exp(-a x) A, a = 1e-3 per metre (a poorly coated pipe; the
// transmission-line model of uniform leakage, simulated truth), 41
// stations 25 m apart with sigmas of 0.003 A, gives no current step on
// any of 12 seeds, and its attenuation is reported within 4 sigma of the
// truth, 100 (1 - exp(-1)) = 63.21% per km, 20 log10(e) = 8.686 dB per km.
// Before, the straight-line trend of the step search took the curve near
// the route's start for a step of 3-6 sigma (found in review).
func TestUniformLeakageNoStep(t *testing.T) {
	const a, sigma = 1e-3, 0.003
	for seed := uint64(1); seed <= 12; seed++ {
		rng := rand.New(rand.NewPCG(seed, 7))
		st := make([]Station, 41)
		for i := range st {
			x := float64(i) * 25
			st[i] = Station{
				Key:          key(i),
				Point:        [3]float64{x, 0, -1.5},
				Dir:          [3]float64{1, 0, 0},
				Current:      5*math.Exp(-a*x) + sigma*rng.NormFloat64(),
				CurrentSigma: sigma,
				Depth:        1.5, DepthSigma: 0.002,
				OK: true,
			}
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		if f := findings(r, KindCurrentStep); len(f) > 0 {
			t.Errorf("seed %d: a step on a route with none: %s", seed, f[0].Message)
		}
		att := findings(r, KindAttenuation)
		if len(att) != 1 {
			t.Errorf("seed %d: %d attenuation findings, want 1", seed, len(att))
			continue
		}
		for _, v := range att[0].Values {
			want, ok := map[string]float64{"%/km": 100 * (1 - math.Exp(-1)), "dB/km": 20 / math.Ln10}[v.Unit]
			if ok && math.Abs(v.Value-want) > 4*v.Sigma {
				t.Errorf("seed %d: %s %.4g ± %.2g %s, want %.4g", seed, v.Name, v.Value, v.Sigma, v.Unit, want)
			}
		}
	}
}
