package route

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// TestAttenuationNotFromEndStationsAlone: a main carrying 2.0 A that
// falls to 1.6 A at chainage 100 m (0.4 A leaving; simulated truth, no
// steady fall), 11 stations 20 m apart, of which only the first and last
// are precise (sigma 0.008 A) and the nine between them are not (0.5 A,
// as beside a mains cable that was not averaged out). Nothing between the
// ends can tell a steady fall from a step, so no attenuation is reported
// and no finding calls the loss gradual or no dig site. Before, the two
// end stations alone gave "the current falls steadily ... 10.60 ± 0.29%
// per 100 m ... gradual and no dig site" (found in review).
func TestAttenuationNotFromEndStationsAlone(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		rng := rand.New(rand.NewPCG(seed, 13))
		st := make([]Station, 11)
		for i := range st {
			x := float64(i) * 20
			truth, sigma := 2.0, 0.5
			if x > 100 {
				truth = 1.6
			}
			if i == 0 || i == 10 {
				sigma = 0.008
			}
			cur := truth + sigma*rng.NormFloat64()
			for cur <= 0.1 {
				cur = truth + sigma*rng.NormFloat64()
			}
			st[i] = Station{
				Key:          key(i),
				Point:        [3]float64{x, 0, -1.5},
				Dir:          [3]float64{1, 0, 0},
				Current:      cur,
				CurrentSigma: sigma,
				Depth:        1.5, DepthSigma: 0.01,
				OK: true,
			}
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		if att := findings(r, KindAttenuation); len(att) > 0 {
			t.Errorf("seed %d: attenuation reported from the end stations alone: %s", seed, att[0].Message)
		}
		for _, f := range r.Findings {
			if strings.Contains(f.Message, "no dig site") {
				t.Errorf("seed %d: the loss called no dig site: %s", seed, f.Message)
			}
		}
	}
}
