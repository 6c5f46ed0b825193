package main

import (
	"syscall"
	"testing"
	"time"
)

// benchCPU is the process's CPU time (user and system) so far.
func benchCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// reportBenchCPU adds the CPU time per operation since start as the metric
// "cpu-ns/op": on a loaded machine the wall-clock ns/op is mostly the wait
// for a core, the CPU time what locate costs. Run with -cpu 1.
func reportBenchCPU(b *testing.B, start time.Duration) {
	if start > 0 && b.N > 0 {
		b.ReportMetric(float64(benchCPU()-start)/float64(b.N), "cpu-ns/op")
	}
}
