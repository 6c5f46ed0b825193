package ingesttest

import "testing"

// TestCPUTimeAndPeakRSS: the process's CPU time grows while it computes,
// and its peak resident memory covers a buffer it has written through, on
// every system where they are read (getrusage and /proc on Unix,
// GetProcessTimes and GetProcessMemoryInfo on Windows).
func TestCPUTimeAndPeakRSS(t *testing.T) {
	c0 := CPUTime()
	x := 1.0
	// Work until the clock moves (its tick is 1-16 ms, by system), bounded
	// in work, not in time.
	for i := 0; i < 1e5 && CPUTime() <= c0; i++ {
		for j := range 100000 {
			x = x*1.0000001 + float64(j&1)
		}
	}
	if c := CPUTime(); c <= c0 {
		t.Errorf("CPU time %v after work, %v before (x %g)", c, c0, x)
	}
	const size = 64 << 20
	buf := make([]byte, size)
	for i := 0; i < len(buf); i += 4096 {
		buf[i] = 1
	}
	if p := PeakRSS(); p < size {
		t.Errorf("peak RSS %d bytes after writing through %d", p, size)
	}
	_ = buf[len(buf)-1]
}
