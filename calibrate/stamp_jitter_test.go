package calibrate

import (
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/ingest"
)

// tickLog simulates 20 s of a 50 Hz field (amplitudes 800, 500 and 300 nT
// on the three axes, noise 10 nT) read once per 2 ms tick: each reading
// is taken at tick k·2 ms plus a latency late(k) and stamped at tick plus
// stamp(k) (simulated truth), in four groups of 5 s.
func tickLog(rng *rand.Rand, late, stamp func(k int) float64) *ingest.Samples {
	const dt, n, f = 0.002, 10000, 50.0
	t0 := 1.7775e9
	s := &ingest.Samples{Source: "tick.csv"}
	w := 2 * math.Pi * f
	for k := 0; k < n; k++ {
		tt := float64(k) * dt
		at := tt + late(k)
		s.Time = append(s.Time, t0+tt+stamp(k))
		s.Bx = append(s.Bx, 800*math.Cos(w*at+0.3)+10*rng.NormFloat64())
		s.By = append(s.By, 500*math.Cos(w*at+1.1)+10*rng.NormFloat64())
		s.Bz = append(s.Bz, 300*math.Cos(w*at-0.7)+10*rng.NormFloat64())
		s.Group = append(s.Group, string(rune('A'+k/2500)))
	}
	return s
}

// TestStampJitterKeepsDeadlineStamps: a sampler that keeps to a 2 ms
// deadline takes each reading a random 0-0.95 ms after its tick and
// stamps it with that true instant. The stamps scatter within a band of
// the tick's line with steps anticorrelated, as written stamp errors do,
// but they are exact: no jitter is reported (the readings fit the stamps
// as written). Before, they were warned of and every current raised
// 0.4%.
func TestStampJitterKeepsDeadlineStamps(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		rng := rand.New(rand.NewPCG(seed, 41))
		lat := make([]float64, 10000)
		for i := range lat {
			lat[i] = 0.00095 * rng.Float64()
		}
		s := tickLog(rng, func(k int) float64 { return lat[k] }, func(k int) float64 { return lat[k] })
		if _, tj := ingest.RetimeJittered(s.Time, s.Group); tj == nil {
			t.Fatalf("seed %d: the stamps do not look jittered by their statistics; the test's premise fails", seed)
		}
		if tj, w := StampJitter(s, 50); tj != nil {
			t.Errorf("seed %d: exact stamps taken as jittered: %s", seed, w)
		}
	}
}

// TestStampJitterFindsWrittenStampErrors: the same latencies as errors of
// the written stamps of readings taken on the tick (the stamps alone are
// off) are found as jitter (simulated truth): the clock's line fits the
// readings better than the stamps.
func TestStampJitterFindsWrittenStampErrors(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		rng := rand.New(rand.NewPCG(seed, 41))
		lat := make([]float64, 10000)
		for i := range lat {
			lat[i] = 0.00095 * rng.Float64()
		}
		s := tickLog(rng, func(int) float64 { return 0 }, func(k int) float64 { return lat[k] })
		tj, w := StampJitter(s, 50)
		if tj == nil {
			t.Errorf("seed %d: written stamp errors of %.2g s RMS not found", seed, 0.00095/math.Sqrt(12))
			continue
		}
		if want := 0.00095 / math.Sqrt(12); math.Abs(tj.Scatter-want) > 0.1*want {
			t.Errorf("seed %d: scatter %.3g s, want %.3g (uniform 0-0.95 ms): %s", seed, tj.Scatter, want, w)
		}
	}
}
