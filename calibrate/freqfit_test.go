package calibrate

import (
	"math"
	"testing"
)

func BenchmarkSincosGrid(b *testing.B) {
	// One window of 200 samples at 2 kHz on absolute Unix times, 50 Hz.
	const n = 200
	t := make([]float64, n)
	for i := range t {
		t[i] = 1.7e9 + float64(i)/2000
	}
	cs, sn := make([]float64, n), make([]float64, n)
	w := 2 * math.Pi * 50.2
	h := gridStep(t)
	for b.Loop() {
		sincosGrid(cs, sn, t, w, h)
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N)/n*1e9, "ns/sample")
}
