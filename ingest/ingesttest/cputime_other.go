//go:build !unix && !windows

package ingesttest

import "time"

// cpuTime is not read here (no getrusage nor GetProcessTimes): 0, as
// CPUTime documents.
func cpuTime() time.Duration { return 0 }

// peakRSS is not read here: 0, as PeakRSS documents.
func peakRSS() int64 { return 0 }
