package ingesttest

import (
	"syscall"
	"testing"
	"time"
)

// CPUTime returns the CPU time (user and system) the process has used so
// far, or 0 when it cannot be read.
func CPUTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// ReportCPU adds the process's CPU time per operation since start (a
// CPUTime taken before the loop) as the metric "cpu-ns/op". On a loaded
// machine the wall-clock ns/op includes time spent waiting for a core; CPU
// time is what the work costs, and what bench_scipy.py reports
// (time.process_time) for the same fits. Run with -cpu 1 so that it is
// also one core's time.
func ReportCPU(b *testing.B, start time.Duration) {
	if start > 0 && b.N > 0 {
		b.ReportMetric(float64(CPUTime()-start)/float64(b.N), "cpu-ns/op")
	}
}
