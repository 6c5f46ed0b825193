package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// A 1 A earth fault midway between traverses, read in part by the two
// traverses beside it (partial.go).
//
// The station currents are those locate fitted on simulated surveys
// (undercurrent simulate, invented Brackenmoor test strip): a straight
// polyline 1 m deep carrying 5 A to the fault and 4 A after it, crossed
// square by seven traverses 10 m long. partialFaultEven is the mean over
// 30 seeds at 1 nT of traverses 4 m apart, the fault 2 m from each
// neighbour (north 12 m; chainage 10 m); partialFaultUneven is the mean
// over 30 seeds at 2 nT of traverses 2, 4, 6, 2, 8 and 6 m apart, the fault
// 3 m from each neighbour (chainage 9 m). The fits' own sigmas matched
// the scatter over the seeds (within 10%), so a route is drawn as these
// means plus independent normal noise of the sigma the fits give at the
// survey's noise: 0.014 A at 5 nT and 0.055 A at 20 nT (even), 0.027 A at
// 10 nT (uneven).
var (
	partialFaultEven = partialFaultShape{
		x:     []float64{0, 4, 8, 12, 16, 20, 24},
		i:     []float64{4.9414, 4.9115, 4.7423, 4.2212, 4.0418, 4.0039, 3.9885},
		fault: 10,
	}
	partialFaultUneven = partialFaultShape{
		x:     []float64{0, 2, 6, 12, 14, 22, 28},
		i:     []float64{4.9370, 4.9217, 4.8182, 4.1440, 4.0622, 3.9902, 3.9751},
		fault: 9,
	}
)

type partialFaultShape struct {
	x, i  []float64
	fault float64
}

func (sh partialFaultShape) route(rng *rand.Rand, sigma float64) []Station {
	st := make([]Station, len(sh.x))
	for k := range st {
		st[k] = Station{Key: key(k + 1), Point: [3]float64{0, 2 + sh.x[k], -1}, Dir: [3]float64{0, 1, 0},
			Current: sh.i[k] + sigma*rng.NormFloat64(), CurrentSigma: sigma, Depth: 1, DepthSigma: 0.004, OK: true}
	}
	return st
}

// partialFaultMC draws routes and returns the share on which no fall
// bracketing the fault is reported, and the pulls (size + 1 A) / sigma of
// the falls reported.
func partialFaultMC(t *testing.T, sh partialFaultShape, sigma float64, draws int, seed uint64) (missed float64, z []float64) {
	rng := rand.New(rand.NewPCG(seed, 0xfa17))
	miss := 0
	for range draws {
		r, err := Build(sh.route(rng, sigma), nil)
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, f := range findings(r, KindCurrentStep) {
			v := f.Values[0]
			if v.Value < 0 && f.From <= sh.fault && sh.fault <= f.To {
				found = true
				z = append(z, (v.Value+1)/v.Sigma)
				break
			}
		}
		if !found {
			miss++
		}
	}
	return float64(miss) / float64(draws), z
}

// TestFaultBetweenPartialStations: the fault is found on at least 82% of
// routes at 5 nT, 81% on the uneven route at 10 nT and 65% at 20 nT, and
// the pulls of its size have a mean within 1, a standard deviation under
// 1.8 and at least 85% within two sigma (the transition's width is not
// fixed by seven stations, so the size's sigma is a profile interval, not
// exact). Measured (300 draws each): missed 13, 18 and 30%; pulls mean
// +0.35, +0.64 and +0.83, sd 0.81, 1.66 and 1.57, within two sigma 95, 93
// and 88%. Before, the fall was missed on 29, 20 and 42% of routes, and
// sized with pulls of mean +0.45, +3.39 and +4.37 (within two sigma 98,
// 40 and 3%: at 20 nT 0.4-0.6 A with sigmas of 0.1 A). The misses left
// are routes whose spread step passes the short-route scatter gate and
// leaves an excess about the one step of stepscatter.go, widened 5-6
// times (partial.go), or does not pass its F test (F 19-41 against 42.3
// at seven stations).
func TestFaultBetweenPartialStations(t *testing.T) {
	for _, tc := range []struct {
		name      string
		sh        partialFaultShape
		sigma     float64
		maxMissed float64
	}{
		{"4 m apart, 5 nT", partialFaultEven, 0.014, 0.18},
		{"4 m apart, 20 nT", partialFaultEven, 0.055, 0.35},
		{"uneven, 10 nT", partialFaultUneven, 0.027, 0.19},
	} {
		missed, z := partialFaultMC(t, tc.sh, tc.sigma, 300, uint64(1000*tc.sigma))
		s := summarise(z)
		t.Logf("%s: missed %.3f; size %s", tc.name, missed, s)
		if missed > tc.maxMissed {
			t.Errorf("%s: fault missed on %.3f of routes, want at most %.2f", tc.name, missed, tc.maxMissed)
		}
		if math.Abs(s.mean) > 1 || s.sd > 1.8 || s.cover2 < 0.85 {
			t.Errorf("%s: size pulls %s, want a mean within 1, sd under 1.8 and 85%% within two sigma", tc.name, s)
		}
	}
}
