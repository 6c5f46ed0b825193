package inverse

import (
	"math/rand/v2"
	"syscall"
	"testing"
	"time"
)

// Benchmarks for the README performance table (issue 2): one line on one 41-point
// traverse; one line over 9 traverses (about 400 points, azimuth free); two lines over
// 500 points. The whole FitLines call is measured: seeding, multi-start, polishing and
// the uncertainty analysis.

func benchFit(b *testing.B, pts [][3]float64, lines []Line, cur []float64, set *Settings) {
	rng := rand.New(rand.NewPCG(1, 2))
	f := simulate(pts, lines, cur, [3]float64{17000, 1500, -44000}, 5, rng)
	p := &Problem{Points: pts, Fields: f}
	b.ReportAllocs()
	cpu := cpuTime()
	for b.Loop() {
		if _, err := FitLines(p, set); err != nil {
			b.Fatal(err)
		}
	}
	reportCPU(b, cpu)
}

// cpuTime returns the CPU time (user and system) consumed by the process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// reportCPU adds the process CPU time per operation since start as the metric
// "cpu-ns/op". On a loaded machine the wall-clock ns/op includes time spent waiting for
// a core; CPU time is what a fit costs, and what bench_scipy.py reports
// (time.process_time) for the same fits.
func reportCPU(b *testing.B, start time.Duration) {
	if start > 0 && b.N > 0 {
		b.ReportMetric(float64(cpuTime()-start)/float64(b.N), "cpu-ns/op")
	}
}

func BenchmarkFitOneLineTraverse41(b *testing.B) {
	benchFit(b, traverse(41, -2, 2, 0, 0),
		[]Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0, 1, 0}}}, []float64{10}, &Settings{Count: 1})
}

func BenchmarkFitOneLineNineTraverses(b *testing.B) {
	benchFit(b, grid(9, 45, 2, 0.5, 0), // 405 points
		[]Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0.3, 1, 0}}}, []float64{10}, &Settings{Count: 1})
}

func BenchmarkFitTwoLines500(b *testing.B) {
	benchFit(b, grid(10, 50, 3, 0.45, 0), // 500 points
		[]Line{
			{Point: [3]float64{-0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
			{Point: [3]float64{0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
		}, []float64{40, -37}, &Settings{Count: 2})
}

func BenchmarkFitAutoCountNineTraverses(b *testing.B) {
	benchFit(b, grid(9, 45, 2, 0.5, 0),
		[]Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0.3, 1, 0}}}, []float64{10}, nil)
}
