package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// BenchmarkACWindowReduce is an AC window's reduction (despike, frequency
// search, demodulation) for fenwick-lane's five sensors, 1000 readings a
// second over 1 s, 120 A go and return, the site's 2 nT noise: clean at
// the site's 50 Hz, clean at 50.1 Hz with a 10 % third harmonic (the
// despike at the site's frequency then takes its rounds, the one at the
// window's frequency not), and at 50 Hz with a burst of 100 readings of
// 5e4 nT on one sensor (every round). No time is asserted.
func BenchmarkACWindowReduce(b *testing.B) {
	for _, bc := range []struct {
		name     string
		freq, h3 float64
		burst    int
	}{
		{"clean-50Hz", 50, 0, 0},
		{"clean-50.1Hz-3rd", 50.1, 0.1, 0},
		{"burst-50Hz", 50, 0, 100},
	} {
		b.Run(bc.name, func(b *testing.B) {
			a, p := fenwickProcessor(b)
			rng := rand.New(rand.NewPCG(5, 5))
			truth := []complex128{cmplx.Rect(120, 0.3), cmplx.Rect(120, 0.3+math.Pi)}
			w := synthACWindowVarying(a, func(float64) []complex128 { return truth }, bc.freq, bc.h3, 0, 1796104800, 1000, 1000, a.Noise, rng)
			for i := 300; i < 300+bc.burst; i++ {
				w.Sensors[1].Bz[i] += 5e4
			}
			b.ReportAllocs()
			for b.Loop() {
				p.reduce(w)
			}
		})
	}
}
