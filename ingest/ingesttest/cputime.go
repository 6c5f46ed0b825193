package ingesttest

import (
	"testing"
	"time"
)

// CPUTime returns the CPU time (user and system) the process has used so
// far, or 0 when it cannot be read. It is getrusage(RUSAGE_SELF) on Unix
// systems and GetProcessTimes on Windows (cputime_unix.go,
// cputime_windows.go); elsewhere it is 0.
func CPUTime() time.Duration { return cpuTime() }

// PeakRSS returns the process's high-water mark of resident memory, bytes,
// or 0 when it cannot be read: VmHWM from /proc/self/status on Linux (which
// a write of "5" to /proc/self/clear_refs resets), else getrusage's
// ru_maxrss (kilobytes on Linux and the BSDs, bytes on macOS), and the peak
// working set (GetProcessMemoryInfo) on Windows.
func PeakRSS() int64 { return peakRSS() }

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
