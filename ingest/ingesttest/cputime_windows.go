package ingesttest

import (
	"time"
	"unsafe"

	"golang.org/x/sys/windows"
)

func cpuTime() time.Duration {
	var creation, exit, kernel, user windows.Filetime
	if err := windows.GetProcessTimes(windows.CurrentProcess(), &creation, &exit, &kernel, &user); err != nil {
		return 0
	}
	// A FILETIME used as a duration counts 100 ns intervals.
	ticks := func(f windows.Filetime) int64 { return int64(f.HighDateTime)<<32 | int64(f.LowDateTime) }
	return time.Duration(ticks(kernel)+ticks(user)) * 100
}

// processMemoryCounters is PROCESS_MEMORY_COUNTERS (psapi.h), which
// golang.org/x/sys/windows does not define.
type processMemoryCounters struct {
	cb                         uint32
	PageFaultCount             uint32
	PeakWorkingSetSize         uintptr
	WorkingSetSize             uintptr
	QuotaPeakPagedPoolUsage    uintptr
	QuotaPagedPoolUsage        uintptr
	QuotaPeakNonPagedPoolUsage uintptr
	QuotaNonPagedPoolUsage     uintptr
	PagefileUsage              uintptr
	PeakPagefileUsage          uintptr
}

// getProcessMemoryInfo is K32GetProcessMemoryInfo, kernel32's name for
// psapi's GetProcessMemoryInfo since Windows 7.
var getProcessMemoryInfo = windows.NewLazySystemDLL("kernel32.dll").NewProc("K32GetProcessMemoryInfo")

func peakRSS() int64 {
	if getProcessMemoryInfo.Find() != nil {
		return 0
	}
	var c processMemoryCounters
	c.cb = uint32(unsafe.Sizeof(c))
	ok, _, _ := getProcessMemoryInfo.Call(uintptr(windows.CurrentProcess()), uintptr(unsafe.Pointer(&c)), uintptr(c.cb))
	if ok == 0 {
		return 0
	}
	return int64(c.PeakWorkingSetSize)
}
